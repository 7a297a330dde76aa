/**
 * The files of a sweep folder: `points.ndjson` (one finished point per line, appended as
 * each point finishes) and `sweep.json` (what the sweep is: scenario hash, axes, total,
 * shard), so that `--resume` and `merge` can refuse the points of another scenario.
 *
 * A point is written as one whole line with a single write, so a crash can leave at most
 * a torn last line; reading drops such a line (it is never parsed as data) and warns.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import type {
  RunSummary,
  RunClass,
  DrivenSummary,
  DriveSummary,
  MinMeanMax,
  Warning,
} from '../results/summary';
import { RESULT_VERSION } from '../results/summary';
import type { MapAxis } from '../results/map';
import { InputError } from '../scenario/errors';
import { TOOL_VERSION } from '../version';

/** File names inside a sweep folder. */
export const SWEEP_FILES = {
  points: 'points.ndjson',
  header: 'sweep.json',
  map: 'map.json',
  /** map.json flattened, one row per point (analysis/csv.ts, mapToCsv) */
  mapCsv: 'map.csv',
  report: 'report.html',
} as const;

/** The small per-point summary kept in points.ndjson (a subset of summary.json). */
export interface PointSummary {
  status: 'ok' | 'numerical-failure';
  message: string | null;
  /** the driven run's class, or 'numerical-failure' */
  class: RunClass;
  class_reason: string | null;
  engine: string | null;
  seed: number | null;
  scenario_sha256: string | null;
  driven: DrivenSummary | null;
  drive: DriveSummary | null;
  static: {
    external_W: MinMeanMax;
    laser_output_W: MinMeanMax;
    hysteresis_rel: number;
    positions: number;
    converged: boolean;
  } | null;
  free_running: { intracavity_W: number; output_W: number; lasing_modes: number[] } | null;
  power_balance: RunSummary['power_balance'];
  warnings: Warning[];
}

/** One line of points.ndjson. `wall_s` is the point's own run time, outside the results proper. */
export interface PointRecord {
  index: number;
  axes: Record<string, number>;
  summary: PointSummary;
  wall_s: number;
}

/** Cut a run's summary down to what a sweep keeps per point. A failed run gets class 'numerical-failure'. */
export function pointSummaryOf(s: RunSummary): PointSummary {
  const failed = s.status !== 'ok' || s.driven === null;
  return {
    status: failed ? 'numerical-failure' : 'ok',
    message:
      s.message ?? (s.driven === null && s.status === 'ok' ? 'the run produced no driven result' : null),
    class: failed ? 'numerical-failure' : s.driven!.class,
    class_reason: failed ? (s.message ?? 'numerical failure') : s.driven!.class_reason,
    engine: s.engine,
    seed: s.seed,
    scenario_sha256: s.scenario_sha256,
    driven: s.driven,
    drive: s.drive,
    static: s.static
      ? {
          external_W: s.static.external_W,
          laser_output_W: s.static.laser_output_W,
          hysteresis_rel: s.static.hysteresis_rel,
          positions: s.static.positions,
          converged: s.static.converged,
        }
      : null,
    free_running: s.free_running
      ? {
          intracavity_W: s.free_running.intracavity_W,
          output_W: s.free_running.output_W,
          lasing_modes: s.free_running.lasing_modes,
        }
      : null,
    power_balance: s.power_balance,
    warnings: s.warnings ?? [],
  };
}

/** The record of a point whose run threw: class 'numerical-failure' and the message, nothing else known. */
export function failedPointSummary(message: string): PointSummary {
  return {
    status: 'numerical-failure',
    message,
    class: 'numerical-failure',
    class_reason: message,
    engine: null,
    seed: null,
    scenario_sha256: null,
    driven: null,
    drive: null,
    static: null,
    free_running: null,
    power_balance: null,
    warnings: [],
  };
}

