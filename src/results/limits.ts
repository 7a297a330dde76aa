/**
 * The fixed limits a run's results are judged by, in one place: the run's warnings use
 * them and the report highlights the same values. Scenario thresholds (`analysis.*`) are
 * not here; these are the tool's own.
 */

/** Relative interface mismatch at M2 above which a run warns and the report highlights it (docs/model.md §3.3). */
export const INTERFACE_MISMATCH_LIMIT = 0.05;

/** Relative power-balance error above which a run warns that the step is too coarse. */
export const POWER_BALANCE_LIMIT = 1e-4;

/**
 * Frequency spread of the returned light, (F / pi) 2 v / lambda, as a fraction of the
 * laser mode spacing, above which the per-mode mean-field equation is strained (docs/model.md §3.1).
 */
export const DOPPLER_SPREAD_LIMIT = 0.2;

/**
 * Detection-band windows (of 1 / bandwidth) the analysed window holds at least: the first
 * fills the sliding average, then at least three more (docs/model.md §4).
 */
export const MIN_DETECTION_WINDOWS = 4;

/** Samples along one drive period when the static curve is averaged along x(t) (the quasi-static mean). */
export const QUASI_STATIC_SAMPLES = 2000;

/**
 * Most rest offsets a driven run holds while its statistics converge (docs/model.md §3.6):
 * a cap on memory and on the per-offset lists in summary.json. A run that would pass it
 * stops as if its step budget were spent (stopped_by "budget").
 */
export const MAX_DRIVE_OFFSETS = 1024;
