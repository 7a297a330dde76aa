/**
 * The files one run writes beside summary.json, read back by the report (which never
 * re-simulates). All values SI.
 */
import type { RunSummary, StaticCurve } from './summary';
import type { SpeedCurve } from './speed-curve';

/** One decimated time series. Decimation keeps the min and max of each bucket, so spikes survive. */
export interface TraceSeries {
  key: string;
  label: string;
  unit: string;
  values: number[];
}

/** Decimated traces of the driven run (first drive offset), on a common time axis. */
export interface TraceSet {
  /** time from the start of the analysed window, s */
  t_s: number[];
  series: TraceSeries[];
  /** drive period, s (null for a still mirror) */
  drive_period_s: number | null;
}

export interface Spectrum {
  f_Hz: number[];
  values: number[];
}

export interface SpectraSet {
  /** relative-intensity noise of the gap power, one-sided, dB/Hz (Welch, Hann window) */
  rin: (Spectrum & { unit: 'dB/Hz'; resolution_Hz: number; segments: number }) | null;
  /** optical spectrum of the returned field b_m around each strong mode, dB relative to its peak */
  optical: (Spectrum & { mode: number; unit: 'dB' })[];
  drive_harmonics_Hz: number[];
}

/** Everything a run produces, as written to its folder. */
export interface RunArtifacts {
  summary: RunSummary;
  traces: TraceSet | null;
  spectra: SpectraSet | null;
  static_curve: StaticCurve | null;
  /** the speed curve of the slow-drive path (docs/model.md §3.6), when that path ran */
  speed_curve?: SpeedCurve | null;
}

/** File names inside a run folder (./files.ts). */
export { RUN_FILES } from './files';
