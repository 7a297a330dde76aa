/**
 * The refined map of the benchmark, measured whole (never extrapolated): the demo sweep
 * (scenarios/demo-sweep.yaml, its own statistics settings) on a 32 x 32 grid, 10 nm to 3 um
 * by 1 kHz to 1 MHz, through the real sweep machinery with refinement (runSweep, its piscina
 * pool, point files in a temporary folder), then checked at validation points spread over
 * the map against runs of those points on their own.
 *
 * Validation: at each validation point the map's mean gap power (computed, or inferred from
 * its cell's corners) is compared with a direct run of that point (directScenario: other
 * rest offsets and noise; the stepping engine `auto` picks, the round-trip engine (the
 * reference, docs/model.md §3.5) when `auto` picks a path that does not step the motion), in units of the combined standard error
 *   z = |P_map - P_direct| / sqrt(se_map^2 + se_direct^2).
 * The standard error is the summary's `driven.external_mean_stderr_W` where present, else the
 * spread of the per-offset means over the rest offsets, s / sqrt(n) (drivenStderr); for an
 * inferred point, the corners' errors with the interpolation weights, sqrt(sum w^2 se^2).
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { loadScenarioFile } from '../scenario/load';
import type { Scenario } from '../scenario/schema';
import { withOverrides } from '../scenario/validate';
import { runSweep } from '../sweep/run-sweep';
import { drivenStderr, refinePointOf } from '../sweep/map';
import { planRefinement } from '../sweep/refine';
import type { RefinePoint } from '../sweep/refine';
import { gridPoint } from '../sweep/grid';
import type { PointRecord } from '../sweep/persist';
import { readPoints } from '../sweep/persist';
import type { SweepMap } from '../results/map';
import type { RunArtifacts } from '../results/artifacts';
import type { Executor } from '../sweep/pool';
import { createExecutor } from '../sweep/pool';

/** scenarios/demo-sweep.yaml of the package. */
export const DEMO_SWEEP_FILE = path.resolve(__dirname, '..', '..', 'scenarios', 'demo-sweep.yaml');

export interface RefinedMapSettings {
  points: number;
  amplitude_m: [number, number];
  frequency_Hz: [number, number];
  jobs: number;
  /** grid indices (per axis) of the validation points: their product is the validation set */
  validationIndices: number[];
}

/** The demo sweep with its axes set to `points` x `points` log-spaced values over the given ranges. */
export function demoSweepMap(
  o: Pick<RefinedMapSettings, 'points' | 'amplitude_m' | 'frequency_Hz'>,
): Scenario {
  const base = loadScenarioFile(DEMO_SWEEP_FILE).scenario;
  return {
    ...base,
    sweep: {
      axes: [
        {
          key: 'drive.amplitude',
          from: o.amplitude_m[0],
          to: o.amplitude_m[1],
          points: o.points,
          scale: 'log',
        },
        {
          key: 'drive.frequency',
          from: o.frequency_Hz[0],
          to: o.frequency_Hz[1],
          points: o.points,
          scale: 'log',
        },
      ],
    },
  };
}

/**
 * Per-axis indices spread evenly over 0..n-1, `k` of them, away from the ends by half a
 * spacing (so they fall between the coarse points as often as on them).
 */
export function spreadIndices(n: number, k: number): number[] {
  const out = new Set<number>();
  for (let j = 0; j < k; j++) out.add(Math.min(n - 1, Math.round(((j + 0.5) * n) / k - 0.5)));
  return [...out];
}

/** z = |a - b| / sqrt(sa^2 + sb^2); null when either error is unknown or both are 0. */
export function combinedZ(a: number, sa: number | null, b: number, sb: number | null): number | null {
  if (sa === null || sb === null) return null;
  const s = Math.hypot(sa, sb);
  return s > 0 ? Math.abs(a - b) / s : null;
}

