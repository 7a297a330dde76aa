/**
 * Reading saved result files for a report. A required file that is missing or not JSON
 * is bad input (InputError naming the file); an optional one that is missing gives null
 * so the report can say "not saved" for its section.
 */
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { errorText, InputError } from '../scenario/errors';
import { RUN_FILES, RunArtifacts } from '../results/artifacts';
import type { RunSummary } from '../results/summary';

/**
 * Parse one JSON file. Returns the parsed value, or null when `required` is false and
 * the file does not exist. Throws InputError (file named) when a required file is
 * missing, or when any file is not valid JSON.
 */
export function readJsonFile(file: string, what: string, required: boolean): unknown {
  if (!existsSync(file)) {
    if (!required) return null;
    throw new InputError(file, [{ path: '', message: `expected ${what}, found no such file` }]);
  }
  const text = readFileSync(file, 'utf8');
  try {
    return JSON.parse(text) as unknown;
  } catch (err) {
    const why = errorText(err);
    throw new InputError(file, [
      { path: '', message: `expected ${what} as JSON, found text that does not parse (${why})` },
    ]);
  }
}

function expectObject(file: string, v: unknown, what: string): void {
  if (v !== null && (typeof v !== 'object' || Array.isArray(v))) {
    throw new InputError(file, [
      {
        path: '',
        message: `expected ${what} (a JSON object), found ${Array.isArray(v) ? 'a list' : typeof v}`,
      },
    ]);
  }
}

/**
 * Read the result files of one run folder (RUN_FILES): summary.json is required and
 * must be an object with a `driven` key (possibly null) and a `derived` key; traces,
 * spectra and the static curve are optional.
 */
export function readRunArtifacts(dir: string): RunArtifacts {
  const sFile = join(dir, RUN_FILES.summary);
  const summary = readJsonFile(sFile, 'the summary of a run', true);
  expectObject(sFile, summary, 'the summary of a run');
  const s = summary as Record<string, unknown>;
  for (const key of ['derived', 'driven']) {
    if (!(key in s))
      throw new InputError(sFile, [
        { path: key, message: `expected the key '${key}' of a run summary, found none` },
      ]);
  }
  const optional = (name: string, what: string): unknown => {
    const f = join(dir, name);
    const v = readJsonFile(f, what, false);
    expectObject(f, v, what);
    return v;
  };
  return {
    summary: summary as RunSummary,
    traces: optional(RUN_FILES.traces, 'the time traces of a run') as RunArtifacts['traces'],
    spectra: optional(RUN_FILES.spectra, 'the spectra of a run') as RunArtifacts['spectra'],
    static_curve: optional(
      RUN_FILES.staticCurve,
      'the static power curve of a run',
    ) as RunArtifacts['static_curve'],
  };
}
