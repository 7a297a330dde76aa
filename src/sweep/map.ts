/**
 * map.json of a sweep (results/map.ts, SweepMap): the metrics and classes of every grid
 * point, flattened row-major like the point indices, and the curves drawn on a stability
 * map over drive amplitude and frequency.
 */
import type { CurvePoint, MapAxis, SweepMap } from '../results/map';
import type { RunClass } from '../results/summary';
import { RESULT_VERSION } from '../results/summary';
import { TOOL_VERSION } from '../version';
import type { Scenario } from '../scenario/schema';
import { axisKeyProblem } from '../scenario/validate';
import { axisIndices, pointCount } from '../results/grid-index';
import type { PointRecord } from '../results/points';
import { reachableMask, recommendOperatingPoint } from '../analysis/operating-point';
import { AMPLITUDE_KEY, FREQUENCY_KEY } from '../scenario/keypath';
import type { RefinePoint, RefineSettings } from './refine';
import { interpolateMetric, planRefinement } from './refine';

/** Metrics of map.json and where each comes from in a point's summary. */
export const MAP_METRICS = {
  enhancement: (r: PointRecord) => r.summary.driven?.enhancement,
  gain_over_static: (r: PointRecord) => r.summary.driven?.gain_over_static,
  incoherent_fraction: (r: PointRecord) => r.summary.driven?.incoherent_fraction,
  ripple_rel: (r: PointRecord) => r.summary.driven?.ripple_rel,
  ripple_full_band_rel: (r: PointRecord) => r.summary.driven?.ripple_full_band_rel,
  hops_per_s: (r: PointRecord) => r.summary.driven?.hops_per_s,
  hops_per_period: (r: PointRecord) => r.summary.driven?.hops_per_period,
  external_mean_W: (r: PointRecord) => r.summary.driven?.external_mean_W,
  laser_output_mean_W: (r: PointRecord) => r.summary.driven?.laser_output_mean_W,
  critical_speed_m_s: (r: PointRecord) => r.summary.drive?.critical_speed_m_s,
  peak_speed_m_s: (r: PointRecord) => r.summary.drive?.peak_speed_m_s,
} as const;

export type MapMetric = keyof typeof MAP_METRICS;

function finite(v: unknown): number | null {
  return typeof v === 'number' && Number.isFinite(v) ? v : null;
}

/**
 * The amplitude where a property first appears along a column of growing amplitude:
 * between the last grid point without it (a0) and the first with it (a1), interpolated
 * in log amplitude, i.e. the geometric mean sqrt(a0 a1) (the arithmetic mean when a0 is
 * 0, where the log is undefined). When the smallest amplitude already has it, that
 * amplitude is returned (the boundary lies at or below the grid); when none has it, null.
 * `column` holds [amplitude_m, has] for the finished points, in any order.
 */
export function firstOnset(column: readonly [number, boolean][]): number | null {
  const sorted = [...column].sort((p, q) => p[0] - q[0]);
  const k = sorted.findIndex((p) => p[1]);
  if (k < 0) return null;
  if (k === 0) return sorted[0][0];
  const a0 = sorted[k - 1][0];
  const a1 = sorted[k][0];
  return a0 > 0 && a1 > 0 ? Math.exp(0.5 * (Math.log(a0) + Math.log(a1))) : 0.5 * (a0 + a1);
}

/** Median of finite values (mean of the middle two for an even count), or null for none. */
export function median(values: readonly number[]): number | null {
  const v = values.filter((x) => Number.isFinite(x)).sort((a, b) => a - b);
  if (v.length === 0) return null;
  const m = v.length >> 1;
  return v.length % 2 === 1 ? v[m] : 0.5 * (v[m - 1] + v[m]);
}

export interface MapInput {
  name: string;
  scenario_sha256: string;
  axes: MapAxis[];
  records: readonly PointRecord[];
  /** the base scenario: its analysis thresholds decide what counts as hopping */
  scenario: Scenario | null;
  /** the refinement the sweep ran with (null or absent: a full grid, nothing inferred) */
  refine?: RefineSettings | null;
  /** the shard whose coarse cells the map covers (refined maps only) */
  shard?: { index: number; count: number } | null;
}

