/**
 * The shape of the result files (CONTRACT.md): `summary.json` of one run and the
 * per-point lines of a sweep. Keys are snake_case with the unit last; values are SI.
 * A value the engine could not compute is null, never a made-up number.
 */

import type { ActuatorSheet } from '../physics/actuator';

export { RESULT_VERSION } from './files';

export type RunClass = 'decoupled' | 'modulated' | 'hopping' | 'no-gain' | 'no-lasing' | 'numerical-failure';

export const RUN_CLASSES: readonly RunClass[] = [
  'decoupled',
  'modulated',
  'hopping',
  'no-gain',
  'no-lasing',
  'numerical-failure',
];

export interface MinMeanMax {
  mean: number;
  min: number;
  max: number;
}

export interface ModeInfo {
  /** mode number relative to the cold-cavity mode nearest the gain peak */
  index: number;
  frequency_Hz: number;
  /** detuning from the gain peak */
  detuning_Hz: number;
  /** gain line shape at the mode, 1 at the peak (f_m) */
  gain_rel: number;
}

export interface BeamInfo {
  laser_stable: boolean;
  laser_g1g2: number;
  external_stable: boolean;
  external_g2g3: number;
  radius_at_M1_m: number | null;
  radius_at_M2_m: number | null;
  radius_at_M3_m: number | null;
  /** waist in the gap (between M2 and M3) of the beam the laser sends out, if there is one */
  gap_waist_m: number | null;
  gap_waist_position_m: number | null;
  /** peak intensity at the gap waist per watt of one-way circulating power, W/m^2 per W */
  peak_intensity_per_W_m2: number | null;
  notes: string[];
}

/** Misalignment of the return mirror and its effect on the coupling (docs/model.md §2.5). */
export interface AlignmentInfo {
  tilt_rad: number;
  decenter_m: number;
  tilt_per_stroke_rad_m: number;
  /** eta_fb with M3 aligned (geometry or the scenario's number) */
  aligned_feedback_efficiency: number;
  /** eta_fb(misaligned) / eta_fb(aligned); derived.feedback_efficiency includes it */
  coupling_factor: number;
  /** tilt of M3 alone that halves the coupling, rad; null when not modelled */
  half_coupling_tilt_rad: number | null;
  /** the gap eigenmode's axis at M2 (stable gap), m and rad; null otherwise */
  axis_offset_at_M2_m: number | null;
  axis_tilt_rad: number | null;
  /** 'eigenmode' (stable gap), 'return' (one round trip, no eigenmode) or 'none' (not modelled) */
  basis: 'eigenmode' | 'return' | 'none';
}

export interface Derived {
  fsr_laser_Hz: number;
  fsr_external_Hz: number;
  roundtrip_laser_s: number;
  roundtrip_external_s: number;
  finesse_external: number;
  linewidth_external_Hz: number;
  photon_lifetime_s: number;
  photon_decay_rate_per_s: number;
  feedback_efficiency: number;
  roundtrip_efficiency: number;
  feedback_efficiency_source: 'geometry' | 'scenario';
  roundtrip_efficiency_source: 'geometry' | 'scenario';
  /** how eta_fb was obtained, in words ("eigenmode overlap", "unstable gap: single-bounce overlap", "given", ...) */
  feedback_efficiency_basis?: string;
  /** how eta_rt was obtained, in words */
  roundtrip_efficiency_basis?: string;
  incoherent_enhancement: number;
  laser_class: 'A' | 'B';
  modes: ModeInfo[];
  beams: BeamInfo;
  /** absent in summaries written before misalignment was modelled */
  alignment?: AlignmentInfo;
  free_running_estimate_W: number;
}

export interface Warning {
  code: string;
  message: string;
}

export interface StaticCurve {
  /** mirror positions relative to the rest position, m, over half a wavelength */
  position_m: number[];
  external_up_W: number[];
  external_down_W: number[];
  laser_output_up_W: number[];
  laser_output_down_W: number[];
}

export interface DrivenSummary {
  external_mean_W: number;
  external_std_W: number;
  external_min_W: number;
  external_max_W: number;
  ripple_rel: number;
  ripple_full_band_rel: number;
  laser_output_mean_W: number;
  laser_output_std_W: number;
  laser_output_min_W: number;
  laser_output_max_W: number;
  laser_intracavity_mean_W: number;
  enhancement: number;
  gain_over_static: number | null;
  gain_over_worst_static: number | null;
  /**
   * mean gap power over what the static curve predicts at the same rest offsets and
   * strokes (the still-mirror curve sampled along x(t)): free of the sampling of a few
   * rest offsets; the class uses the smaller of this and gain_over_static
   */
  gain_over_quasi_static: number | null;
  /**
   * mean gap power over the phase-averaged level derived.incoherent_enhancement x
   * free_running.intracavity_W (dimensionless; about 1 for a fully decoupled laser); null
   * without an external cavity or a lasing free-running laser
   */
  incoherent_fraction: number | null;
  hops_per_s: number;
  hops_per_period: number;
  class: RunClass;
  class_reason: string;
  offsets: number;
  offset_positions_m: number[];
  external_mean_by_offset_W: { min: number; max: number; values: number[] };
  mode_occupation: { index: number; fraction: number }[];
  hop_phase_histogram: number[];
  analysed_time_s: number;
  settle_time_s: number;
  /**
   * Standard errors of the means above over the rest offsets (docs/model.md §4.2): the
   * per-offset means are the samples (offsets are independent strata; the periods within
   * one offset are correlated and enter through that offset's mean). Null with fewer than
   * two offsets. Ratios take their reference (free-running, static, phase-averaged level)
   * as exact.
   */
  external_mean_stderr_W: number | null;
  laser_output_mean_stderr_W: number | null;
  laser_intracavity_mean_stderr_W: number | null;
  ripple_rel_stderr: number | null;
  ripple_full_band_rel_stderr: number | null;
  enhancement_stderr: number | null;
  gain_over_static_stderr: number | null;
  incoherent_fraction_stderr: number | null;
  hops_per_s_stderr: number | null;
  hops_per_period_stderr: number | null;
  /** drive periods analysed at each offset (null for a still mirror) */
  periods_used: number | null;
  /** rest offsets the means are over (the first batch, doubled until the target or the budget) */
  offsets_used: number;
  /** what ended the adding of offsets: the relative standard error met analysis.target_error, or the step budget */
  stopped_by: 'target' | 'budget';
}

