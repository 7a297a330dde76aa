/**
 * One sweep into one folder: expand the grid, skip what is already there (--resume), run
 * the points on the executor, append each finished point to points.ndjson, and write
 * map.json at the end (also when stopped early, over the points finished so far).
 *
 * By default the map refines (src/sweep/refine.ts): the coarse grid first, then the points
 * the refinement plan asks for as results come in, then the inferred neighbours of the
 * operating point; `full` runs every point. Ready points go out grouped by reference key
 * (each thread computes a key's references once and reuses them), the longest first.
 */
import * as fs from 'node:fs';
import { mapToCsv } from '../analysis/csv';
import { keyUnit } from '../scenario/kinds';
import * as path from 'node:path';
import type { Scenario } from '../scenario/schema';
import { errorText, InputError } from '../scenario/errors';
import { normaliseScenarioForJson, scenarioSha256 } from '../scenario/canonical';
import type { EngineChoice } from '../scenario/schema';
import { referenceKey } from '../simulate';
import type { SweepMap } from '../results/map';
import { expandGrid, gridPoint } from './grid';
import type { SweepGrid } from './grid';
import { withOverrides } from '../scenario/validate';
import { buildSweepMap, operatingPointNeeds, refinePointOf, withOperatingPoint } from './map';
import type { RefinePlan, RefinePoint, RefineSettings } from './refine';
import { defaultRefineSettings, ownedIndices, planRefinement } from './refine';
import type { PointRecord } from '../results/points';
import { describeDropped, errorPointSummary, PointWriter, readPoints, repairPoints } from '../results/points';
import type { SweepHeader } from '../results/sweep-header';
import { assertSameSweep, makeHeader, readHeader, writeHeader } from '../results/sweep-header';
import { SWEEP_FILES } from '../results/files';
import { writeResultMarker } from '../results/marker';
import type { Executor } from './pool';
import { reachableMask } from '../analysis/operating-point';
import { createExecutor, ExecutorStopped } from './pool';
import type { Shard } from './shard';
import { shardIndices } from './shard';

export interface SweepOptions {
  /** the folder to write; created if missing */
  outDir: string;
  /** the scenario file, for messages and sweep.json */
  source?: string | null;
  /** worker threads (ignored when `executor` is given) */
  jobs?: number;
  /** run on the calling thread instead of a pool */
  inProcess?: boolean;
  /** keep the points already in outDir and run only the others */
  resume?: boolean;
  shard?: Shard | null;
  /** overrides simulation.engine of the scenario (and so its hash) */
  engine?: EngineChoice;
  /** an executor shared with other work (a batch); not destroyed here */
  executor?: Executor;
  /** stops the sweep: no new points start, finished ones are kept */
  signal?: AbortSignal;
  /** called after each finished point with the points done and to do in this folder */
  onProgress?: (done: number, total: number, rec: PointRecord | null, bound?: ProgressBound) => void;
  onWarning?: (message: string) => void;
  /** compute every point of the grid (no refinement) */
  full?: boolean;
  /** refinement settings (default: defaultRefineSettings of the scenario's thresholds); ignored with `full` */
  refine?: RefineSettings;
  /**
   * The points to run instead of the scenario's sweep grid (e.g. the draws of
   * `dithercav yield`): their axes for sweep.json and map.json, and each point's axis
   * values (written to points.ndjson) and scenario. Every point is computed (no
   * refinement); resume, shards, workers and progress work as for a grid.
   */
  pointSet?: PointSet;
}

/** A list of points that is not a grid (see SweepOptions.pointSet). */
export interface PointSet {
  axes: SweepGrid['axes'];
  total: number;
  /** the axis values (and any other numbers to keep with the point) and the scenario of point `index` */
  pointAt(index: number): { axes: Record<string, number>; scenario: Scenario };
}

/**
 * How far a refining sweep may still grow: `total` in onProgress counts the points planned
 * so far (done + needed now); `upper` the most it can come to (cells still undecided may
 * split down to every point). For a full grid both equal the points to run.
 */
export interface ProgressBound {
  upper: number;
  refining: boolean;
}

interface QueuedPoint {
  index: number;
  axes: Record<string, number>;
  scenario: Scenario;
  key: string;
  /** relative cost estimate: the simulated time grows as 1 / drive frequency */
  cost: number;
}

function noop(): void {}

