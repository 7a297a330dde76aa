/**
 * One sweep into one folder: expand the grid, skip what is already there (--resume),
 * group the points by reference key (each thread computes a key's references once and
 * reuses them), run the points on the executor,
 * append each finished point to points.ndjson, and write map.json at the end (also when
 * stopped early, over the points finished so far).
 */
import * as fs from 'node:fs';
import { mapToCsv } from '../analysis/csv';
import { keyUnit } from '../scenario/kinds';
import * as path from 'node:path';
import type { Scenario } from '../scenario/schema';
import { InputError } from '../scenario/errors';
import { normaliseScenarioForJson, scenarioSha256 } from '../scenario/canonical';
import type { EngineChoice } from '../simulate';
import { referenceKey } from '../simulate';
import type { SweepMap } from '../results/map';
import { expandGrid, gridPoint } from './grid';
import { withOverrides } from '../scenario/validate';
import { buildSweepMap, withOperatingPoint } from './map';
import type { PointRecord, SweepHeader } from './persist';
import {
  assertSameSweep,
  describeDropped,
  failedPointSummary,
  makeHeader,
  PointWriter,
  readHeader,
  readPoints,
  repairPoints,
  SWEEP_FILES,
  writeHeader,
} from './persist';
import type { Executor } from './pool';
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
  onProgress?: (done: number, total: number, rec: PointRecord | null) => void;
  onWarning?: (message: string) => void;
}

export interface SweepOutcome {
  dir: string;
  header: SweepHeader;
  /** points this folder is to hold (the shard's share of the grid) */
  planned: number;
  /** points present at the end (resumed + new) */
  finished: number;
  /** of those, recorded as numerical failures */
  failed: number;
  /** points kept from an earlier run (--resume) */
  resumed: number;
  /** true when stopped by the signal before every point finished */
  interrupted: boolean;
  map: SweepMap;
}

/** The scenario with simulation.engine replaced, when an engine is chosen on the command line. */
export function withEngine(s: Scenario, engine: EngineChoice | undefined): Scenario {
  if (engine === undefined || engine === s.simulation.engine) return s;
  return { ...s, simulation: { ...s.simulation, engine } };
}

/** The sweep.json a scenario (with its engine choice applied) and shard give. */
export function sweepHeaderFor(
  scenario: Scenario,
  source: string | null,
  shard: Shard | null,
  engine?: EngineChoice,
): SweepHeader {
  const s = withEngine(scenario, engine);
  const grid = expandGrid(s, source);
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

function errorText(err: unknown): string {
  return err instanceof Error ? err.message : String(err);
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
  const grid = expandGrid(s, source);
  const header = sweepHeaderFor(scenario, source, shard, opts.engine);
  const dir = opts.outDir;
  fs.mkdirSync(dir, { recursive: true });
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
  writeHeader(dir, existing && opts.resume ? { ...header, created: existing.created } : header);

  const planned = shardIndices(grid.total, shard);
  const done = new Set(kept.map((r) => r.index));
  const pending = planned.filter((i) => done.has(i) === false);
  const plannedSet = new Set(planned);
  const records: PointRecord[] = kept.slice();

  // Build and validate every pending point before starting any, so bad input stops the
  // sweep at once with the point named; group points by the references they share.
  const groups = new Map<string, { index: number; axes: Record<string, number>; scenario: Scenario }[]>();
  for (const index of pending) {
    const pt = gridPoint(grid, index);
    let ps: Scenario;
    try {
      ps = withOverrides(grid.base, pt.axes);
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
    let g = groups.get(key);
    if (!g) groups.set(key, (g = []));
    g.push({ index, axes: pt.axes, scenario: ps });
  }

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
  opts.onProgress?.(records.length, planned.length, null);

  const track = <T>(p: Promise<T>): Promise<T> => {
    inFlight.add(p);
    void p.finally(() => inFlight.delete(p)).catch(() => undefined);
    return p;
  };

  try {
    // Groups go out one after another, so each thread keeps meeting the key it has cached.
    outer: for (const [key, group] of groups) {
      for (const p of group) {
        await slots.acquire();
        if (stopped) {
          slots.release();
          break outer;
        }
        const task = track(
          exec.run({ type: 'point', index: p.index, axes: p.axes, scenario: p.scenario, referenceKey: key }),
        );
        task
          .then(
            (rec) => {
              writer.write(rec);
              records.push(rec);
              opts.onProgress?.(records.length, planned.length, rec);
            },
            (err: unknown) => {
              if (stopped || err instanceof ExecutorStopped) return;
              // The thread itself failed (out of memory, a crash): record it like a failed run.
              const rec: PointRecord = {
                index: p.index,
                axes: p.axes,
                summary: failedPointSummary(`worker failed: ${errorText(err)}`),
                wall_s: 0,
              };
              writer.write(rec);
              records.push(rec);
              opts.onProgress?.(records.length, planned.length, rec);
            },
          )
          .finally(() => slots.release());
      }
    }
    while (inFlight.size > 0) await Promise.allSettled([...inFlight]);
  } finally {
    opts.signal?.removeEventListener('abort', onAbort);
    writer.close();
    if (ownExecutor) await exec.destroy();
  }

  records.sort((a, b) => a.index - b.index);
  const map = withOperatingPoint(
    buildSweepMap({
      name: header.name,
      scenario_sha256: header.scenario_sha256,
      axes: header.axes,
      records,
      scenario: s,
    }),
    s,
  );
  fs.writeFileSync(path.join(dir, SWEEP_FILES.map), `${JSON.stringify(map)}\n`);
  fs.writeFileSync(path.join(dir, SWEEP_FILES.mapCsv), mapToCsv(map, keyUnit));
  const finishedHere = records.filter((r) => plannedSet.has(r.index)).length;
  return {
    dir,
    header,
    planned: planned.length,
    finished: records.length,
    failed: records.filter((r) => r.summary.class === 'numerical-failure').length,
    resumed: kept.length,
    interrupted: finishedHere < planned.length,
    map,
  };
}
