/**
 * The work one thread of a threaded run does (parallel-run.ts, docs/model.md §4.2): the
 * static reference, or a group of independent driven lanes. Each task carries the scenario, the
 * free-running reference and (for a lane) the plan, so the thread recomputes nothing
 * that could differ from the caller's. Progress goes back on the task's own port.
 *
 * Loaded by piscina from the compiled dist/simulate/lane-thread.js (default export).
 */
import type { MessagePort } from 'node:worker_threads';
import type { Scenario } from '../scenario/schema';
import type { EngineKind } from '../physics/coupled/factory';
import { deriveAll } from '../physics/derive';
import type { FreeRunningResult, StaticResult } from './references';
import type { DrivenResult } from './driven';
import { computeStatic, executeLanes } from './run';
import type { RunOptions, RunPlan } from './run';

interface TaskBase {
  scenario: Scenario;
  options: Pick<RunOptions, 'engine' | 'seed'>;
  free: FreeRunningResult;
  staticKind: EngineKind;
  /** receives { fraction } now and then */
  port: MessagePort;
}

/** The static reference, settled on this thread. */
export interface StaticTask extends TaskBase {
  type: 'static';
}

/** A group of driven lanes of one batch (run.ts executeLanes). */
export interface LaneTask extends TaskBase {
  type: 'lanes';
  plan: RunPlan;
  offsets_m: number[];
  batch: number;
  /** the lanes' places in their batch (their noise streams) */
  indices: number[];
}

export type LaneThreadTask = StaticTask | LaneTask;

/** What a task returns: its result and the thread-seconds it took. */
export interface LaneThreadResult<R> {
  result: R;
  wall_s: number;
}

/** Posts at most five progress messages a second on the task's port. */
function reporter(port: MessagePort): (fraction: number) => void {
  let last = 0;
  return (fraction) => {
    const now = Date.now();
    if (now - last < 200) return;
    last = now;
    port.postMessage({ fraction });
  };
}

export default function work(
  task: LaneThreadTask,
): LaneThreadResult<StaticResult | null> | LaneThreadResult<DrivenResult> {
  const t0 = Date.now();
  const report = reporter(task.port);
  try {
    if (task.type === 'static') {
      const stat = computeStatic(task.scenario, task.free, {
        ...task.options,
        onProgress: (f) => report(f),
      });
      // the settled states stay on this thread: the lanes of a threaded run start from the free-running state
      return { result: stat ? { ...stat, store: null } : null, wall_s: (Date.now() - t0) / 1000 };
    }
    const { derived, params } = deriveAll(task.scenario);
    const refs = {
      key: '',
      data: { free: task.free, stat: null, wall_s: 0, staticEngine: task.staticKind },
    };
    const result = executeLanes(
      task.scenario,
      params,
      derived,
      refs,
      task.plan,
      task.offsets_m,
      task.batch,
      task.indices,
      report,
    );
    return { result, wall_s: (Date.now() - t0) / 1000 };
  } finally {
    task.port.close();
  }
}
