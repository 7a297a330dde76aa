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
  staticEngineRequest,
} from './run';
import type { BatchRequest, ConvergedRun, References, RunOptions } from './run';
import type { LaneTask, LaneThreadResult, StaticTask } from './lane-thread';

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
  if (!plan.drives || !lanesIndependent(plan.engine)) return runScenario(s, { ...rest, freeRunning });

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
    task: Omit<StaticTask, 'port'> | Omit<LaneTask, 'port'>,
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