/** What refinement compares of a finished point (src/sweep/refine.ts). */
export function refinePointOf(r: PointRecord): RefinePoint {
  const metrics: Record<string, number | null> = {};
  for (const [name, get] of Object.entries(MAP_METRICS))
    metrics[name] = r.summary.status === 'ok' ? finite(get(r)) : null;
  const mean = r.summary.driven ? finite(r.summary.driven.external_mean_W) : null;
  const se = r.summary.driven ? drivenStderr(r.summary.driven) : null;
  return {
    class: r.summary.class,
    metrics,
    rel_stderr: se !== null && mean !== null && mean > 0 ? se.stderr_W / mean : null,
    stderr: {
      ripple_rel: finite(r.summary.driven?.ripple_rel_stderr),
      hops_per_period: finite(r.summary.driven?.hops_per_period_stderr),
    },
  };
}

/**
 * The standard error of a driven run's mean gap power, W: the summary's own
 * `external_mean_stderr_W` when it states one (docs/model.md §3.6), else the spread of the
 * per-offset means over the rest offsets, s / sqrt(n) (n >= 2; the offsets are stratified
 * random draws, docs/model.md §4, so their means are independent samples); null with a
 * single offset. `from` says which.
 */
export function drivenStderr(d: {
  external_mean_by_offset_W?: { values?: number[] } | null;
}): { stderr_W: number; from: 'summary' | 'offsets' } | null {
  const stated = finite((d as Record<string, unknown>).external_mean_stderr_W);
  if (stated !== null) return { stderr_W: stated, from: 'summary' };
  const v = (d.external_mean_by_offset_W?.values ?? []).filter((x) => Number.isFinite(x));
  if (v.length < 2) return null;
  const m = v.reduce((a, b) => a + b, 0) / v.length;
  const s2 = v.reduce((a, b) => a + (b - m) ** 2, 0) / (v.length - 1);
  return { stderr_W: Math.sqrt(s2 / v.length), from: 'offsets' };
}

/** Curves over amplitude and frequency, or nulls when the grid is not such a map. */
function curves(
  axes: MapAxis[],
  byIndex: (PointRecord | undefined)[],
  hopLimitPerPeriod: number,
): Pick<
  SweepMap,
  'amplitude_key' | 'frequency_key' | 'onset_curve' | 'decoupling_boundary' | 'critical_curve'
> {
  const ia = axes.findIndex((a) => a.key === AMPLITUDE_KEY);
  const jf = axes.findIndex((a) => a.key === FREQUENCY_KEY);
  const none = {
    amplitude_key: null,
    frequency_key: null,
    onset_curve: null,
    decoupling_boundary: null,
    critical_curve: null,
  };
  if (ia < 0 || jf < 0) return none;
  const keys = { amplitude_key: AMPLITUDE_KEY, frequency_key: FREQUENCY_KEY };
  const vc = median(
    byIndex.flatMap((r) => {
      const v = r ? finite(r.summary.drive?.critical_speed_m_s) : null;
      return v === null ? [] : [v];
    }),
  );
  const critical_curve: CurvePoint[] | null =
    vc === null
      ? null
      : axes[jf].values.map((f) => ({ frequency_Hz: f, amplitude_m: vc / (2 * Math.PI * f) }));
  // With a third axis of several values a column over amplitude is not one curve; draw none.
  if (axes.some((a, k) => k !== ia && k !== jf && a.values.length > 1)) {
    return { ...keys, onset_curve: null, decoupling_boundary: null, critical_curve };
  }
  const onset: [number, boolean][][] = axes[jf].values.map(() => []);
  const decoupled: [number, boolean][][] = axes[jf].values.map(() => []);
  byIndex.forEach((r, index) => {
    if (!r || r.summary.status !== 'ok' || !r.summary.driven) return;
    const idx = axisIndices(axes, index);
    const a = axes[ia].values[idx[ia]];
    const hops = finite(r.summary.driven.hops_per_period);
    if (hops !== null) onset[idx[jf]].push([a, hops > hopLimitPerPeriod]);
    decoupled[idx[jf]].push([a, r.summary.driven.class === 'decoupled']);
  });
  const curve = (cols: [number, boolean][][]): CurvePoint[] =>
    axes[jf].values.map((f, j) => ({ frequency_Hz: f, amplitude_m: firstOnset(cols[j]) }));
  return { ...keys, onset_curve: curve(onset), decoupling_boundary: curve(decoupled), critical_curve };
}

