/**
 * A run on several threads (docs/model.md §4.2): when the driven lanes are independent
 * (lanesIndependent: the round-trip engine), the static reference and groups of lanes are
 * tasks of one pool, the static reference first, so it settles beside the first batch of
 * lanes; on the slow-drive path (docs/model.md §3.6) the static reference, the lane groups
 * of the turning-point windows and the speed curve's points are the tasks. Every lane's
 * and point's result is the one the single-thread runScenario computes (they start from the
 * free-running state on their own noise streams), so the summary does not depend on the
 * thread count; anything else runs on the calling thread (runScenario).
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { MessageChannel } from 'node:worker_threads';
import Piscina from 'piscina';
import type { Scenario } from '../scenario/schema';
import type { RunArtifacts } from '../results/artifacts';
import { deriveAll } from '../physics/derive';
import type { DrivenResult } from './driven';
import type { StaticResult } from './references';
import {
  computeFreeRunning,
  convergingBatches,
  finishRun,
  laneGroups,
  lanesIndependent,
  mergeBatches,
  planRun,
  referenceKey,
  runScenario,
  slowInput,
  staticEngineRequest,
} from './run';
import type { BatchRequest, ConvergedRun, References, RunOptions, RunPlan } from './run';
import type { LaneTask, LaneThreadResult, SpeedPointTask, StaticTask, WindowTask } from './lane-thread';
import type { SpeedPoint } from '../results/speed-curve';
import {
  addSpeedPoint,
  finishSpeedCurve,
  speedPointCost,
  speedRefinement,
  startSpeedCurve,
} from './speed-curve';
import type { SpeedTodo } from './speed-curve';
import {
  planSlow,
  slowNote,
  slowOptions,
  slowSpeedRange,
  slowStepOptions,
  spliceSlow,
  windowSpan,
} from './slow-drive';
import type { WindowPart } from './slow-drive';
import { failedDriven } from './driven';

/** The compiled thread file: beside this module in dist/, else dist/simulate/ of the package. */
export function laneThreadFile(): string {
  const here = path.join(__dirname, 'lane-thread.js');
  if (fs.existsSync(here)) return here;
  return path.resolve(__dirname, '..', '..', 'dist', 'simulate', 'lane-thread.js');
}

/** Share of the progress bar the static reference fills (the rest is the driven run), as on one thread. */
const STATIC_SHARE = 0.4;

/**
 * Run one scenario on up to `threads` threads; the same summary as runScenario apart from
 * timing. One thread, reused references, or lanes that cannot run alone: runScenario.
 */