/** One line of points.ndjson, newline included. Non-finite numbers become null (JSON has none). */
export function formatPointLine(rec: PointRecord): string {
  return `${JSON.stringify(rec)}\n`;
}

/**
 * Appends whole lines to points.ndjson. Each point is one `write` of the full line on a
 * descriptor opened for appending (O_APPEND), so a line is never interleaved and a
 * crash tears at most the line being written.
 */
export class PointWriter {
  private fd: number | null;
  constructor(readonly file: string) {
    this.fd = fs.openSync(file, 'a');
  }
  /** Write one finished point. */
  write(rec: PointRecord): void {
    if (this.fd === null) throw new Error(`${this.file} is closed`);
    const buf = Buffer.from(formatPointLine(rec), 'utf8');
    let off = 0;
    // A regular file takes the whole buffer in one call; the loop only guards a short write.
    while (off < buf.length) off += fs.writeSync(this.fd, buf, off, buf.length - off);
  }
  close(): void {
    if (this.fd !== null) fs.closeSync(this.fd);
    this.fd = null;
  }
}

/** What reading points.ndjson found: the good records and the lines dropped, with why. */
export interface PointsRead {
  records: PointRecord[];
  /** 1-based line numbers and the reason each was dropped */
  dropped: { line: number; reason: string }[];
  /** byte length of the file up to the end of the last good line */
  goodBytes: number;
  totalBytes: number;
}

function isRecord(v: unknown): v is PointRecord {
  if (v === null || typeof v !== 'object') return false;
  const r = v as Record<string, unknown>;
  return (
    typeof r.index === 'number' &&
    Number.isInteger(r.index) &&
    r.index >= 0 &&
    r.axes !== null &&
    typeof r.axes === 'object' &&
    r.summary !== null &&
    typeof r.summary === 'object'
  );
}

/**
 * Read points.ndjson. A last line without its newline, or any line that is not a JSON
 * point record, is dropped and listed in `dropped` (the caller warns). A second record
 * with an index already read is dropped too (the first one wins). A missing file reads
 * as empty.
 */
export function readPoints(file: string): PointsRead {
  if (!fs.existsSync(file)) return { records: [], dropped: [], goodBytes: 0, totalBytes: 0 };
  const buf = fs.readFileSync(file);
  const records: PointRecord[] = [];
  const dropped: { line: number; reason: string }[] = [];
  const seen = new Set<number>();
  let start = 0;
  let line = 0;
  let goodBytes = 0;
  while (start < buf.length) {
    line++;
    const nl = buf.indexOf(0x0a, start);
    if (nl < 0) {
      dropped.push({
        line,
        reason: 'the last line is incomplete (no newline: a point was being written when the sweep stopped)',
      });
      break;
    }
    const text = buf.toString('utf8', start, nl).trim();
    start = nl + 1;
    if (text === '') {
      goodBytes = start;
      continue;
    }
    let v: unknown;
    try {
      v = JSON.parse(text);
    } catch {
      dropped.push({ line, reason: 'not valid JSON' });
      continue;
    }
    if (!isRecord(v)) {
      dropped.push({ line, reason: 'not a point record (index, axes, summary)' });
      continue;
    }
    if (seen.has(v.index)) {
      dropped.push({ line, reason: `point ${v.index} appears again` });
      continue;
    }
    seen.add(v.index);
    records.push(v);
    goodBytes = start;
  }
  return { records, dropped, goodBytes, totalBytes: buf.length };
}

/**
 * Make points.ndjson safe to append to: when lines were dropped, rewrite the file with
 * the good records only (to a temporary file, then rename, so a crash here loses nothing).
 * Returns the good records.
 */
export function repairPoints(file: string, read: PointsRead = readPoints(file)): PointRecord[] {
  if (read.dropped.length === 0) return read.records;
  const tmp = `${file}.tmp-${process.pid}`;
  fs.writeFileSync(tmp, read.records.map(formatPointLine).join(''));
  fs.renameSync(tmp, file);
  return read.records;
}

