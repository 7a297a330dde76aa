/**
 * `index.json` of a batch: one entry per scenario file, failures included. Key figures
 * are copied from the run summary (SI, dimensionless ratios); a figure not computed is
 * null or absent, never 0.
 */
import type { RunClass } from './summary';

export interface BatchIndexEntry {
  /** the scenario file, relative to the batch folder (so a moved or shared folder still finds it) */
  file: string;
  /** the scenario's name (or the file name when the file could not be read) */
  name: string;
  kind: 'run' | 'sweep';
  status: 'ok' | 'failed' | 'bad-input';
  class?: RunClass | null;
  /** the error message for a failed or bad-input entry */
  error?: string | null;
  enhancement?: number | null;
  gain_over_static?: number | null;
  ripple_rel?: number | null;
  hops_per_s?: number | null;
  /** the entry's result folder, relative to the batch folder */
  folder?: string | null;
  /** the dithercav version that wrote the entry (absent in indexes written before 0.2) */
  tool_version?: string;
  /** mean one-way gap power, W, and its standard error, W (null when not computed) */
  external_mean_W?: number | null;
  external_mean_stderr_W?: number | null;
  /** the drive of the run, or of the sweep point the figures are from */
  drive?: { waveform: string | null; amplitude_m: number | null; frequency_Hz: number | null } | null;
}

/** The whole index.json: an array of entries in the order the files were taken. */
export type BatchIndex = BatchIndexEntry[];

/** File names inside a batch folder (./files.ts). */
export { BATCH_FILES } from './files';
