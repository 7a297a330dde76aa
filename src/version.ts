/**
 * The tool's version, read from package.json alone (the one place it is bumped, with the
 * changelog), and recorded in every result file and report. From src/ (tests, tsx) and from
 * dist/ (the built CLI) package.json is one folder up.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';

function readVersion(): string {
  const file = join(__dirname, '..', 'package.json');
  const pkg = JSON.parse(readFileSync(file, 'utf8')) as { version?: unknown };
  if (typeof pkg.version !== 'string' || pkg.version === '')
    throw new Error(`${file}: expected a "version" string, found none`);
  return pkg.version;
}

export const TOOL_VERSION: string = readVersion();
