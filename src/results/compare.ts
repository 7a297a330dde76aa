/**
 * `compare.json` of a compare folder (`dithercav compare`): sine, triangle and two-tone
 * drives at equal peak voltage, each with its plan and what the run measured. Values SI.
 */
import type { RunClass } from './summary';

/** The waveforms compared, in table order. */
export const COMPARED_WAVEFORMS = ['sine', 'triangle', 'two-tone'] as const;
export type ComparedWaveform = (typeof COMPARED_WAVEFORMS)[number];

/** One sinusoidal part of a waveform's voltage and the motion it produces. */
export interface CompareComponent {
  /** 'tone 1', 'tone 2' or 'harmonic n' */
  label: string;
  frequency_Hz: number;
  /** voltage amplitude of this part, V (null on the equal-stroke basis) */
  voltage_V: number | null;
  /** |H(f)| of the mechanical response (1 without an actuator or a resonance) */
  response_magnitude: number;
  response_phase_rad: number;
  /** amplitude of this part of the mirror motion, m: k_v |H| V */
  amplitude_m: number;
}

/** The drive one waveform gets, before running it. */
export interface WaveformPlan {
  waveform: ComparedWaveform;
  /** drive.amplitude given to the engine, m */
  amplitude_m: number;
  /** two-tone only, m and Hz */
  second_amplitude_m: number | null;
  second_frequency_Hz: number | null;
  /** parts of the voltage: one for the sine, two tones, or the triangle's odd harmonics to 9 */
  components: CompareComponent[];
  /** peak reactive current of this voltage waveform, A (C dV/dt: 2 pi f C V for a sine,
   *  the sum over tones for two, 4 f C V for a triangle voltage); null without a capacitance
   *  or without an actuator */
  current_peak_A: number | null;
  /** the actuator's max_current is exceeded by current_peak_A (null when not checkable) */
  current_exceeded: boolean | null;
  /** triangle at equal voltage: peak |x| of the motion the plain triangle voltage gives
   *  (harmonics to 9 through H), m, beside the ideal amplitude the engine runs; else null */
  filtered_peak_m: number | null;
  notes: string[];
}

export interface ComparisonPlan {
  basis: 'equal peak voltage' | 'equal stroke';
  /** the common peak voltage, V (null on the equal-stroke basis) */
  voltage_peak_V: number | null;
  /** the actuator's max_voltage, V, if the scenario sets one */
  max_voltage_V: number | null;
  /** the common peak-to-peak stroke, m (equal-stroke basis), else the sine's */
  stroke_m: number;
  frequency_Hz: number;
  second_frequency_Hz: number;
  second_frequency_source: 'drive.second_frequency' | '3 x drive.frequency';
  waveforms: WaveformPlan[];
  notes: string[];
}

/** One row of the comparison: the plan and what the run measured. */
export interface ComparisonRow extends WaveformPlan {
  status: 'ok' | 'numerical-failure';
  message: string | null;
  engine: string;
  peak_speed_m_s: number;
  critical_speed_m_s: number | null;
  /** summary.drive.fraction_below_critical (for two tones: the average over tone phases) */
  fraction_below_critical: number | null;
  /** two tones with commensurate frequencies: the fraction of time over one common period of
   *  the actual motion (phases as in the scenario); null otherwise */
  fraction_below_critical_time: number | null;
  gain_over_static: number | null;
  ripple_rel: number | null;
  ripple_full_band_rel: number | null;
  hops_per_period: number | null;
  class: RunClass | null;
  class_reason: string | null;
}

/** compare.json */
export interface WaveformComparison {
  version: number;
  tool_version: string;
  name: string;
  scenario_sha256: string;
  basis: ComparisonPlan['basis'];
  voltage_peak_V: number | null;
  max_voltage_V: number | null;
  stroke_m: number;
  frequency_Hz: number;
  second_frequency_Hz: number;
  second_frequency_source: ComparisonPlan['second_frequency_source'];
  rows: ComparisonRow[];
  /** the decoupled waveform with the highest gain over static, or null when none is decoupled */
  recommendation: { waveform: ComparedWaveform | null; reason: string };
  notes: string[];
  timing: { wall_s: number; references_wall_s: number };
}