/**
 * Power budget of the driven run (docs/model.md §6): means over the analysis window of all
 * rest offsets, W, each with its standard error (`<name>_stderr_W`, batch means).
 * The sinks are through_rear_mirror, mirror_losses (M1, M2, M3), internal_loss,
 * unmatched (laser light outside the gap mode), returned_lost (light back through M2
 * that misses the laser mode), through_return_mirror, gap_element_loss and gap_clipping;
 * laser_output (net through M2) and gap_one_way are flows, not sinks.
 * closure_rel = (supply - sum of sinks) / supply (signed): the interface mismatch at M2
 * (docs/model.md §3.3) plus the change of stored energy over the window.
 */
export interface PowerBudget {
  through_return_mirror_W: number;
  through_return_mirror_stderr_W: number;
  gap_element_loss_W: number;
  gap_element_loss_stderr_W: number;
  mirror_losses_W: number;
  mirror_losses_stderr_W: number;
  through_rear_mirror_W: number;
  through_rear_mirror_stderr_W: number;
  laser_output_W: number;
  laser_output_stderr_W: number;
  supply_W: number;
  supply_stderr_W: number;
  internal_loss_W: number;
  internal_loss_stderr_W: number;
  unmatched_W: number;
  unmatched_stderr_W: number;
  returned_lost_W: number;
  returned_lost_stderr_W: number;
  gap_clipping_W: number;
  gap_clipping_stderr_W: number;
  gap_one_way_W: number;
  gap_one_way_stderr_W: number;
  sinks_W: number;
  closure_rel: number;
  /** batch means the standard errors come from (lanes x batches) */
  batches: number;
}

/**
 * Peak intensities (docs/model.md §6): the full-band peak one-way power times the
 * standing-wave factor 4 (field antinodes where forward and returning waves add), over
 * the TEM00 area pi w^2 / 2, W/m^2; null where the beam size is not known.
 */
export interface PeakIntensity {
  gap_waist_W_m2: number | null;
  return_mirror_W_m2: number | null;
  output_coupler_W_m2: number | null;
  /** the one-way powers used: full-band peak gap power and peak laser intracavity power, W */
  peak_gap_power_W: number;
  peak_intracavity_W: number;
  standing_wave_factor: number;
}

export interface DriveSummary {
  waveform: string;
  amplitude_m: number;
  frequency_Hz: number;
  stroke_m: number;
  peak_speed_m_s: number;
  peak_acceleration_m_s2: number;
  peak_doppler_Hz: number;
  critical_speed_m_s: number | null;
  critical_speed_landau_zener_m_s: number | null;
  fraction_below_critical: number | null;
  locking_half_width_Hz: number | null;
}

export interface RunSummary {
  version: number;
  tool_version: string;
  name: string;
  scenario: unknown;
  scenario_sha256: string;
  seed: number;
  engine: string;
  engine_reason: string;
  status: 'ok' | 'numerical-failure';
  message: string | null;
  derived: Derived;
  free_running: { intracavity_W: number; output_W: number; lasing_modes: number[]; mode_powers_W: number[] };
  static: {
    external_W: MinMeanMax;
    laser_output_W: MinMeanMax;
    intracavity_W: MinMeanMax;
    hysteresis_rel: number;
    positions: number;
    converged: boolean;
    /**
     * mean gap power of the saved curve's positions, W; external_W.mean differs from it when
     * the mean is the refinement levels' extrapolated limit (docs/model.md §4.1); absent in
     * summaries before 0.3
     */
    external_mean_curve_W?: number;
    /** error of the extrapolated static mean, W (null when the mean is the curve's own) */
    external_mean_error_W?: number | null;
  } | null;
  driven: DrivenSummary | null;
  drive: DriveSummary;
  power_balance: {
    relative_error: number;
    laser_relative_error: number;
    external_relative_error: number;
    interface_mismatch_rel: number;
  } | null;
  timing: {
    wall_s: number;
    steps: number;
    engine_steps_per_s: number;
    mode_steps_per_s: number;
    /** the driven run's time step, s (null without a driven run) */
    dt_s: number | null;
    /** rest offsets stepped (every batch) */
    lanes: number;
    /** lanes x simulated seconds per wall second of the driven run: the engine's throughput */
    simulated_lane_s_per_s: number;
  };
  warnings: Warning[];
  /** the driven run's power budget; null without a time-stepped driven run; absent in older summaries */
  budget?: PowerBudget | null;
  /** peak intensities at the gap waist and on the mirrors; absent in older summaries */
  peak_intensity?: PeakIntensity | null;
  /**
   * The drive and actuator requirement sheet of the scenario (actuatorSheet, docs/model.md
   * section 5): voltage, current, resonance margin and every limit checked. Null when the
   * scenario has no actuator section; absent in summaries written before it existed.
   */
  actuator?: ActuatorSheet | null;
}
