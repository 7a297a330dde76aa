/**
 * `dithercav report DIR`: find out what kind of result folder DIR is and rebuild its
 * HTML from the saved files, with no simulation.
 */
import { existsSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { RUN_FILES } from '../results/artifacts';
import { BATCH_FILES } from '../results/batch';
import { InputError } from '../scenario/errors';
import { writeBatchIndexHtml } from './batch-index';
import { readBatchIndex } from '../results/read';
import { writeRunReport } from './run-report';
import { writeSweepReport } from './sweep-report';
import { COMPARE_FILES, SWEEP_FILES } from '../results/files';
import { YIELD_FILES } from '../results/yield';
import { writeYieldReport } from './yield-report';
import { writeCompareReport } from './compare-report';

export type ResultFolderKind = 'run' | 'sweep' | 'batch' | 'yield' | 'compare';

/**
 * What a folder holds: summary.json -> run, yield.json -> yield, map.json -> sweep,
 * compare.json -> waveform comparison, index.json -> batch; null for none.
 */
export function detectResultFolder(dir: string): ResultFolderKind | null {
  if (existsSync(join(dir, RUN_FILES.summary))) return 'run';
  if (existsSync(join(dir, YIELD_FILES.summary))) return 'yield';
  if (existsSync(join(dir, SWEEP_FILES.map))) return 'sweep';
  if (existsSync(join(dir, COMPARE_FILES.comparison))) return 'compare';
  if (existsSync(join(dir, BATCH_FILES.index))) return 'batch';
  return null;
}

export interface RebuildResult {
  kind: ResultFolderKind;
  /** every HTML file written (for a batch: index.html first, then the member reports) */
  written: string[];
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
        message: `expected a result folder (with ${RUN_FILES.summary}, ${SWEEP_FILES.map}, ${COMPARE_FILES.comparison} or ${BATCH_FILES.index}), found no such folder`,
      },
    ]);
  }
  const kind = detectResultFolder(dir);
  if (kind === null) {
    throw new InputError(dir, [
      {
        path: '',
        message: `expected a run folder (${RUN_FILES.summary}), a sweep folder (${SWEEP_FILES.map}), a comparison folder (${COMPARE_FILES.comparison}) or a batch folder (${BATCH_FILES.index}), found none of these files`,
      },
    ]);
  }
  if (kind === 'run') return { kind, written: [writeRunReport(dir)] };
  if (kind === 'sweep') return { kind, written: [writeSweepReport(dir)] };
  if (kind === 'yield') return { kind, written: [writeYieldReport(dir)] };
  if (kind === 'compare') return { kind, written: [writeCompareReport(dir)] };
  const index = readBatchIndex(dir);
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
