/**
 * Checking an output folder before any work: a path that is a file, a folder that
 * cannot be written, or a place inside the package's own install folder is refused with
 * exit 2 (InputError naming the path and the reason), so a run does not simulate for
 * minutes and then fail to save.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { InputError } from '../scenario/errors';

/** The package root: dist/results/ (or src/results/) is two levels below it. */
export const PACKAGE_ROOT = path.resolve(__dirname, '..', '..');

/** The folders of the package that hold code, never results. */
const CODE_FOLDERS = ['dist', 'src', 'bin', 'node_modules'];

function inside(child: string, parent: string): boolean {
  const rel = path.relative(parent, child);
  return rel === '' || (!rel.startsWith('..') && !path.isAbsolute(rel));
}

function realOrSelf(p: string): string {
  try {
    return fs.realpathSync(p);
  } catch {
    return p;
  }
}

/**
 * Refuse `out` (given as `option`, e.g. '--out') when it cannot take results. Nothing is
 * created. `packageRoot` is for tests.
 */
export function checkOutputFolder(out: string, option = '--out', packageRoot = PACKAGE_ROOT): void {
  const refuse = (reason: string): never => {
    throw new InputError(null, [{ path: option, message: `cannot write results to ${out}: ${reason}` }]);
  };
  const abs = path.resolve(out);
  // The nearest part of the path that exists decides: it must be a folder we may write in.
  let existing = abs;
  while (!fs.existsSync(existing)) {
    const up = path.dirname(existing);
    if (up === existing) break;
    existing = up;
  }
  let st: fs.Stats;
  try {
    st = fs.statSync(existing);
  } catch (err) {
    return refuse(`${existing} cannot be read (${(err as Error).message})`);
  }
  if (!st.isDirectory())
    refuse(existing === abs ? 'it is a file, not a folder' : `${existing} is a file, not a folder`);
  try {
    fs.accessSync(existing, fs.constants.W_OK | fs.constants.X_OK);
  } catch {
    refuse(existing === abs ? 'the folder is not writable' : `${existing} is not writable`);
  }
  const root = realOrSelf(packageRoot);
  const target = path.join(realOrSelf(existing), path.relative(existing, abs));
  const installed = root.split(path.sep).includes('node_modules');
  if (
    installed
      ? inside(target, root)
      : target === root || CODE_FOLDERS.some((f) => inside(target, path.join(root, f)))
  )
    refuse(`it is inside dithercav's own install folder ${root}; choose a folder of your own`);
}
