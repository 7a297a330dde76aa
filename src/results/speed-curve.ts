/**
 * The speed curve (docs/model.md §3.6): per laser and cavity, the statistics of a return
 * mirror moving at constant speed over many half wavelengths, in both directions of
 * motion, on a grid of speeds. Written beside summary.json as `speed_curve.json`
 * (SPEED_CURVE_FILE) so that `report` and `--resume` reuse it. All values SI.
 */
import { RUN_FILES } from './files';

/** Statistics of the mirror at one constant speed in one direction. */
export interface SpeedPoint {
  /** speed magnitude, m/s */
  speed_m_s: number;
  /** mean circulating gap power over lanes and time, W */
  external_mean_W: number;
  /** standard error of that mean: spread of the per-lane means / sqrt(lanes), W */
  external_stderr_W: number;
  /** full-band standard deviation of the gap power (pooled over lanes), W */
  external_std_W: number;
  external_min_W: number;
  external_max_W: number;
  /**
   * standard deviation of the gap power a detector of the scenario's band sees at this
   * speed (means over blocks of 1 / bandwidth, or over shorter blocks scaled by
   * sqrt(block x bandwidth) when the window is shorter; an estimate), W
   */
  band_std_W: number;
  laser_output_mean_W: number;
  laser_output_std_W: number;
  intracavity_mean_W: number;
  /** mean returned power at M2, sum |b_m|^2, W (for the returned-to-laser field ratio) */
  returned_mean_W: number;
  /** mean intracavity power of each mode slot, W */
  mode_powers_W: number[];
  /** fraction of time each mode slot was dominant */
  mode_occupation: number[];
  /** mode hops per second (dwell rule of the analysis section), mean over lanes */
  hops_per_s: number;
  /** hops counted over all lanes (its square root is the counting error) */
  hops_counted: number;
  /** time analysed per lane, s */
  analysed_s: number;
  lanes: number;
  /** which engine stepped it and its time step, s */
  engine: string;
  dt_s: number;
}

export interface SpeedCurve {
  /** key of the laser, cavity, seed and engine request this curve belongs to */
  key: string;
  /** memory time the windows and the criterion use, s */
  memory_time_s: number;
  detection_bandwidth_Hz: number;
  /** mirror moving towards larger gap length (x increasing), sorted by speed */
  forward: SpeedPoint[];
  /** mirror moving back, sorted by speed */
  backward: SpeedPoint[];
  /** lane-steps spent computing it */
  lane_steps: number;
  wall_s: number;
}

/** File name of the speed curve inside a run folder. */
export const SPEED_CURVE_FILE = RUN_FILES.speedCurve;
