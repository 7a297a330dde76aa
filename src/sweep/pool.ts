/**
 * Where the tasks of a sweep or batch run: a piscina pool of worker threads (one task per
 * thread at a time), or the calling thread itself. Both run the same `runTask`, so the
 * results do not depend on the number of threads or the order in which tasks finish.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import Piscina from 'piscina';
import { runTask } from './worker';
import type { SweepTask, TaskResult } from './worker';

/** Runs tasks; `destroy` stops every thread, rejecting tasks not yet finished. */
export interface Executor {
  readonly threads: number;
  run<T extends SweepTask>(task: T): Promise<TaskResult<T>>;
  destroy(): Promise<void>;
}

/** Thrown (as the rejection) for tasks cut short by `destroy`. */
export class ExecutorStopped extends Error {
  constructor() {
    super('the worker pool was stopped');
    this.name = 'ExecutorStopped';
  }
}

/** Default thread count: os.availableParallelism() (at least 1). */
export function defaultJobs(): number {
  return Math.max(
    1,
    typeof os.availableParallelism === 'function' ? os.availableParallelism() : os.cpus().length,
  );
}

/**
 * The worker file piscina loads: the compiled dist/sweep/worker.js beside this module
 * when running from dist/, else dist/sweep/worker.js of the package (running from src/
 * under a TypeScript loader), else the .ts source (for tsx, which piscina supports).
 */
export function workerFile(): string {
  const here = path.join(__dirname, 'worker.js');
  if (fs.existsSync(here)) return here;
  const built = path.resolve(__dirname, '..', '..', 'dist', 'sweep', 'worker.js');
  if (fs.existsSync(built)) return built;
  return path.join(__dirname, 'worker.ts');
}

/** A pool of `jobs` worker threads (piscina), each running one task at a time. */
export function createPool(jobs: number): Executor {
  const pool = new Piscina({
    filename: workerFile(),
    minThreads: jobs,
    maxThreads: jobs,
    concurrentTasksPerWorker: 1,
    idleTimeout: 60_000,
  });
  let stopped = false;
  return {
    threads: jobs,
    run<T extends SweepTask>(task: T): Promise<TaskResult<T>> {
      if (stopped) return Promise.reject(new ExecutorStopped());
      return (pool.run(task) as Promise<TaskResult<T>>).catch((err: unknown) => {
        throw stopped ? new ExecutorStopped() : err;
      });
    },
    async destroy(): Promise<void> {
      if (stopped) return;
      stopped = true;
      await pool.destroy();
    },
  };
}

/**
 * Runs tasks one at a time on the calling thread, yielding to the event loop between
 * tasks (so a signal handler gets its turn after each point).
 */
export function createInProcessExecutor(): Executor {
  let stopped = false;
  let chain: Promise<unknown> = Promise.resolve();
  return {
    threads: 1,
    run<T extends SweepTask>(task: T): Promise<TaskResult<T>> {
      if (stopped) return Promise.reject(new ExecutorStopped());
      const p = chain.then(
        () =>
          new Promise<TaskResult<T>>((resolve, reject) => {
            setImmediate(() => {
              if (stopped) return reject(new ExecutorStopped());
              try {
                resolve(runTask(task) as TaskResult<T>);
              } catch (err) {
                reject(err);
              }
            });
          }),
      );
      chain = p.catch(() => undefined);
      return p;
    },
    async destroy(): Promise<void> {
      stopped = true;
    },
  };
}

/** A pool of `jobs` threads, or the calling thread when `inProcess` is set. */
export function createExecutor(jobs: number, inProcess = false): Executor {
  return inProcess ? createInProcessExecutor() : createPool(jobs);
}