export interface ValidationPoint {
  index: number;
  amplitude_m: number;
  frequency_Hz: number;
  source: 'computed' | 'inferred' | null;
  map_class: string | null;
  direct_class: string;
  map_external_mean_W: number | null;
  map_stderr_W: number | null;
  direct_external_mean_W: number | null;
  direct_stderr_W: number | null;
  direct_engine: string | null;
  /** where the errors came from: the summaries' stated error or the spread over offsets */
  stderr_from: string;
  z: number | null;
  /** the direct run's own wall time (the summary's timing; a rerun on the round-trip engine counts alone) */
  direct_wall_s: number;
}

export interface RefinedMapResult {
  map32_wall_s_jobs2: number;
  map32_points_total: number;
  map32_points_computed: number;
  map32_points_inferred: number;
  map32_classes: Record<string, number>;
  map32_validation_max_stderr: number | null;
  /** the largest z among the validation points the map inferred (null when none was inferred) */
  map32_validation_max_stderr_inferred: number | null;
  validation: ValidationPoint[];
  validation_wall_s: number;
  /** sum of the computed points' own run times: the work the two workers shared */
  map32_point_seconds: number;
}

/** The map's mean gap power at a point and its standard error (inferred: from the corners). */
function mapAnswer(
  map: SweepMap,
  records: Map<number, PointRecord>,
  index: number,
  inference: { corners: number[]; weights: number[] } | undefined,
): { value: number | null; se: number | null; from: string } {
  const value = map.metrics.external_mean_W?.[index] ?? null;
  const seOf = (r: PointRecord | undefined) => (r?.summary.driven ? drivenStderr(r.summary.driven) : null);
  if (map.point_source?.[index] === 'computed') {
    const se = seOf(records.get(index));
    return { value, se: se?.stderr_W ?? null, from: se?.from ?? 'none' };
  }
  if (map.point_source?.[index] === 'inferred' && inference) {
    let v = 0;
    let from = '';
    for (let k = 0; k < inference.corners.length; k++) {
      const se = seOf(records.get(inference.corners[k]));
      if (!se) return { value, se: null, from: 'none' };
      v += (inference.weights[k] * se.stderr_W) ** 2;
      from = se.from;
    }
    return { value, se: Math.sqrt(v), from };
  }
  return { value, se: null, from: 'none' };
}

/**
 * A direct run of one point, independent of the map's: another noise seed (seed + 1) and
 * the rest offsets moved by half their spacing (lambda / (4 n) for n offsets over lambda / 2),
 * so it samples the positions between the map's; the stepping engine of `auto`, the
 * round-trip engine where `auto` picks a path that does not step the motion.
 */
export function directScenario(point: Scenario): Scenario {
  const n = point.simulation.drive_offsets;
  return {
    ...point,
    drive: { ...point.drive, offset: point.drive.offset + point.laser.wavelength / (4 * n) },
    simulation: { ...point.simulation, seed: point.simulation.seed + 1 },
  };
}

/** Engines that step the motion itself (the rest build the drive's statistics from references or curves). */
const STEPPING_ENGINES = new Set(['roundtrip', 'exact', 'fast']);

async function directRun(exec: Executor, point: Scenario): Promise<RunArtifacts> {
  const s = directScenario(point);
  const first = await exec.run({ type: 'run', scenario: s });
  if (STEPPING_ENGINES.has(first.summary.engine ?? '') || first.summary.status !== 'ok') return first;
  // `auto` took a path that does not step the motion: step it on the reference engine
  return exec.run({ type: 'run', scenario: { ...s, simulation: { ...s.simulation, engine: 'roundtrip' } } });
}

/**
 * Run the refined map with `jobs` workers, then each validation point directly (on as many
 * workers; each direct run computes its own references), and compare (see the file comment).
 */
