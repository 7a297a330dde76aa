/**
 * The shape of yield.json, written by `dithercav yield` (docs/model.md §7): the yield of
 * N drawn scenarios, percentiles of their gap power and ripple, a histogram and the
 * sensitivity ranking. SI values; null where nothing finished.
 */

/** The files of a yield folder besides the sweep files (points.ndjson, sweep.json, map.json). */
export const YIELD_FILES = {
  summary: 'yield.json',
  csv: 'draws.csv',
  report: 'report.html',
} as const;

export interface YieldSummary {
  name: string;
  draws_planned: number;
  draws_finished: number;
  draws_failed: number;
  seed: number;
  tolerances: { key: string; distribution: 'normal' | 'uniform'; spread: number; nominal: number }[];
  /** fraction of finished draws of class decoupled */
  yield_decoupled: number | null;
  gap_power_floor_W: number | null;
  /** fraction of finished draws with mean gap power >= the floor (null without a floor) */
  yield_above_floor: number | null;
  /** fraction decoupled and above the floor */
  yield_both: number | null;
  gap_power_percentiles_W: Record<string, number | null>;
  ripple_percentiles: Record<string, number | null>;
  histogram: { edges_W: number[]; counts: number[] };
  ranking_method: string;
  /** keys ordered by |rho| with the mean gap power, strongest first; rho null when the key did not vary */
  ranking: { key: string; rho_gap_power: number | null; rho_ripple: number | null }[];
  class_counts: Record<string, number>;
}