/**
 * A point's relative cost, to start the longest first: the stepped time times the rest
 * offsets. The stepped time is the settling (at least one drive period) plus the analysed
 * window, whole periods holding at least four detection windows (as the run sizes it,
 * docs/model.md §4.3), so it grows as 1/f at low drive frequency (docs/model.md §3.6).
 * The engine's step is left out. Only the order of the points depends on it.
 */
export function pointCost(s: Scenario): number {
  const f = s.drive.frequency;
  if (!(f > 0)) return 0;
  const analysed = Math.max(s.simulation.periods / f, 4 / s.analysis.detection_bandwidth);
  return s.simulation.drive_offsets * (1 / f + analysed);
}

export interface SweepOutcome {
  dir: string;
  header: SweepHeader;
  /** points this folder is to compute (the shard's share of the grid; refined: what the plan asked for) */
  planned: number;
  /** points present at the end (resumed + new) */
  finished: number;
  /** of those, recorded as numerical failures or errors */
  failed: number;
  /** of those, runs that threw (status 'error': a program error, message and stack in points.ndjson) */
  errors: number;
  /** points kept from an earlier run (--resume) */
  resumed: number;
  /** points inferred by the refinement, not run */
  inferred: number;
  /** true when stopped by the signal before every point finished */
  interrupted: boolean;
  map: SweepMap;
}

/** The scenario with simulation.engine replaced (by `withOverrides`), when an engine is chosen on the command line. */
export function withEngine(s: Scenario, engine: EngineChoice | undefined): Scenario {
  if (engine === undefined || engine === s.simulation.engine) return s;
  return withOverrides(s, { 'simulation.engine': engine });
}

/** The sweep.json a scenario (with its engine choice applied) and shard give. */
export function sweepHeaderFor(
  scenario: Scenario,
  source: string | null,
  shard: Shard | null,
  engine?: EngineChoice,
  pointSet?: PointSet,
): SweepHeader {
  const s = withEngine(scenario, engine);
  const grid = pointSet ?? expandGrid(s, source);
  return makeHeader({
    name: s.name,
    scenario_sha256: scenarioSha256(s),
    scenario: normaliseScenarioForJson(s),
    source,
    axes: grid.axes,
    total_points: grid.total,
    shard: shard ?? null,
  });
}

/** A FIFO counting semaphore bounding the tasks handed to the executor at once. */
class Slots {
  private waiting: (() => void)[] = [];
  constructor(private free: number) {}
  acquire(): Promise<void> {
    if (this.free > 0) {
      this.free--;
      return Promise.resolve();
    }
    return new Promise((resolve) => this.waiting.push(resolve));
  }
  release(): void {
    const next = this.waiting.shift();
    if (next) next();
    else this.free++;
  }
}

/** `file` relative to `dir`, forward slashes. */
export function relativeSource(dir: string, file: string): string {
  return path.relative(path.resolve(dir), path.resolve(file)).split(path.sep).join('/');
}

function pointLabel(axes: Record<string, number>): string {
  return Object.entries(axes)
    .map(([k, v]) => `${k} = ${v}`)
    .join(', ');
}

/**
 * Run (or resume) a sweep into `opts.outDir`. Bad input (the grid, a point's
 * scenario, a folder holding another sweep) throws InputError before any point runs.
 * Without `resume`, earlier points in the folder are moved to points.ndjson.previous.
 * Points are independent of thread count and finishing order: each is the base scenario
 * with overrides, seeded by the scenario's own seed.
 */
