/**
 * `points.ndjson` of a sweep folder: one finished point per line, appended as each point
 * finishes; its type, its writer and its one validating reader (each line is checked
 * against the contract, ./schemas.ts).
 *
 * A point is written as one whole line with a single write, so a crash can leave at most
 * a torn last line; reading drops such a line (it is never parsed as data) and warns.
 */
import * as fs from 'node:fs';
import type { RunSummary, RunClass, DrivenSummary, DriveSummary, MinMeanMax, Warning } from './summary';
import { pointRecordSchema } from './schemas';
import { zodProblems } from './read';

/** The small per-point summary kept in points.ndjson (a subset of summary.json). */
export interface PointSummary {
  /**
   * 'numerical-failure': the run returned that status (its integration failed); 'error':
   * the run threw (a program error, not physics), with the message and the stack
   */
  status: 'ok' | 'numerical-failure' | 'error';
  message: string | null;
  /** the driven run's class, 'numerical-failure', or 'error' for a run that threw */
  class: RunClass | 'error';
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
  /** the stack of the error a run threw (status 'error' only) */
  stack?: string | null;
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

/** The record of a point whose integration failed: class 'numerical-failure' and the message, nothing else known. */
export function failedPointSummary(message: string): PointSummary {
  return { ...emptyPointSummary(message), status: 'numerical-failure', class: 'numerical-failure' };
}

/**
 * The record of a point whose run threw (a program error, or the worker thread dying):
 * status and class 'error', the message and the stack, so the bug is seen, not hidden in
 * a map as physics.
 */
export function errorPointSummary(message: string, stack: string | null): PointSummary {
  return { ...emptyPointSummary(message), status: 'error', class: 'error', stack };
}

function emptyPointSummary(message: string): PointSummary {
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
    const checked = pointRecordSchema.safeParse(v);
    if (!checked.success) {
      const why = zodProblems(checked.error.issues, v)
        .slice(0, 3)
        .map((p) => (p.path ? `${p.path}: ${p.message}` : p.message))
        .join('; ');
      dropped.push({ line, reason: `not a point record as this dithercav writes it (${why})` });
      continue;
    }
    const rec = v as PointRecord;
    if (seen.has(rec.index)) {
      dropped.push({ line, reason: `point ${rec.index} appears again` });
      continue;
    }
    seen.add(rec.index);
    records.push(rec);
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