/**
 * Build the SweepMap of a sweep from its finished points. Arrays over points have the
 * grid's total length, null where a point is not finished (or, for metrics, failed).
 * Curves (when the axes include drive.amplitude and drive.frequency and no other axis
 * has more than one value), for each frequency:
 * - onset_curve: the smallest amplitude with hops_per_period above
 *   analysis.max_hops_per_period (docs/model.md §4, mode-hopping onset), by `firstOnset`;
 * - decoupling_boundary: the smallest amplitude of class 'decoupled', by `firstOnset`;
 * - critical_curve: A = v_c / (2 pi f), the amplitude whose peak speed 2 pi f A equals
 *   the critical speed v_c (docs/model.md §4), v_c the median of the points' critical_speed_m_s
 *   (drawn whatever the other axes).
 * The curves use computed points only (records), never inferred ones.
 * With `refine`, the points the refinement plan infers (src/sweep/refine.ts) get the class
 * of their cell's corners and metrics interpolated from them, and `point_source` says
 * 'inferred' there.
 * `reachable` and `recommended` are null ('not computed'); withOperatingPoint fills them.
 */
export function buildSweepMap(input: MapInput): SweepMap {
  const total = pointCount(input.axes);
  const byIndex = new Array<PointRecord | undefined>(total);
  for (const r of input.records) if (r.index >= 0 && r.index < total) byIndex[r.index] = r;
  const metrics: Record<string, (number | null)[]> = {};
  for (const [name, get] of Object.entries(MAP_METRICS)) {
    metrics[name] = Array.from(byIndex, (r) => (r && r.summary.status === 'ok' ? finite(get(r)) : null));
  }
  // A point whose run threw (status 'error') has no class: the map says not computed, and why.
  const classes: (RunClass | null)[] = Array.from(byIndex, (r) =>
    r && r.summary.class !== 'error' ? r.summary.class : null,
  );
  const class_reasons: (string | null)[] = Array.from(byIndex, (r) =>
    r
      ? r.summary.status === 'error'
        ? `error: ${r.summary.message ?? 'unknown'}`
        : (r.summary.class_reason ?? r.summary.message)
      : null,
  );
  const finished = byIndex.filter((r) => r !== undefined).length;
  const failed = byIndex.filter((r) => r !== undefined && r.summary.status !== 'ok').length;
  const hopLimit = input.scenario?.analysis.max_hops_per_period ?? 0;
  const point_source: ('computed' | 'inferred' | null)[] = Array.from(byIndex, (r) =>
    r ? 'computed' : null,
  );
  if (input.refine) {
    const known = new Map<number, RefinePoint>();
    for (const r of input.records) if (r.index >= 0 && r.index < total) known.set(r.index, refinePointOf(r));
    const inferred = planRefinement(input.axes, known, input.refine, input.shard ?? null).inferred;
    for (const [i, inf] of inferred) {
      if (byIndex[i]) continue;
      point_source[i] = 'inferred';
      const cornerClass = byIndex[inf.corners[0]]!.summary.class;
      classes[i] = cornerClass === 'error' ? null : cornerClass;
      class_reasons[i] =
        `inferred, not run: its cell's computed corners (points ${inf.corners.join(', ')}) agree in class and metrics`;
      for (const name of Object.keys(MAP_METRICS)) {
        metrics[name][i] = interpolateMetric(
          inf.corners.map((c) => metrics[name][c]),
          inf.weights,
        );
      }
    }
  }
  const inferredCount = point_source.filter((p) => p === 'inferred').length;
  return {
    version: RESULT_VERSION,
    tool_version: TOOL_VERSION,
    name: input.name,
    scenario_sha256: input.scenario_sha256,
    axes: input.axes,
    total_points: total,
    finished_points: finished,
    failed_points: failed,
    metrics,
    classes,
    class_reasons,
    ...curves(input.axes, byIndex, hopLimit),
    reachable: null,
    recommended: null,
    recommended_reason: 'not computed',
    point_source,
    inferred_points: inferredCount,
    refinement: input.refine
      ? {
          coarse_step: input.refine.coarse_step,
          margin: input.refine.margin,
          metrics: input.refine.metrics.map((m) => m.name),
        }
      : null,
  };
}