export async function runScenarioThreaded(
  s: Scenario,
  opts: RunOptions & { threads: number },
): Promise<RunArtifacts> {
  const { threads, ...rest } = opts;
  if (threads < 2 || rest.references !== undefined) return runScenario(s, rest);
  const wall0 = Date.now();
  const seed = rest.seed ?? s.simulation.seed;
  const progress = rest.onProgress ?? (() => undefined);
  const { derived, params } = deriveAll(s);
  progress(0, 'free-running reference');
  const freeRunning = computeFreeRunning(s, { ...rest, seed });
  const { free, staticKind } = freeRunning;
  const refs: References = {
    key: referenceKey(s, seed, staticEngineRequest(s, rest)),
    data: { free, stat: null, wall_s: 0, staticEngine: staticKind },
  };
  const plan = planRun(s, params, derived, refs, { ...rest, seed });
  const slow = plan.engine === 'speedcurve';
  if (!plan.drives || !(lanesIndependent(plan.engine) || slow))
    return runScenario(s, { ...rest, freeRunning });

  const pool = new Piscina({
    filename: laneThreadFile(),
    minThreads: threads,
    maxThreads: threads,
    concurrentTasksPerWorker: 1,
  });
  const options = { engine: rest.engine, seed };
  let staticFraction = 0;
  let staticDone = false;
  let batch: BatchRequest | null = null;
  let laneFractions: number[] = [];
  const tell = () => {
    const inBatch = batch
      ? batch.lo + (batch.width * laneFractions.reduce((a, b) => a + b, 0)) / laneFractions.length
      : 0;
    const label = staticDone
      ? (batch?.label ?? 'driven run')
      : `static reference and ${batch?.label ?? 'driven run'}`;
    progress(STATIC_SHARE * staticFraction + (1 - STATIC_SHARE) * inBatch, label);
  };
  const submit: Submit = (task, onFraction) => {
    const { port1, port2 } = new MessageChannel();
    port1.on('message', (m: { fraction: number }) => onFraction(m.fraction));
    return (
      pool.run({ ...task, port: port2 }, { transferList: [port2] }) as Promise<LaneThreadResult<never>>
    ).finally(() => port1.close());
  };

  try {
    const statTask = submit<StaticResult | null>(
      { type: 'static', scenario: s, options, free, staticKind },
      (f) => {
        staticFraction = f;
        tell();
      },
    ).then((r) => {
      staticDone = true;
      staticFraction = 1;
      tell();
      return r;
    });
    // awaited later; a task failing first must not leave this rejection unhandled
    statTask.catch(() => undefined);
    let drivenThread_s = 0;
    const loop = convergingBatches(s, plan);
    let step = loop.next();
    // the slow-drive path (docs/model.md §3.6): its speed curve's points and its windows' lane
    // groups are tasks beside the static reference; the splice waits for the static reference
    // (its energy balance joins the result's), as on one thread
    while (slow && !step.done) {
      const q = step.value;
      batch = q;
      laneFractions = [0];
      tell();
      const r = await slowBatch(
        { s, params, derived, refs, plan, submit, task: { options, free, staticKind } },
        q,
        statTask,
        (f) => {
          laneFractions = [f];
          tell();
        },
      );
      drivenThread_s += r.thread_s;
      if (r.staticFailed) break;
      step = loop.next(r.driven);
    }
    while (!slow && !step.done) {
      const q = step.value;
      batch = q;
      // the batch's groups of lanes, as on one thread (laneGroups), shared out over the threads
      const groups = laneGroups(q.offsets.length);
      laneFractions = groups.map(() => 0);
      tell();
      const parts = await Promise.all(
        groups.map((indices, g) =>
          submit<DrivenResult>(
            {
              type: 'lanes',
              scenario: s,
              options,
              free,
              staticKind,
              plan,
              offsets_m: indices.map((i) => q.offsets[i]),
              batch: q.batch,
              indices,
            },
            (f) => {
              laneFractions[g] = f;
              tell();
            },
          ),
        ),
      );
      drivenThread_s += parts.reduce((a, p) => a + p.wall_s, 0);
      step = loop.next(mergeBatches(parts.map((p) => p.result)));
    }
    const statResult = await statTask;
    const stat = statResult.result;
    // the loops end with the converged run, or (slow path) break early on a failed static reference
    let converged: ConvergedRun | null = step.done ? step.value : null;
    if (stat && stat.failed) {
      // the one-thread run would not have stepped the lanes: neither does this one's summary
      plan.failure = `static reference: ${stat.failed}`;
      plan.drives = false;
      converged = null;
    }
    const full: References = {
      key: refs.key,
      data: { free, stat, wall_s: statResult.wall_s, staticEngine: staticKind },
    };
    return finishRun(s, full, plan, converged, {
      wall_s: (Date.now() - wall0) / 1000,
      // the lanes' own thread-seconds: the engine's throughput per thread, as on one thread
      drivenWall_s: Math.max(1e-9, drivenThread_s),
    });
  } finally {
    await pool.destroy();
  }
}

/** Run a task on the pool, its progress on a port of its own. */
type Submit = <R>(
  task:
    | Omit<StaticTask, 'port'>
    | Omit<LaneTask, 'port'>
    | Omit<SpeedPointTask, 'port'>
    | Omit<WindowTask, 'port'>,
  onFraction: (f: number) => void,
) => Promise<LaneThreadResult<R>>;

/**
 * One batch of the slow-drive path on the pool: the windows' lane groups and the speed
 * points still missing (base grid, then its refinement) as tasks, then the splice on this
 * thread once the static reference is in; plan.slow and plan.analysed_s are set as
 * executeRun sets them on one thread. Progress: lane-steps done over those planned (the
 * refinement's share reserved as on one thread), never decreasing.
 */
