/**
 * What every writing command (run, sweep, batch, merge, compare) does with its output
 * folder before any work: check it can take results (a file, a folder that cannot be
 * written, or the package's own install folder is refused, exit 2), take its lock (one
 * writer per folder; exit 2 naming the holder), and mark it as a result folder.
 */
import { acquireFolderLock, commandLine } from '../results/lock';
import type { FolderLock } from '../results/lock';
import { checkOutputFolder } from '../results/destination';
import { writeResultMarker } from '../results/marker';
import type { ResultFolderKind } from '../results/marker';

export interface OpenOptions {
  /** take over a lock of another host (--force) */
  force?: boolean;
  /** the prefix of warnings, e.g. 'dithercav sweep' */
  label: string;
}

/** Check, lock and mark `dir`; the caller releases the lock when done (it is released at exit too). */
export function openResultFolder(dir: string, kind: ResultFolderKind, opts: OpenOptions): FolderLock {
  checkOutputFolder(dir);
  const lock = acquireFolderLock(dir, {
    command: commandLine(),
    force: opts.force,
    onWarning: (m) => process.stderr.write(`${opts.label}: warning: ${m}\n`),
  });
  writeResultMarker(dir, kind);
  return lock;
}

/** The help text of --force, the same for every writing command. */
export const FORCE_HELP =
  'take over the output folder lock of a dithercav on another host (only when it is no longer running)';
