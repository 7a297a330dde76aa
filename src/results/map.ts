/**
 * `map.json` of a sweep: the grid of metrics and classes, with the curves drawn on
 * stability maps. Arrays over points are flattened row-major over the axes (the last
 * axis varies fastest). Values are SI; a point not finished or failed holds null.
 */
import type { RunClass } from './summary';

export interface MapAxis {
  key: string;
  values: number[];
  scale: 'linear' | 'log';
}

/** One point of a boundary curve: for a frequency, the amplitude found (null where none). */
export interface CurvePoint {
  frequency_Hz: number;
  amplitude_m: number | null;
}

export interface OperatingPoint {
  index: number;
  axes: Record<string, number>;
  amplitude_m: number;
  frequency_Hz: number;
  /** peak drive voltage, V (null without an actuator) */
  voltage_V: number | null;
  /** peak reactive current, A (null without an actuator capacitance) */
  current_A: number | null;
  /**
   * dimensionless fraction of the amplifier's tightest rating used there (peak voltage over
   * max_voltage, peak current over max_current); null when the point was ranked by voltage
   * or stroke alone
   */
  utilisation: number | null;
  /** the scenario key of that tightest rating, e.g. 'actuator.max_voltage' (null with utilisation) */
  limiting_key: string | null;
  stroke_m: number;
  reason: string;
  /**
   * true when the point and its grid neighbours in amplitude and frequency are all
   * decoupled; false for the fallback taken when no decoupled point has such neighbours
   * ("no margin on this grid"). Absent in maps written before 0.2 (read as true).
   */
  margin?: boolean;
}

export interface SweepMap {
  version: number;
  /** the dithercav version that wrote the map (absent in maps written before 0.2) */
  tool_version?: string;
  name: string;
  scenario_sha256: string;
  axes: MapAxis[];
  total_points: number;
  finished_points: number;
  failed_points: number;
  /** metric name -> value per point (e.g. enhancement, ripple_rel, hops_per_s, gain_over_static) */
  metrics: Record<string, (number | null)[]>;
  classes: (RunClass | null)[];
  class_reasons: (string | null)[];
  /** present when the axes include drive.amplitude and drive.frequency */
  amplitude_key: string | null;
  frequency_key: string | null;
  /** for each frequency, the smallest amplitude at which hops appear */
  onset_curve: CurvePoint[] | null;
  /** for each frequency, the smallest amplitude that is decoupled */
  decoupling_boundary: CurvePoint[] | null;
  /** the analytic rule A = v_c / (2 pi f) */
  critical_curve: CurvePoint[] | null;
  /** per point: whether the scenario's actuator can deliver it (null without an actuator) */
  reachable: boolean[] | null;
  recommended: OperatingPoint | null;
  recommended_reason: string;
  /**
   * per point: 'computed' (run), 'inferred' (not run: inside a cell of a refined map whose
   * computed corners agree; class and metrics interpolated from them) or null (not
   * finished). A CSV or plot must carry this flag with every value. Absent in maps of
   * versions before refinement (read every finished point as computed).
   */
  point_source?: PointSource[];
  /** how many points are inferred (0 for a full grid) */
  inferred_points?: number;
  /** the refinement settings, or null when every point was to be computed (--full) */
  refinement?: MapRefinement | null;
}

export type PointSource = 'computed' | 'inferred' | null;

/** How a refined map was planned (src/sweep/refine.ts). */
export interface MapRefinement {
  /** grid steps between coarse points along each axis */
  coarse_step: number;
  /** relative difference in a compared metric that splits a cell */
  margin: number;
  /** the compared metrics besides the class */
  metrics: string[];
}

/** True when point i of the map was run (not inferred, not missing). */
export function isComputedPoint(map: Pick<SweepMap, 'point_source' | 'classes'>, i: number): boolean {
  if (Array.isArray(map.point_source)) return map.point_source[i] === 'computed';
  return map.classes[i] !== null && map.classes[i] !== undefined;
}