export async function measureRefinedMap(
  s: Scenario,
  o: Pick<RefinedMapSettings, 'jobs' | 'validationIndices'>,
  log: (line: string) => void = () => undefined,
): Promise<RefinedMapResult> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'dithercav-bench-map32-'));
  try {
    const t0 = process.hrtime.bigint();
    const out = await runSweep(s, {
      outDir: dir,
      jobs: o.jobs,
      onProgress: (done, total, rec, bound) => {
        if (rec)
          log(
            `map: ${done}/${total} points planned so far (at most ${bound?.upper ?? total}); last ${rec.summary.engine ?? '-'} engine, ${rec.wall_s.toFixed(1)} s`,
          );
      },
    });
    const wall = Number(process.hrtime.bigint() - t0) / 1e9;
    const map = out.map;
    const recs = readPoints(path.join(dir, 'points.ndjson')).records;
    const byIndex = new Map(recs.map((r) => [r.index, r]));
    const known = new Map<number, RefinePoint>();
    for (const r of recs) known.set(r.index, refinePointOf(r));
    const plan = out.header.refine ? planRefinement(map.axes, known, out.header.refine) : null;
    log(
      `map: ${wall.toFixed(0)} s, ${recs.length} computed, ${map.inferred_points ?? 0} inferred of ${map.total_points}`,
    );

    const v0 = process.hrtime.bigint();
    const validation: ValidationPoint[] = [];
    const base = { ...s };
    delete base.sweep;
    const indices = o.validationIndices.flatMap((ia) =>
      o.validationIndices.map((jf) => ia * map.axes[1].values.length + jf),
    );
    // the direct runs share the workers of the map, lowest frequency (longest) first
    indices.sort(
      (a, b) => gridPoint(map, a).axes['drive.frequency'] - gridPoint(map, b).axes['drive.frequency'],
    );
    const exec = createExecutor(o.jobs);
    const validate = async (index: number): Promise<void> => {
      {
        const pt = gridPoint(map, index);
        const t = process.hrtime.bigint();
        const art = await directRun(exec, withOverrides(base, pt.axes));
        const d = art.summary.driven;
        const dse = d ? drivenStderr(d) : null;
        const ans = mapAnswer(map, byIndex, index, plan?.inferred.get(index));
        const direct = d ? d.external_mean_W : null;
        const z =
          ans.value !== null && direct !== null
            ? combinedZ(ans.value, ans.se, direct, dse?.stderr_W ?? null)
            : null;
        const vp: ValidationPoint = {
          index,
          amplitude_m: pt.axes['drive.amplitude'],
          frequency_Hz: pt.axes['drive.frequency'],
          source: map.point_source?.[index] ?? null,
          map_class: map.classes[index],
          direct_class: art.summary.driven?.class ?? 'numerical-failure',
          map_external_mean_W: ans.value,
          map_stderr_W: ans.se,
          direct_external_mean_W: direct,
          direct_stderr_W: dse?.stderr_W ?? null,
          direct_engine: art.summary.engine,
          stderr_from: `map: ${ans.from}, direct: ${dse?.from ?? 'none'}`,
          z,
          direct_wall_s: art.summary.timing?.wall_s ?? Number(process.hrtime.bigint() - t) / 1e9,
        };
        validation.push(vp);
        log(
          `validation ${validation.length}/${indices.length}: point ${index} (${vp.source}), z = ${z === null ? '-' : z.toFixed(2)} (${vp.direct_engine} engine, ${vp.direct_wall_s.toFixed(0)} s)`,
        );
      }
    };
    try {
      await Promise.all(indices.map(validate));
    } finally {
      await exec.destroy();
    }
    validation.sort((a, b) => a.index - b.index);
    const zs = validation.map((v) => v.z).filter((z): z is number => z !== null);
    const zi = validation
      .filter((v) => v.source === 'inferred')
      .map((v) => v.z)
      .filter((z): z is number => z !== null);
    const classes: Record<string, number> = {};
    map.classes.forEach((c, i) => {
      if (c === null) return;
      const k = map.point_source?.[i] === 'inferred' ? `${c} (inferred)` : c;
      classes[k] = (classes[k] ?? 0) + 1;
    });
    return {
      map32_wall_s_jobs2: wall,
      map32_points_total: map.total_points,
      map32_points_computed: recs.length,
      map32_points_inferred: map.inferred_points ?? 0,
      map32_classes: classes,
      map32_validation_max_stderr: zs.length > 0 ? Math.max(...zs) : null,
      map32_validation_max_stderr_inferred: zi.length > 0 ? Math.max(...zi) : null,
      validation,
      validation_wall_s: Number(process.hrtime.bigint() - v0) / 1e9,
      map32_point_seconds: recs.reduce((a, r) => a + r.wall_s, 0),
    };
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}
