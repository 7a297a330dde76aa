/**
 * The work one thread of a threaded run does (parallel-run.ts, docs/model.md §4.2): the
 * static reference, a group of independent driven lanes, a point of the slow-drive path's
 * speed curve or a lane group of one of its turning-point windows (docs/model.md §3.6).
 * Each task carries the scenario, the
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
import { computeStatic, executeLanes, slowInput } from './run';
import type { RunOptions, RunPlan } from './run';
import type { SpeedPoint } from '../results/speed-curve';
import { speedPoint } from './speed-curve';
import type { SpeedTodo } from './speed-curve';
import { planSlow, slowStepOptions, stepSlowWindow } from './slow-drive';
import type { WindowPart } from './slow-drive';

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

/** One point of the speed curve (speed-curve.ts speedPoint). */
export interface SpeedPointTask extends TaskBase {
  type: 'speed-point';
  plan: RunPlan;
  point: SpeedTodo;
  memory_s: number;
}

/** Lanes `lanes` of turning-point window `window` of a batch (slow-drive.ts stepSlowWindow). */
export interface WindowTask extends TaskBase {
  type: 'window';
  plan: RunPlan;
  offsets_m: number[];
  batch: number;
  window: number;
  lanes: number[];
}

export type LaneThreadTask = StaticTask | LaneTask | SpeedPointTask | WindowTask;

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
):
  | LaneThreadResult<StaticResult | null>
  | LaneThreadResult<DrivenResult>
  | LaneThreadResult<SpeedPoint | string>
  | LaneThreadResult<WindowPart> {
  const t0 = Date.now();
  const report = reporter(task.port);
  const done = <R>(result: R): LaneThreadResult<R> => ({ result, wall_s: (Date.now() - t0) / 1000 });
  try {
    if (task.type === 'static') {
      const stat = computeStatic(task.scenario, task.free, {
        ...task.options,
        onProgress: (f) => report(f),
      });
      // the settled states stay on this thread: the lanes of a threaded run start from the free-running state
      return done(stat ? { ...stat, store: null } : null);
    }
    const { derived, params } = deriveAll(task.scenario);
    const s = task.scenario;
    const refs = {
      key: '',
      data: { free: task.free, stat: null, wall_s: 0, staticEngine: task.staticKind },
    };
    if (task.type === 'speed-point') {
      // the curve's context as the run builds it on one thread (slowInput)
      const ctx = slowInput(s, params, derived, refs, task.plan, [], 0);
      return done(speedPoint(ctx, task.point[0], task.point[1], task.memory_s));
    }
    if (task.type === 'window') {
      const input = slowInput(s, params, derived, refs, task.plan, task.offsets_m, task.batch);
      const o = slowStepOptions(input);
      return done(stepSlowWindow(params, o, planSlow(o), task.window, task.lanes));
    }
    return done(
      executeLanes(s, params, derived, refs, task.plan, task.offsets_m, task.batch, task.indices, report),
    );
  } finally {
    task.port.close();
  }
}
