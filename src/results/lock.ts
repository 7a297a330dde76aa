/**
 * One writer per result folder. Before any work, a writing command (run, sweep, batch,
 * merge, compare) creates `dithercav.lock` in its output folder with an exclusive create
 * (open with 'wx', O_CREAT | O_EXCL), which is atomic on local disks and on the network
 * file systems clusters use (NFS v3 and later), unlike advisory `flock`. The lock holds
 * who took it: host, process id, start time, command.
 *
 * A second writer finds the file and stops with exit 2, naming the holder. A lock left by
 * a process that is gone (same host, process id no longer alive) is taken over with a
 * warning. A lock from another host cannot be checked from here and is never taken
 * silently: `--force` takes it over, saying so.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { InputError } from '../scenario/errors';
import { FOLDER_FILES } from './files';

/** What a lock file holds. */
export interface FolderLockInfo {
  host: string;
  pid: number;
  /** ISO 8601 time the lock was taken */
  started: string;
  /** the command line of the holder, e.g. "dithercav sweep demo.yaml --out x" */
  command: string;
}

export interface AcquireOptions {
  /** the command line to record */
  command: string;
  /** take over a lock of another host (or one that cannot be read) */
  force?: boolean;
  onWarning?: (message: string) => void;
}

/** A held lock; `release` removes the file if it is still ours (idempotent). */
export interface FolderLock {
  readonly file: string;
  readonly info: FolderLockInfo;
  release(): void;
}

/** True when a process with this id exists on this host (EPERM: it exists, owned by another user). */
export function processAlive(pid: number): boolean {
  if (!Number.isInteger(pid) || pid <= 0) return false;
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/** Parse a lock file's text; null when it is not a lock we wrote (torn, empty, foreign). */
export function parseLockInfo(text: string): FolderLockInfo | null {
  try {
    const v = JSON.parse(text) as Partial<FolderLockInfo>;
    if (
      v !== null &&
      typeof v === 'object' &&
      typeof v.host === 'string' &&
      typeof v.pid === 'number' &&
      typeof v.started === 'string' &&
      typeof v.command === 'string'
    )
      return v as FolderLockInfo;
  } catch {
    // fall through
  }
  return null;
}

function describe(i: FolderLockInfo): string {
  return `'${i.command}' (process ${i.pid} on host ${i.host}, started ${i.started})`;
}

/** Write the lock file with an exclusive create; false when it already exists. */
function tryCreate(file: string, info: FolderLockInfo): boolean {
  let fd: number;
  try {
    fd = fs.openSync(file, 'wx');
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'EEXIST') return false;
    throw err;
  }
  try {
    fs.writeSync(fd, `${JSON.stringify(info)}\n`);
    fs.fsyncSync(fd);
  } finally {
    fs.closeSync(fd);
  }
  return true;
}

/**
 * Take the lock of `dir` (created if missing). Throws InputError (exit 2) when another
 * live writer holds it, or when a lock of another host (or an unreadable one) is there
 * without `force`. The lock is released on `release()` and, as a safety net, when the
 * process exits normally.
 */
export function acquireFolderLock(dir: string, opts: AcquireOptions): FolderLock {
  const warn = opts.onWarning ?? (() => undefined);
  fs.mkdirSync(dir, { recursive: true });
  const file = path.join(dir, FOLDER_FILES.lock);
  const info: FolderLockInfo = {
    host: os.hostname(),
    pid: process.pid,
    started: new Date().toISOString(),
    command: opts.command,
  };
  // Two rounds: after removing a stale lock another process may win the create; then we report it.
  for (let attempt = 0; attempt < 2; attempt++) {
    if (tryCreate(file, info)) return holdLock(file, info);
    let text: string;
    try {
      text = fs.readFileSync(file, 'utf8');
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code === 'ENOENT') continue; // released meanwhile
      throw err;
    }
    const held = parseLockInfo(text);
    if (held === null) {
      // A holder may be between its create and its write: give it a moment before judging.
      if (attempt === 0 && text === '' && Date.now() - fs.statSync(file).mtimeMs < 2000) {
        Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, 200);
        continue;
      }
      if (!opts.force)
        throw new InputError(file, [
          {
            path: '',
            message:
              'another dithercav may be writing this folder: its lock file cannot be read. If no dithercav is writing here, run again with --force (or delete the lock file)',
          },
        ]);
      warn(`${file}: taking over an unreadable lock (--force)`);
    } else if (held.host === info.host) {
      if (processAlive(held.pid)) {
        throw new InputError(file, [
          {
            path: '',
            message: `this folder is being written by ${describe(held)}. Wait for it to finish (then use --resume where the command has it), stop it, or choose another --out folder`,
          },
        ]);
      }
      warn(`${file}: taking over the lock of ${describe(held)}: that process is gone`);
    } else if (!opts.force) {
      throw new InputError(file, [
        {
          path: '',
          message: `this folder is locked by ${describe(held)}, which cannot be checked from host ${info.host}. If that process is no longer running, run again with --force; otherwise wait, or choose another --out folder`,
        },
      ]);
    } else {
      warn(`${file}: taking over the lock of ${describe(held)} on another host (--force)`);
    }
    try {
      fs.unlinkSync(file);
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code !== 'ENOENT') throw err;
    }
  }
  // Lost the race twice: someone else took it in between.
  const now = parseLockInfo(safeRead(file));
  throw new InputError(file, [
    {
      path: '',
      message: `this folder was locked meanwhile by ${now ? describe(now) : 'another process'}; choose another --out folder or wait`,
    },
  ]);
}

function safeRead(file: string): string {
  try {
    return fs.readFileSync(file, 'utf8');
  } catch {
    return '';
  }
}

function holdLock(file: string, info: FolderLockInfo): FolderLock {
  let held = true;
  const release = () => {
    if (!held) return;
    held = false;
    process.off('exit', release);
    // Remove it only while it is still ours (a --force elsewhere may have replaced it).
    const now = parseLockInfo(safeRead(file));
    if (now && now.pid === info.pid && now.host === info.host && now.started === info.started) {
      try {
        fs.unlinkSync(file);
      } catch {
        // already gone
      }
    }
  };
  process.on('exit', release);
  return { file, info, release };
}

/** The command line of this process as a user typed it, for the lock: "dithercav sweep a.yaml ...". */
export function commandLine(argv: readonly string[] = process.argv): string {
  return ['dithercav', ...argv.slice(2)].join(' ');
}

/**
 * The lock held in `dir` by a writer that may still be running (same host and alive, or
 * another host, which cannot be checked), or null. For readers that should warn, e.g.
 * `merge` of a shard whose sweep still runs.
 */
export function activeLock(dir: string): FolderLockInfo | null {
  const info = parseLockInfo(safeRead(path.join(dir, FOLDER_FILES.lock)));
  if (info === null) return null;
  return info.host !== os.hostname() || processAlive(info.pid) ? info : null;
}