/** A human sentence for each dropped line, naming the file. */
export function describeDropped(file: string, dropped: PointsRead['dropped']): string[] {
  return dropped.map((d) => `${file}:${d.line}: dropped (${d.reason})`);
}

/** sweep.json: what a sweep folder holds. */
export interface SweepHeader {
  version: number;
  tool_version: string;
  name: string;
  /** SHA-256 of the normalised scenario, sweep section and engine choice included */
  scenario_sha256: string;
  /** the normalised scenario (canonical JSON form, "flat" for an infinite radius) */
  scenario: Record<string, unknown>;
  /** the scenario file the sweep was started from, as given */
  source: string | null;
  axes: MapAxis[];
  total_points: number;
  /** this folder's share of the grid, or null for the whole grid */
  shard: { index: number; count: number } | null;
  created: string;
}

/** Build a header. */
export function makeHeader(h: Omit<SweepHeader, 'version' | 'tool_version' | 'created'>): SweepHeader {
  return { version: RESULT_VERSION, tool_version: TOOL_VERSION, created: new Date().toISOString(), ...h };
}

/** Write sweep.json (through a temporary file and a rename). */
export function writeHeader(dir: string, h: SweepHeader): void {
  const file = path.join(dir, SWEEP_FILES.header);
  const tmp = `${file}.tmp-${process.pid}`;
  fs.writeFileSync(tmp, `${JSON.stringify(h, null, 2)}\n`);
  fs.renameSync(tmp, file);
}

/**
 * Read sweep.json of a folder, or null when there is none. Throws InputError naming the
 * file when it exists but is not a sweep header.
 */
export function readHeader(dir: string): SweepHeader | null {
  const file = path.join(dir, SWEEP_FILES.header);
  if (!fs.existsSync(file)) return null;
  let v: unknown;
  try {
    v = JSON.parse(fs.readFileSync(file, 'utf8'));
  } catch (err) {
    throw new InputError(file, [
      {
        path: '',
        message: `expected a sweep header (JSON), found unreadable text: ${(err as Error).message}`,
      },
    ]);
  }
  const h = v as Partial<SweepHeader>;
  if (
    !h ||
    typeof h !== 'object' ||
    typeof h.scenario_sha256 !== 'string' ||
    !Array.isArray(h.axes) ||
    typeof h.total_points !== 'number'
  ) {
    throw new InputError(file, [
      { path: '', message: 'expected a sweep header with scenario_sha256, axes and total_points' },
    ]);
  }
  return h as SweepHeader;
}

/**
 * Refuse to add points to a folder holding another sweep: the scenario hash, the total
 * and the shard must all agree. Throws InputError (exit 2) saying what differs.
 */
export function assertSameSweep(dir: string, existing: SweepHeader, wanted: SweepHeader): void {
  const file = path.join(dir, SWEEP_FILES.header);
  const problems: string[] = [];
  if (existing.scenario_sha256 !== wanted.scenario_sha256) {
    problems.push(
      `it holds a sweep of another scenario or engine choice ('${existing.name}', sha256 ${existing.scenario_sha256.slice(0, 12)}..., this one ${wanted.scenario_sha256.slice(0, 12)}...)`,
    );
  } else if (existing.total_points !== wanted.total_points) {
    problems.push(`it holds ${existing.total_points} grid points, this sweep ${wanted.total_points}`);
  }
  const sh = (s: SweepHeader['shard']) => (s ? `shard ${s.index}/${s.count}` : 'the whole grid');
  if (problems.length === 0 && sh(existing.shard) !== sh(wanted.shard)) {
    problems.push(`it holds ${sh(existing.shard)}, this run is ${sh(wanted.shard)}`);
  }
  if (problems.length > 0) {
    throw new InputError(file, [
      { path: '', message: `cannot resume here: ${problems.join('; ')}. Use another --out folder.` },
    ]);
  }
}
