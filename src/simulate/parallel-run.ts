/**
 * A run on several threads (docs/model.md §4.2): when the driven lanes are independent
 * (lanesIndependent: the round-trip engine), the static reference and groups of lanes are
 * tasks of one pool, the static reference first, so it settles beside the first batch of
 * lanes. Every lane's result is the one the single-thread runScenario computes (the lanes
 * start from the free-running state on their own noise streams), so the summary does not
 * depend on the thread count; anything else runs on the calling thread (runScenario).
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
import type { BatchRequest, ConvergedRun, References, RunOptions } from './run';
import type { LaneTask, LaneThreadResult, SpeedPointTask, StaticTask, WindowTask } from './lane-thread';
import type { SpeedCurve, SpeedPoint } from '../results/speed-curve';
import {
  addSpeedPoint,
  finishSpeedCurve,
  FREE_START_MEMORY_TIMES,
  speedPointCost,
  speedRefinement,
  startSpeedCurve,
} from './speed-curve';
import type { SpeedTodo } from './speed-curve';
import { planSlow, slowNote, slowOptions, slowSpeedRange, slowStepOptions, spliceSlow } from './slow-drive';
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
  /** Run a task on the pool, its progress on a port of its own. */
  const submit = <R>(
    task:
      | Omit<StaticTask, 'port'>
      | Omit<LaneTask, 'port'>
      | Omit<SpeedPointTask, 'port'>
      | Omit<WindowTask, 'port'>,
    onFraction: (f: number) => void,
  ) => {
    const { port1, port2 } = new MessageChannel();
    port1.on('message', (m: { fraction: number }) => onFraction(m.fraction));
    return (
      pool.run({ ...task, port: port2 }, { transferList: [port2] }) as Promise<LaneThreadResult<R>>
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
    let drivenThread_s = 0;
    const loop = convergingBatches(s, plan);
    let step = loop.next();
    // the slow-drive path (docs/model.md §3.6): its speed curve's points and its windows' lane
    // groups are tasks beside the static reference; the splice waits for the static reference
    // (its energy balance joins the result's), as on one thread
    let curve: SpeedCurve | null = plan.slow.curve ?? plan.slow.prior;
    while (slow && !step.done) {
      const q = step.value;
      batch = q;
      const input = slowInput(s, params, derived, refs, plan, q.offsets, q.batch);
      const stepOpts = slowStepOptions(input);
      const slowPlan = planSlow(stepOpts);
      const range = slowSpeedRange(input);
      const started = startSpeedCurve(curve, input, range.vLo, range.vHi);
      const work = started.work;
      // weights for the progress bar: lane-steps of each task (a window's lanes at the step of its slowest stretch)
      const windowDt = stepOpts.windowEngine(range.vLo).dt;
      const windowCost = slowPlan.chosen.map(
        (tp) => (tp.before + tp.after + FREE_START_MEMORY_TIMES * work.memory_s) / windowDt,
      );
      const tasks: { weight: number; fraction: number }[] = [];
      const track = (weight: number) => {
        const entry = { weight, fraction: 0 };
        tasks.push(entry);
        laneFractions = [0];
        return (f: number) => {
          entry.fraction = f;
          const total = tasks.reduce((a, x) => a + x.weight, 0);
          laneFractions = [tasks.reduce((a, x) => a + x.weight * x.fraction, 0) / Math.max(1e-300, total)];
          tell();
        };
      };
      const windowParts = Promise.all(
        slowPlan.chosen.flatMap((_tp, w) =>
          input.laneGroups.map((lanes) => {
            const onFraction = track(windowCost[w] * lanes.length);
            return submit<WindowPart>(
              {
                type: 'window',
                scenario: s,
                options,
                free,
                staticKind,
                plan,
                offsets_m: q.offsets,
                batch: q.batch,
                window: w,
                lanes,
              },
              onFraction,
            ).then((r) => {
              onFraction(1);
              drivenThread_s += r.wall_s;
              return r.result;
            });
          }),
        ),
      );
      const points = async (todo: SpeedTodo[]): Promise<string | null> => {
        const results = await Promise.all(
          todo.map((point) => {
            const onFraction = track(speedPointCost(input, point[0], work.memory_s));
            return submit<SpeedPoint | string>(
              { type: 'speed-point', scenario: s, options, free, staticKind, point, memory_s: work.memory_s },
              onFraction,
            ).then((r) => {
              onFraction(1);
              drivenThread_s += r.wall_s;
              return r.result;
            });
          }),
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
      let driven: DrivenResult;
      if (curveError !== null) {
        driven = failedDriven(`speed curve: ${curveError}`, 0, 0);
      } else {
        curve = finishSpeedCurve(work);
        const statResult = await statTask;
        const withStat = { ...input, stat: statResult.result };
        driven = spliceSlow(params, slowOptions(withStat, curve), slowPlan, parts);
        const noted = slowNote(curve, driven, plan.analysed_s);
        plan.slow.curve = curve;
        plan.slow.note = noted.note;
        plan.analysed_s = noted.analysed_s;
      }
      step = loop.next(driven);
    }
    while (!step.done) {
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
    let converged: ConvergedRun | null = step.value;
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