export async function runSweep(scenario: Scenario, opts: SweepOptions): Promise<SweepOutcome> {
  const source = opts.source ?? null;
  const shard = opts.shard ?? null;
  const warn = opts.onWarning ?? (() => undefined);
  const s = withEngine(scenario, opts.engine);
  const pointSet = opts.pointSet ?? null;
  const grid = pointSet ?? expandGrid(s, source);
  const header = sweepHeaderFor(scenario, source, shard, opts.engine, pointSet ?? undefined);
  const dir = opts.outDir;
  writeResultMarker(dir, 'sweep');
  const pointsFile = path.join(dir, SWEEP_FILES.points);

  let kept: PointRecord[] = [];
  const existing = readHeader(dir);
  if (opts.resume) {
    if (existing) assertSameSweep(dir, existing, header);
    const read = readPoints(pointsFile);
    for (const m of describeDropped(pointsFile, read.dropped)) warn(m);
    if (!existing && read.records.length > 0) {
      throw new InputError(path.join(dir, SWEEP_FILES.header), [
        {
          path: '',
          message: `cannot resume: ${pointsFile} has points but sweep.json is missing, so their scenario is unknown`,
        },
      ]);
    }
    kept = repairPoints(pointsFile, read);
  } else if (fs.existsSync(pointsFile) && fs.statSync(pointsFile).size > 0) {
    fs.renameSync(pointsFile, `${pointsFile}.previous`);
    warn(
      `${dir}: the earlier points were moved to ${SWEEP_FILES.points}.previous (use --resume to continue a sweep)`,
    );
  }
  // a point set (not a grid) is computed whole
  const refineSettings = opts.full || pointSet ? null : (opts.refine ?? defaultRefineSettings(s.analysis));
  // sweep.json names its scenario file relative to the sweep folder, so a moved folder still finds it.
  const fullHeader: SweepHeader = {
    ...header,
    source: source === null ? null : relativeSource(dir, source),
    refine: refineSettings,
  };
  writeHeader(dir, existing && opts.resume ? { ...fullHeader, created: existing.created } : fullHeader);

  const refine = refineSettings;
  // the points this folder may come to hold: the shard's share of the grid, or (refined) the
  // points of the coarse cells the shard owns
  const region = refine ? ownedIndices(grid.axes, refine, shard) : shardIndices(grid.total, shard);
  const regionSet = new Set(region);
  const records: PointRecord[] = kept.slice();
  const known = new Map<number, RefinePoint>();
  for (const r of kept) known.set(r.index, refinePointOf(r));
  const dispatched = new Set<number>(kept.map((r) => r.index));

  // Build and validate every point the sweep may run before starting any, so bad input stops
  // the sweep at once with the point named; note each point's reference key.
  const built = new Map<number, QueuedPoint>();
  const keyOrder = new Map<string, number>();
  for (const index of region) {
    if (dispatched.has(index)) continue;
    const given = pointSet ? pointSet.pointAt(index) : null;
    const pt = given ? { index, axes: given.axes } : gridPoint(grid as SweepGrid, index);
    let ps: Scenario;
    try {
      ps = given ? given.scenario : withOverrides((grid as SweepGrid).base, pt.axes);
    } catch (err) {
      if (err instanceof InputError) {
        throw new InputError(
          source,
          err.problems.map((p) => ({
            path: p.path,
            message: `at sweep point ${index} (${pointLabel(pt.axes)}): ${p.message}`,
          })),
        );
      }
      throw err;
    }
    const key = referenceKey(ps);
    if (!keyOrder.has(key)) keyOrder.set(key, keyOrder.size);
    built.set(index, { index, axes: pt.axes, scenario: ps, key, cost: pointCost(ps) });
  }

  // What is to run next: every pending point (full grid), or what the refinement plan needs
  // now given the points known so far (it grows as points finish).
  let plan: RefinePlan | null = null;
  // the actuator's reach does not depend on results: found once
  let reachable: boolean[] | null | undefined;
  const queue: QueuedPoint[] = [];
  let filledOnce = false;
  // points of this folder's region present so far (kept and new), counted as they come
  let doneInRegion = kept.filter((r) => regionSet.has(r.index)).length;
  const currentMap = () =>
    buildSweepMap({
      name: header.name,
      scenario_sha256: header.scenario_sha256,
      axes: header.axes,
      records,
      scenario: s,
      refine,
      shard,
    });
  const refill = () => {
    let next: number[];
    if (refine) {
      plan = planRefinement(grid.axes, known, refine, shard);
      next = plan.need;
      // refinement done: make sure the operating point and its margin are computed points
      if (next.length === 0) {
        const m = currentMap();
        if (reachable === undefined) reachable = reachableMask(m, s);
        next = operatingPointNeeds(m, s, reachable);
      }
    } else {
      // a full grid: every pending point at once, and only once
      if (filledOnce) return;
      filledOnce = true;
      next = region;
    }
    let added = false;
    for (const i of next) {
      if (dispatched.has(i)) continue;
      const q = built.get(i);
      if (!q) continue;
      dispatched.add(i);
      queue.push(q);
      added = true;
    }
    // one reference key after another (each thread keeps meeting the key it has cached),
    // and within a key the longest points first, so no long point is left to run alone at the end
    if (added) queue.sort((a, b) => keyOrder.get(a.key)! - keyOrder.get(b.key)! || b.cost - a.cost);
  };
  const progressCounts = (): [number, number, ProgressBound] => {
    const done = doneInRegion;
    if (!refine || plan === null) return [done, region.length, { upper: region.length, refining: false }];
    const p = plan as RefinePlan;
    const pending = Math.max(p.need.filter((i) => !known.has(i)).length, queue.length + inFlight.size);
    return [done, done + pending, { upper: Math.max(done + pending, p.upper_bound), refining: true }];
  };

  const ownExecutor = !opts.executor;
  const jobs = Math.max(1, opts.jobs ?? 1);
  const exec = opts.executor ?? createExecutor(jobs, opts.inProcess ?? false);
  const slots = new Slots(Math.max(2, exec.threads * 2));
  const writer = new PointWriter(pointsFile);
  let stopped = opts.signal?.aborted ?? false;
  const inFlight = new Set<Promise<unknown>>();
  const onAbort = () => {
    stopped = true;
    if (ownExecutor) void exec.destroy();
  };
  opts.signal?.addEventListener('abort', onAbort);
  refill();
  {
    const [d, t, b] = progressCounts();
    opts.onProgress?.(d, t, null, b);
  }

  const track = <T>(p: Promise<T>): Promise<T> => {
    inFlight.add(p);
    void p.finally(() => inFlight.delete(p)).catch(() => undefined);
    return p;
  };
  let dirty = false;
  const finish = (rec: PointRecord) => {
    writer.write(rec);
    records.push(rec);
    if (regionSet.has(rec.index)) doneInRegion++;
    known.set(rec.index, refinePointOf(rec));
    dirty = true;
    const [d, t, b] = progressCounts();
    opts.onProgress?.(d, t, rec, b);
  };

  try {
    for (;;) {
      if (stopped) break;
      // re-plan when the queue runs low (planning a large grid after every point would cost more than it saves)
      if (dirty && (!refine || queue.length <= exec.threads)) {
        refill();
        dirty = false;
      }
      if (queue.length === 0) {
        if (inFlight.size === 0) break;
        await Promise.race([...inFlight].map((p) => p.then(noop, noop)));
        continue;
      }
      await slots.acquire();
      if (stopped) {
        slots.release();
        break;
      }
      const p = queue.shift();
      if (!p) {
        slots.release();
        continue;
      }
      const task = track(
        exec.run({ type: 'point', index: p.index, axes: p.axes, scenario: p.scenario, referenceKey: p.key }),
      );
      task
        .then(finish, (err: unknown) => {
          if (stopped || err instanceof ExecutorStopped) return;
          // The thread itself failed (out of memory, a crash): record it like a failed run.
          finish({
            index: p.index,
            axes: p.axes,
            // the thread itself failed (out of memory, a crash): not physics, an error
            summary: errorPointSummary(
              `worker failed: ${errorText(err)}`,
              err instanceof Error ? (err.stack ?? null) : null,
            ),
            wall_s: 0,
          });
        })
        .finally(() => slots.release());
    }
    while (inFlight.size > 0) await Promise.allSettled([...inFlight]);
  } finally {
    opts.signal?.removeEventListener('abort', onAbort);
    writer.close();
    if (ownExecutor) await exec.destroy();
  }
  if (refine) plan = planRefinement(grid.axes, known, refine, shard);

  records.sort((a, b) => a.index - b.index);
  const map = withOperatingPoint(currentMap(), s);
  fs.writeFileSync(path.join(dir, SWEEP_FILES.map), `${JSON.stringify(map)}\n`);
  fs.writeFileSync(path.join(dir, SWEEP_FILES.mapCsv), mapToCsv(map, keyUnit));
  const finishedHere = records.filter((r) => regionSet.has(r.index)).length;
  const finalPlan = plan as RefinePlan | null;
  const opPending =
    refine && finalPlan && finalPlan.need.length === 0
      ? operatingPointNeeds(map, s).filter((i) => built.has(i)).length
      : 0;
  const plannedCount = refine && finalPlan ? finishedHere + finalPlan.need.length + opPending : region.length;
  return {
    dir,
    header: fullHeader,
    planned: plannedCount,
    finished: records.length,
    failed: records.filter((r) => r.summary.status !== 'ok').length,
    errors: records.filter((r) => r.summary.status === 'error').length,
    resumed: kept.length,
    inferred: map.inferred_points ?? 0,
    interrupted: finishedHere < plannedCount,
    map,
  };
}
