/**
 * Item c of the benchmark: one and two worker threads side by side on a fixed sub-grid of
 * a 32 x 32 amplitude-frequency map (corners, thirds), bench profile, every point computed
 * (--full), through the real sweep machinery (runSweep, its piscina pool, point files in a
 * temporary folder). `npm run bench` reports the measured ratio as jobs2_speedup; the
 * whole refined map is measured by map-refined.ts. The extrapolation below is kept in the
 * details only:
 *
 *   T_full(jobs) = R + (T_subset(jobs) - R) * points_full / points_subset
 *
 * with R the references' time (free-running and static reference, computed once per
 * worker thread, in parallel, whatever the size of the map), measured on its own here.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import type { Scenario } from '../scenario/schema';
import { rangeValues } from '../sweep/grid';
import { runSweep } from '../sweep/run-sweep';
import { computeReferences } from '../simulate/run';
import { readPoints } from '../results/points';
import { SWEEP_FILES } from '../results/files';

export interface MapTimingOptions {
  /** points per axis of the full map */
  points: number;
  amplitude_m: [number, number];
  frequency_Hz: [number, number];
  /** indices (0-based, per axis) of the sub-grid actually run */
  subsetIndices: number[];
  log?: (line: string) => void;
}

export interface MapPointTiming {
  amplitude_m: number;
  frequency_Hz: number;
  engine: string | null;
  class: string;
  /** the point's own run time in the jobs-1 sweep, s (the first point includes the references) */
  wall_s: number;
}

export interface MapTimingResult {
  map_points_full: number;
  map_points_measured: number;
  map_extrapolated: true;
  references_wall_s: number;
  subset_wall_s_jobs1: number;
  subset_wall_s_jobs2: number;
  subset_jobs2_speedup: number;
  map_wall_s_jobs1: number;
  map_wall_s_jobs2: number;
  jobs2_speedup: number;
  points: MapPointTiming[];
}

async function timedSweep(
  s: Scenario,
  jobs: number,
  log: (line: string) => void,
): Promise<{ wall_s: number; dir: string; points: MapPointTiming[] }> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), `dithercav-bench-j${jobs}-`));
  const t0 = process.hrtime.bigint();
  try {
    const out = await runSweep(s, {
      outDir: dir,
      jobs,
      full: true,
      onProgress: (done, total, rec) => {
        if (rec)
          log(
            `c. jobs ${jobs}: ${done}/${total} points (last: ${rec.summary.engine ?? '-'} engine, ${rec.wall_s.toFixed(1)} s)`,
          );
      },
    });
    const wall_s = Number(process.hrtime.bigint() - t0) / 1e9;
    // the one validating reader of points.ndjson (results room)
    const recs = readPoints(path.join(dir, SWEEP_FILES.points)).records;
    recs.sort((a, b) => a.index - b.index);
    if (out.failed > 0)
      log(`c. jobs ${jobs}: ${out.failed} point(s) failed numerically (kept in the timing)`);
    return {
      wall_s,
      dir,
      points: recs.map((r) => ({
        amplitude_m: r.axes['drive.amplitude'],
        frequency_Hz: r.axes['drive.frequency'],
        engine: r.summary.engine,
        class: r.summary.class,
        wall_s: r.wall_s,
      })),
    };
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

/**
 * Run the sub-grid of the map of scenario `s` (already on the bench profile) with one and
 * with two workers and extrapolate both to the full map (see the file comment). Returns
 * the measured and extrapolated wall times and each measured point's engine and time.
 */
export async function measureMap(s: Scenario, o: MapTimingOptions): Promise<MapTimingResult> {
  const log = o.log ?? (() => undefined);
  const A = rangeValues(o.amplitude_m[0], o.amplitude_m[1], o.points, 'log');
  const F = rangeValues(o.frequency_Hz[0], o.frequency_Hz[1], o.points, 'log');
  const sub: Scenario = {
    ...s,
    sweep: {
      axes: [
        { key: 'drive.amplitude', values: o.subsetIndices.map((i) => A[i]) },
        { key: 'drive.frequency', values: o.subsetIndices.map((i) => F[i]) },
      ],
    },
  };
  log('c. references alone (free-running and static), to separate the fixed cost of each worker');
  const r0 = process.hrtime.bigint();
  computeReferences(s);
  const R = Number(process.hrtime.bigint() - r0) / 1e9;
  log(`c. references: ${R.toFixed(1)} s`);
  const j1 = await timedSweep(sub, 1, log);
  log(`c. jobs 1: ${j1.wall_s.toFixed(1)} s for ${j1.points.length} points`);
  const j2 = await timedSweep(sub, 2, log);
  log(`c. jobs 2: ${j2.wall_s.toFixed(1)} s for ${j2.points.length} points`);
  const nSub = o.subsetIndices.length ** 2;
  const nFull = o.points * o.points;
  const extrapolate = (w: number) => R + Math.max(0, w - R) * (nFull / nSub);
  const m1 = extrapolate(j1.wall_s);
  const m2 = extrapolate(j2.wall_s);
  return {
    map_points_full: nFull,
    map_points_measured: nSub,
    map_extrapolated: true,
    references_wall_s: R,
    subset_wall_s_jobs1: j1.wall_s,
    subset_wall_s_jobs2: j2.wall_s,
    subset_jobs2_speedup: j1.wall_s / j2.wall_s,
    map_wall_s_jobs1: m1,
    map_wall_s_jobs2: m2,
    jobs2_speedup: m1 / m2,
    points: j1.points,
  };
}