async function slowBatch(
  c: {
    s: Scenario;
    params: ReturnType<typeof deriveAll>['params'];
    derived: ReturnType<typeof deriveAll>['derived'];
    refs: References;
    plan: RunPlan;
    submit: Submit;
    task: Pick<WindowTask, 'options' | 'free' | 'staticKind'>;
  },
  q: BatchRequest,
  statTask: Promise<LaneThreadResult<StaticResult | null>>,
  onFraction: (f: number) => void,
): Promise<{ driven: DrivenResult; thread_s: number; staticFailed: boolean }> {
  const { s, params, plan, submit } = c;
  const input = slowInput(s, params, c.derived, c.refs, plan, q.offsets, q.batch);
  const stepOpts = slowStepOptions(input);
  const slowPlan = planSlow(stepOpts);
  const range = slowSpeedRange(input);
  const started = startSpeedCurve(plan.slow.curve ?? plan.slow.prior, input, range.vLo, range.vHi);
  const work = started.work;
  // a thread needs the plan's settings, not the curve it carries
  const lean: RunPlan = { ...plan, slow: { curve: null, note: '', prior: null } };
  let thread_s = 0;
  let shown = 0;
  let done = 0;
  const windowSteps = slowPlan.chosen.map((_tp, w) => windowSpan(stepOpts, slowPlan, w).laneSteps);
  const pointSteps = (k: number) => speedPointCost(input, k, work.memory_s);
  const planned =
    windowSteps.reduce((a, x) => a + x, 0) * q.offsets.length +
    1.3 * started.todo.reduce((a, [k]) => a + pointSteps(k), 0);
  const run = <R>(task: Parameters<Submit>[0], weight: number): Promise<R> => {
    let last = 0;
    const advance = (f: number) => {
      done += weight * (f - last);
      last = f;
      shown = Math.max(shown, Math.min(1, done / Math.max(1, planned)));
      onFraction(shown);
    };
    return submit<R>(task, advance).then((r) => {
      advance(1);
      thread_s += r.wall_s;
      return r.result;
    });
  };
  const windowParts = Promise.all(
    slowPlan.chosen.flatMap((_tp, w) =>
      input.laneGroups.map((lanes) =>
        run<WindowPart>(
          {
            type: 'window',
            ...c.task,
            scenario: s,
            plan: lean,
            offsets_m: q.offsets,
            batch: q.batch,
            window: w,
            lanes,
          },
          windowSteps[w] * lanes.length,
        ),
      ),
    ),
  );
  windowParts.catch(() => undefined);
  const points = async (todo: SpeedTodo[]): Promise<string | null> => {
    const results = await Promise.all(
      todo.map((point) =>
        run<SpeedPoint | string>(
          { type: 'speed-point', ...c.task, scenario: s, plan: lean, point, memory_s: work.memory_s },
          pointSteps(point[0]),
        ),
      ),
    );
    for (let i = 0; i < todo.length; i++) {
      const r = results[i];
      if (typeof r === 'string') return r;
      addSpeedPoint(work, input, todo[i], r);
    }
    return null;
  };
  const curveError = (await points(started.todo)) ?? (await points(speedRefinement(work)));
  const parts = await windowParts;
  if (curveError !== null) {
    // as on one thread (slowDriveRun): no curve and no note after a failed curve
    plan.slow.curve = null;
    plan.slow.note = '';
    return { driven: failedDriven(`speed curve: ${curveError}`, 0, 0), thread_s, staticFailed: false };
  }
  const curve = finishSpeedCurve(work);
  const stat = (await statTask).result;
  // a failed static reference ends the run (finishRun reports it), as on one thread
  if (stat?.failed) return { driven: failedDriven(stat.failed, 0, 0), thread_s, staticFailed: true };
  const driven = spliceSlow(params, slowOptions({ ...input, stat }, curve), slowPlan, parts);
  const noted = slowNote(curve, driven, plan.analysed_s);
  plan.slow.curve = curve;
  plan.slow.note = noted.note;
  plan.analysed_s = noted.analysed_s;
  return { driven, thread_s, staticFailed: false };
}
