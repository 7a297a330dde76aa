/**
 * The one validating reader of each result file kind. Every command that reads results
 * back (report, merge, sweep --resume, batch --resume) and the tests go through these.
 * A file that is missing (when required), empty, cut short, not JSON, or that breaks the
 * contract (./schemas.ts) is bad input: InputError naming the file and the key path,
 * exit 2. Nothing is written from a file that did not pass.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import type { z } from 'zod';
import { InputError } from '../scenario/errors';
import type { InputProblem } from '../scenario/errors';
import { formatKeyPath } from '../scenario/keypath';
import { BATCH_FILES, COMPARE_FILES, RUN_FILES, SWEEP_FILES } from './files';
import {
  batchIndexSchema,
  benchReportSchema,
  comparisonSchema,
  runSummarySchema,
  spectraSetSchema,
  staticCurveSchema,
  sweepHeaderSchema,
  traceSetSchema,
  sweepMapSchema,
} from './schemas';
import type { RunSummary, StaticCurve } from './summary';
import type { SweepMap } from './map';
import type { BatchIndexEntry } from './batch';
import type { RunArtifacts, SpectraSet, TraceSet } from './artifacts';
import type { SweepHeader } from './sweep-header';
import type { WaveformComparison } from './compare';

/** Problems listed at most per file (the rest are counted). */
const MAX_PROBLEMS = 12;

function typeName(v: unknown): string {
  if (v === undefined) return 'nothing (the key is missing)';
  if (v === null) return 'null';
  if (Array.isArray(v)) return 'a list';
  if (typeof v === 'string') return `the text ${JSON.stringify(v.length > 40 ? `${v.slice(0, 40)}...` : v)}`;
  if (typeof v === 'number' || typeof v === 'boolean') return `${typeof v} ${String(v)}`;
  return typeof v === 'object' ? 'an object' : typeof v;
}

/** zod's type names in the words of our messages. */
const TYPE_WORDS: Record<string, string> = {
  array: 'a list',
  number: 'a number',
  string: 'text',
  object: 'an object',
  boolean: 'true or false',
  record: 'an object',
  int: 'a whole number',
};

function valueAt(root: unknown, p: readonly PropertyKey[]): unknown {
  let v = root;
  for (const k of p) {
    if (v === null || typeof v !== 'object') return undefined;
    v = (v as Record<PropertyKey, unknown>)[k];
  }
  return v;
}

/** zod's issues as our problems: key path, "expected ..., found ...". */
export function zodProblems(issues: readonly z.core.$ZodIssue[], data: unknown, prefix = ''): InputProblem[] {
  const out = issues.slice(0, MAX_PROBLEMS).map((i): InputProblem => {
    const key = formatKeyPath(i.path);
    const p =
      prefix === ''
        ? key
        : key === ''
          ? prefix
          : key.startsWith('[')
            ? `${prefix}${key}`
            : `${prefix}.${key}`;
    const found = typeName(valueAt(data, i.path));
    let message: string;
    const missing = valueAt(data, i.path) === undefined;
    // A schema's own message (it starts with "expected") is said as it is; zod's defaults are reworded.
    if (i.message.startsWith('expected'))
      message = i.code === 'custom' || missing ? i.message : `${i.message}, found ${found}`;
    else if (i.code === 'invalid_type')
      message = `expected ${TYPE_WORDS[i.expected] ?? i.expected}, found ${found}`;
    else if (i.code === 'too_small')
      message =
        i.origin === 'array'
          ? `expected at least ${String(i.minimum)} entries, found ${found}`
          : `expected a value ${i.inclusive ? '>=' : '>'} ${String(i.minimum)}, found ${found}`;
    else if (i.code === 'too_big')
      message =
        i.origin === 'array'
          ? `expected at most ${String(i.maximum)} entries, found ${found}`
          : `expected a value ${i.inclusive ? '<=' : '<'} ${String(i.maximum)}, found ${found}`;
    else if (i.code === 'invalid_value')
      message = `expected one of ${i.values.map((v) => JSON.stringify(v)).join(', ')}, found ${found}`;
    else message = `${i.message}, found ${found}`;
    return { path: p, message };
  });
  if (issues.length > MAX_PROBLEMS)
    out.push({ path: prefix, message: `and ${issues.length - MAX_PROBLEMS} more problem(s)` });
  return out;
}

