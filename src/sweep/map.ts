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
import { gridIndices } from './grid';
import type { PointRecord } from './persist';
import { reachableMask, recommendOperatingPoint } from '../analysis/operating-point';

export const AMPLITUDE_KEY = 'drive.amplitude';
export const FREQUENCY_KEY = 'drive.frequency';

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
    const idx = gridIndices(axes, index);
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
 *   analysis.max_hops_per_period (MODEL.md 4, mode-hopping onset), by `firstOnset`;
 * - decoupling_boundary: the smallest amplitude of class 'decoupled', by `firstOnset`;
 * - critical_curve: A = v_c / (2 pi f), the amplitude whose peak speed 2 pi f A equals
 *   the critical speed v_c (MODEL.md 4), v_c the median of the points' critical_speed_m_s
 *   (drawn whatever the other axes).
 * `reachable` and `recommended` are null ('not computed'); withOperatingPoint fills them.
 */
export function buildSweepMap(input: MapInput): SweepMap {
  const total = input.axes.reduce((n, a) => n * a.values.length, 1);
  const byIndex = new Array<PointRecord | undefined>(total);
  for (const r of input.records) if (r.index >= 0 && r.index < total) byIndex[r.index] = r;
  const metrics: Record<string, (number | null)[]> = {};
  for (const [name, get] of Object.entries(MAP_METRICS)) {
    metrics[name] = Array.from(byIndex, (r) => (r && r.summary.status === 'ok' ? finite(get(r)) : null));
  }
  const classes: (RunClass | null)[] = Array.from(byIndex, (r) => (r ? r.summary.class : null));
  const class_reasons: (string | null)[] = Array.from(byIndex, (r) =>
    r ? (r.summary.class_reason ?? r.summary.message) : null,
  );
  const finished = byIndex.filter((r) => r !== undefined).length;
  const failed = classes.filter((c) => c === 'numerical-failure').length;
  const hopLimit = input.scenario?.analysis.max_hops_per_period ?? 0;
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
  };
}

/**
 * The map with `reachable` and `recommended` filled in by the actuator analysis
 * (src/analysis/operating-point.ts: reachableMask, recommendOperatingPoint) for the base
 * scenario. Without a scenario the map is returned as it is ('not computed').
 */
export function withOperatingPoint(map: SweepMap, scenario: Scenario | null): SweepMap {
  if (!scenario) return map;
  const reachable = reachableMask(map, scenario);
  const withMask = { ...map, reachable };
  const choice = recommendOperatingPoint(withMask, scenario);
  return { ...withMask, recommended: choice.recommended, recommended_reason: choice.recommended_reason };
}
