/**
 * The name of every file dithercav writes or reads back, in one place: no other room
 * spells a result file's name. Each kind of file has its type, its format version and
 * one validating reader in this room (./read.ts).
 */

/** Format version of every JSON result file (summary, points, sweep header, map, index, compare, bench). */
export const RESULT_VERSION = 1;

/** Files inside a run folder. */
export const RUN_FILES = {
  summary: 'summary.json',
  traces: 'traces.json',
  tracesCsv: 'traces.csv',
  spectra: 'spectra.json',
  spectraCsv: 'spectra.csv',
  staticCurve: 'static_curve.json',
  speedCurve: 'speed_curve.json',
  report: 'report.html',
} as const;

/** Files inside a sweep folder. */
export const SWEEP_FILES = {
  points: 'points.ndjson',
  header: 'sweep.json',
  map: 'map.json',
  report: 'report.html',
  /** map.json flattened, one row per point (analysis/csv.ts, mapToCsv) */
  mapCsv: 'map.csv',
} as const;

/** Files inside a batch folder. */
export const BATCH_FILES = {
  index: 'index.json',
  indexHtml: 'index.html',
} as const;

/** Files inside a compare folder. */
export const COMPARE_FILES = {
  comparison: 'compare.json',
  report: 'report.html',
} as const;

/** The file `npm run bench` writes, relative to the package root. */
export const BENCH_FILE = 'reports/bench.json';

/**
 * Files every result folder holds while it is written and after: the lock (one writer
 * per folder, ./lock.ts) and the marker (this folder holds results, never scenarios:
 * `batch` does not read it as input, ./marker.ts).
 */
export const FOLDER_FILES = {
  lock: 'dithercav.lock',
  marker: 'dithercav-results.txt',
} as const;