/**
 * The parsed JSON of `file`. Missing: InputError when `required`, else null. Empty, cut
 * short or otherwise not JSON: InputError saying so.
 */
export function readJson(file: string, what: string, required: boolean): unknown {
  let text: string;
  try {
    text = fs.readFileSync(file, 'utf8');
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ENOENT') {
      if (!required) return null;
      throw new InputError(file, [{ path: '', message: `expected ${what}, found no such file` }]);
    }
    throw new InputError(file, [
      { path: '', message: `expected ${what}, cannot read it: ${(err as Error).message}` },
    ]);
  }
  if (text.trim() === '')
    throw new InputError(file, [{ path: '', message: `expected ${what}, found an empty file` }]);
  try {
    return JSON.parse(text) as unknown;
  } catch (err) {
    throw new InputError(file, [
      {
        path: '',
        message: `expected ${what} as JSON, found text that does not parse (${(err as Error).message}); the file may have been cut short`,
      },
    ]);
  }
}

/** Check parsed data against a schema; InputError naming the file and key paths. Returns the data itself (extra keys kept). */
export function validate<T>(file: string, schema: z.ZodType, data: unknown, what: string): T {
  const r = schema.safeParse(data);
  if (!r.success) {
    const problems = zodProblems(r.error.issues, data);
    problems.unshift({ path: '', message: `not ${what} as this dithercav writes it:` });
    throw new InputError(file, problems);
  }
  return data as T;
}

function readValidated<T>(file: string, schema: z.ZodType, what: string): T {
  return validate<T>(file, schema, readJson(file, what, true), what);
}

/** summary.json of a run folder. */
export function readRunSummary(dir: string): RunSummary {
  return readValidated(path.join(dir, RUN_FILES.summary), runSummarySchema, 'the summary of a run');
}

/** map.json of a sweep folder. */
export function readSweepMap(dir: string): SweepMap {
  return readValidated(path.join(dir, SWEEP_FILES.map), sweepMapSchema, 'the map of a sweep');
}

/** sweep.json of a sweep folder, or null when the folder has none. */
export function readSweepHeader(dir: string): SweepHeader | null {
  const file = path.join(dir, SWEEP_FILES.header);
  const v = readJson(file, 'a sweep header', false);
  return v === null ? null : validate<SweepHeader>(file, sweepHeaderSchema, v, 'a sweep header');
}

/** index.json of a batch folder. */
export function readBatchIndex(dir: string): BatchIndexEntry[] {
  return readValidated(path.join(dir, BATCH_FILES.index), batchIndexSchema, 'the index of a batch');
}

/** compare.json of a compare folder. */
export function readComparison(dir: string): WaveformComparison {
  return readValidated(path.join(dir, COMPARE_FILES.comparison), comparisonSchema, 'a waveform comparison');
}

/** reports/bench.json (or another bench file). */
export function readBenchReport(file: string): Record<string, unknown> {
  return readValidated(file, benchReportSchema, 'a benchmark report');
}

/** An optional file of a run folder: null when absent, else validated like the others. */
function optionalValidated<T>(file: string, schema: z.ZodType, what: string): T | null {
  const v = readJson(file, what, false);
  return v === null ? null : validate<T>(file, schema, v, what);
}

/**
 * Every file of a run folder: summary.json (required), and the traces, spectra and static
 * curve when saved (null when absent), each validated against its schema.
 */
export function readRunArtifacts(dir: string): RunArtifacts {
  return {
    summary: readRunSummary(dir),
    traces: optionalValidated<TraceSet>(
      path.join(dir, RUN_FILES.traces),
      traceSetSchema,
      'the time traces of a run',
    ),
    spectra: optionalValidated<SpectraSet>(
      path.join(dir, RUN_FILES.spectra),
      spectraSetSchema,
      'the spectra of a run',
    ),
    static_curve: optionalValidated<StaticCurve>(
      path.join(dir, RUN_FILES.staticCurve),
      staticCurveSchema,
      'the static power curve of a run',
    ),
  };
}
