/**
 * `dithercav report DIR`: find out what kind of result folder DIR is and rebuild its
 * HTML from the saved files, with no simulation.
 */
import { existsSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { RUN_FILES } from '../results/artifacts';
import { BATCH_FILES, BatchIndexEntry } from '../results/batch';
import { InputError } from '../scenario/errors';
import { writeBatchIndexHtml } from './batch-index';
import { readJsonFile } from './read-results';
import { writeRunReport } from './run-report';
import { SWEEP_MAP_FILE, writeSweepReport } from './sweep-report';
import { COMPARE_FILES, writeCompareReport } from './compare-report';

export type ResultFolderKind = 'run' | 'sweep' | 'batch' | 'compare';

/** What a folder holds: summary.json -> run, map.json -> sweep, compare.json -> compare, index.json -> batch; null for none. */
export function detectResultFolder(dir: string): ResultFolderKind | null {
  if (existsSync(join(dir, RUN_FILES.summary))) return 'run';
  if (existsSync(join(dir, SWEEP_MAP_FILE))) return 'sweep';
  if (existsSync(join(dir, COMPARE_FILES.json))) return 'compare';
  if (existsSync(join(dir, BATCH_FILES.index))) return 'batch';
  return null;
}

export interface RebuildResult {
  kind: ResultFolderKind;
  /** every HTML file written (for a batch: index.html first, then the member reports) */
  written: string[];
}

function readBatchIndex(file: string): BatchIndexEntry[] {
  const v = readJsonFile(file, 'the index of a batch', true);
  const list = Array.isArray(v)
    ? v
    : v !== null && typeof v === 'object' && Array.isArray((v as { entries?: unknown }).entries)
      ? (v as { entries: unknown[] }).entries
      : null;
  if (list === null)
    throw new InputError(file, [
      { path: '', message: 'expected a list of batch entries { file, name, kind, status, ... }' },
    ]);
  list.forEach((e, i) => {
    if (e === null || typeof e !== 'object' || typeof (e as BatchIndexEntry).status !== 'string') {
      throw new InputError(file, [
        { path: String(i), message: "expected a batch entry with a 'status' of ok, failed or bad-input" },
      ]);
    }
  });
  return list as BatchIndexEntry[];
}

/**
 * Rebuild the HTML of the result folder `dir`: report.html of a run or a sweep, or
 * index.html of a batch together with the report of each finished member folder found
 * in it. Returns the kind and the files written. Throws InputError (exit 2) when `dir`
 * is not a folder or holds none of summary.json, map.json, index.json.
 */
export function rebuildReport(dir: string): RebuildResult {
  if (!existsSync(dir) || !statSync(dir).isDirectory()) {
    throw new InputError(dir, [
      {
        path: '',
        message:
          'expected a result folder (with summary.json, map.json, compare.json or index.json), found no such folder',
      },
    ]);
  }
  const kind = detectResultFolder(dir);
  if (kind === null) {
    throw new InputError(dir, [
      {
        path: '',
        message: `expected a run folder (${RUN_FILES.summary}), a sweep folder (${SWEEP_MAP_FILE}), a comparison folder (${COMPARE_FILES.json}) or a batch folder (${BATCH_FILES.index}), found none of these files`,
      },
    ]);
  }
  if (kind === 'run') return { kind, written: [writeRunReport(dir)] };
  if (kind === 'sweep') return { kind, written: [writeSweepReport(dir)] };
  if (kind === 'compare') return { kind, written: [writeCompareReport(dir)] };
  const index = readBatchIndex(join(dir, BATCH_FILES.index));
  const written = [writeBatchIndexHtml(dir, index)];
  for (const e of index) {
    if (e.status !== 'ok' || typeof e.folder !== 'string' || e.folder === '') continue;
    const sub = join(dir, e.folder);
    const subKind = existsSync(sub) ? detectResultFolder(sub) : null;
    if (subKind === 'run') written.push(writeRunReport(sub));
    else if (subKind === 'sweep') written.push(writeSweepReport(sub));
  }
  return { kind, written };
}