/**
 * The map as far as computed points go: classes, reasons and metrics of inferred points
 * set to null. The operating point and any other decision is taken on this.
 */
export function computedOnly(map: SweepMap): SweepMap {
  if (!Array.isArray(map.point_source) || !map.point_source.includes('inferred')) return map;
  const keep = (i: number) => map.point_source![i] !== 'inferred';
  const metrics: Record<string, (number | null)[]> = {};
  for (const [k, v] of Object.entries(map.metrics)) metrics[k] = v.map((x, i) => (keep(i) ? x : null));
  return {
    ...map,
    metrics,
    classes: map.classes.map((c, i) => (keep(i) ? c : null)),
    class_reasons: map.class_reasons.map((c, i) => (keep(i) ? c : null)),
  };
}

/**
 * The map with `reachable` and `recommended` filled in by the actuator analysis
 * (src/analysis/operating-point.ts: reachableMask, recommendOperatingPoint) for the base
 * scenario. Without a scenario the map is returned as it is ('not computed').
 */
export function withOperatingPoint(map: SweepMap, scenario: Scenario | null): SweepMap {
  // a map over axes that are not scenario keys (a yield's draw numbers) has no drive plane
  // to recommend from, and its points cannot be rebuilt from their axis values
  if (!scenario || map.axes.some((a, k) => axisKeyProblem(a.key, k) !== null)) return map;
  const reachable = reachableMask(map, scenario);
  const withMask = { ...map, reachable };
  // inferred points never decide the operating point: only computed ones count as decoupled
  const choice = recommendOperatingPoint(computedOnly(withMask), scenario);
  return { ...withMask, recommended: choice.recommended, recommended_reason: choice.recommended_reason };
}

/**
 * The inferred points the operating point still needs computed. The recommended point and
 * its margin (its neighbours along amplitude and frequency, docs/model.md §5) are decided on
 * computed points only; on a refined map the neighbours of a computed point inside a uniform
 * region are mostly inferred. So the sweep asks: which point would be recommended if the
 * inferred classes held (the map as built, inferred points included)? When that point or a
 * neighbour of it is inferred, those are returned to be run; once they are all computed the
 * computed-only recommendation is that same point (the optimistic candidates include every
 * computed-only one and the cheapest of them is verified). Empty when nothing is missing.
 */
export function operatingPointNeeds(
  map: SweepMap,
  scenario: Scenario,
  reachable: boolean[] | null = reachableMask(map, scenario),
): number[] {
  if (!Array.isArray(map.point_source) || !map.point_source.includes('inferred')) return [];
  const ai = map.axes.findIndex((a) => a.key === AMPLITUDE_KEY);
  const fi = map.axes.findIndex((a) => a.key === FREQUENCY_KEY);
  if (ai < 0 || fi < 0) return [];
  const optimistic = recommendOperatingPoint({ ...map, reachable }, scenario);
  if (!optimistic.recommended) return [];
  const i = optimistic.recommended.index;
  const idx = axisIndices(map.axes, i);
  const st: number[] = [];
  let acc = 1;
  for (let k = map.axes.length - 1; k >= 0; k--) {
    st[k] = acc;
    acc *= map.axes[k].values.length;
  }
  const around = [i];
  for (const k of [ai, fi]) {
    if (idx[k] > 0) around.push(i - st[k]);
    if (idx[k] < map.axes[k].values.length - 1) around.push(i + st[k]);
  }
  return around.filter((j) => map.point_source![j] === 'inferred');
}
