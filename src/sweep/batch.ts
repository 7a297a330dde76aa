/**
 * A batch: every scenario file under some paths, each run or swept by its content (a
 * `sweep` section makes it a sweep), one output folder each, and index.json listing
 * them all, failures included. A bad file is reported and skipped; the others finish.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { errorText, InputError } from '../scenario/errors';
import { loadScenarioFile } from '../scenario/load';
import type { Scenario } from '../scenario/schema';
import { scenarioSha256 } from '../scenario/canonical';
import type { EngineChoice } from '../simulate';
import type { RunArtifacts } from '../results/artifacts';
import { RUN_FILES } from '../results/artifacts';
import type { RunClass, RunSummary } from '../results/summary';
import { readRunSummary } from '../results/read';
import { hasResultMarker } from '../results/marker';
import { FOLDER_FILES } from '../results/files';
import type { BatchIndexEntry } from '../results/batch';
import { BATCH_FILES } from '../results/batch';
import { parse as parseYaml } from 'yaml';
import type { Executor } from './pool';
import { createExecutor, ExecutorStopped } from './pool';
import { runSweep, withEngine } from './run-sweep';
import { computedOnly } from './map';
import type { SweepOutcome } from './run-sweep';
import type { PointRecord } from '../results/points';
import { TOOL_VERSION } from '../version';

/** The file endings a batch picks up. */
export const SCENARIO_EXTENSIONS = ['.yaml', '.yml', '.json'] as const;

/**
 * One entry of index.json (results/batch.ts, BatchIndexEntry), with what a sweep adds.
 * A file that could not be read has its file name as name and the kind its text
 * suggests (a top-level `sweep` key), 'run' otherwise.
 */
export interface BatchEntry extends BatchIndexEntry {
  name: string;
  class: RunClass | null;
  error: string | null;
  enhancement: number | null;
  gain_over_static: number | null;
  ripple_rel: number | null;
  hops_per_s: number | null;
  folder: string | null;
  /** for a sweep: which point the figures are from and why */
  figures_from: string | null;
  /** for a sweep: finished, failed and planned points, and the count of each class */
  points: { finished: number; failed: number; total: number; classes: Record<string, number> } | null;
  wall_s: number;
}

/** index.json of a batch folder: the entries in file order. */
export type BatchIndex = BatchEntry[];

/** What the batch needs from the rooms above it (writing run folders, reports). */
export interface BatchHooks {
  /** write one run's folder (summary.json, traces, spectra, report) */
  writeRun(dir: string, artifacts: RunArtifacts): void;
  /** after a sweep's folder is complete (e.g. its report.html) */
  afterSweep?(dir: string): void;
}

export interface BatchOptions {
  outDir: string;
  jobs?: number;
  inProcess?: boolean;
  resume?: boolean;
  engine?: EngineChoice;
  /** sweeps compute every grid point (no refinement) */
  full?: boolean;
  signal?: AbortSignal;
  hooks: BatchHooks;
  onWarning?: (message: string) => void;
  /** one call per finished entry */
  onEntry?: (entry: BatchEntry, done: number, total: number) => void;
  /** progress of the sweep being run */
  onSweepProgress?: (name: string, done: number, total: number, rec: PointRecord | null) => void;
  /** one line naming the folders the scan skipped and why (only when it skipped some) */
  onSkipped?: (line: string) => void;
  /**
   * called with the output folder once the scan found scenarios, before anything is
   * written (the CLI checks, locks and marks it); may throw InputError to refuse
   */
  openOut?: (dir: string) => void;
}

export const BATCH_INDEX_FILE = BATCH_FILES.index;

/** A folder the scan did not search, and why. */
export interface SkippedFolder {
  path: string;
  reason: string;
}

/** What a scan of the batch's paths found. */
export interface ScenarioScan {
  files: string[];
  skipped: SkippedFolder[];
}

/**
 * The scenario files under `paths`: a file is taken as given (whatever its ending); a
 * folder is searched recursively for .yaml, .yml and .json files (hidden entries and
 * node_modules skipped). Sorted, without repeats. Throws InputError for a path that
 * does not exist.
 */
export function findScenarioFiles(paths: readonly string[]): string[] {
  return scanScenarioFiles(paths).files;
}

/**
 * As findScenarioFiles, never entering a result folder: the folders in `exclude` (the
 * batch's own output) and any folder holding the result marker (results/marker.ts) or a
 * lock file are skipped, and listed with the reason.
 */
export function scanScenarioFiles(paths: readonly string[], exclude: readonly string[] = []): ScenarioScan {
  const out = new Set<string>();
  const skipped: SkippedFolder[] = [];
  const excluded = new Set(exclude.map((d) => realOrResolved(d)));
  const skipReason = (dir: string): string | null => {
    if (excluded.has(realOrResolved(dir))) return "this batch's output folder";
    if (hasResultMarker(dir)) return 'holds dithercav results';
    if (fs.existsSync(path.join(dir, FOLDER_FILES.lock))) return 'being written by dithercav (lock file)';
    return null;
  };
  const walk = (dir: string) => {
    const why = skipReason(dir);
    if (why !== null) {
      skipped.push({ path: dir, reason: why });
      return;
    }
    for (const e of fs
      .readdirSync(dir, { withFileTypes: true })
      .sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0))) {
      if (e.name.startsWith('.') || e.name === 'node_modules') continue;
      const p = path.join(dir, e.name);
      if (e.isDirectory()) walk(p);
      else if (e.isFile() && SCENARIO_EXTENSIONS.some((x) => e.name.toLowerCase().endsWith(x))) out.add(p);
    }
  };
  for (const p of paths) {
    let st: fs.Stats;
    try {
      st = fs.statSync(p);
    } catch {
      throw new InputError(p, [
        { path: '', message: 'expected a scenario file or a folder of them, found no such path' },
      ]);
    }
    if (st.isDirectory()) walk(p);
    else out.add(p);
  }
  return { files: [...out].sort(), skipped };
}

function realOrResolved(p: string): string {
  try {
    return fs.realpathSync(p);
  } catch {
    return path.resolve(p);
  }
}

/** The skipped folders in one line: "skipped 2 folder(s): out (this batch's output folder); old (holds dithercav results)". */
export function skippedLine(skipped: readonly SkippedFolder[]): string {
  return `skipped ${skipped.length} folder(s): ${skipped.map((s) => `${s.path} (${s.reason})`).join('; ')}`;
}

/** A path relative to `dir`, with forward slashes, as stored in result files. */
export function relativeTo(dir: string, p: string): string {
  return path.relative(path.resolve(dir), path.resolve(p)).split(path.sep).join('/');
}

/** A folder name from a scenario name: letters, digits, '.', '_' and '-' kept, the rest '_'. */
export function safeFolderName(name: string): string {
  const s = name.replace(/[^A-Za-z0-9._-]+/g, '_').replace(/^[.]+/, '_');
  return s === '' ? 'scenario' : s;
}

/** `base`, or `base-2`, `base-3` ... : the first not in `taken` (which it is then added to). */
export function uniqueName(base: string, taken: Set<string>): string {
  let name = base;
  for (let k = 2; taken.has(name.toLowerCase()); k++) name = `${base}-${k}`;
  taken.add(name.toLowerCase());
  return name;
}

function finiteOrNull(v: unknown): number | null {
  return typeof v === 'number' && Number.isFinite(v) ? v : null;
}

/** The kind a file's text suggests even when it does not validate: a top-level sweep key makes a sweep. */
function guessKind(file: string): 'run' | 'sweep' {
  try {
    const v = parseYaml(fs.readFileSync(file, 'utf8')) as unknown;
    return v !== null && typeof v === 'object' && 'sweep' in (v as object) ? 'sweep' : 'run';
  } catch {
    return 'run';
  }
}

function entryBase(file: string): BatchEntry {
  return {
    file,
    name: path.basename(file),
    kind: guessKind(file),
    status: 'bad-input',
    class: null,
    error: null,
    enhancement: null,
    gain_over_static: null,
    ripple_rel: null,
    hops_per_s: null,
    figures_from: null,
    points: null,
    folder: null,
    wall_s: 0,
    tool_version: TOOL_VERSION,
    external_mean_W: null,
    external_mean_stderr_W: null,
    drive: null,
  };
}

function fillFromRun(e: BatchEntry, s: RunSummary): void {
  const ok = s.status === 'ok' && s.driven !== null;
  e.status = ok ? 'ok' : 'failed';
  e.class = ok ? s.driven!.class : 'numerical-failure';
  e.error = ok ? null : (s.message ?? 'numerical failure');
  e.enhancement = finiteOrNull(s.driven?.enhancement);
  e.gain_over_static = finiteOrNull(s.driven?.gain_over_static);
  e.ripple_rel = finiteOrNull(s.driven?.ripple_rel);
  e.hops_per_s = finiteOrNull(s.driven?.hops_per_s);
  e.external_mean_W = finiteOrNull(s.driven?.external_mean_W);
  e.external_mean_stderr_W = finiteOrNull(
    (s.driven as unknown as Record<string, unknown> | null)?.external_mean_stderr_W,
  );
  e.drive = s.drive
    ? {
        waveform: typeof s.drive.waveform === 'string' ? s.drive.waveform : null,
        amplitude_m: finiteOrNull(s.drive.amplitude_m),
        frequency_Hz: finiteOrNull(s.drive.frequency_Hz),
      }
    : null;
}

/**
 * The figures of a sweep entry: at the recommended operating point if the map has one,
 * else at the finished point with the highest gain over static.
 */
function fillFromSweep(e: BatchEntry, out: SweepOutcome, base: Scenario): void {
  // computed points only: an inferred point of a refined map is never quoted as a result
  const m = computedOnly(out.map);
  const classes: Record<string, number> = {};
  for (const c of m.classes) if (c) classes[c] = (classes[c] ?? 0) + 1;
  e.points = { finished: out.finished, failed: out.failed, total: out.planned, classes };
  let at: number | null = m.recommended ? m.recommended.index : null;
  if (at !== null) e.figures_from = `point ${at}, the recommended operating point`;
  else {
    let best = -Infinity;
    m.metrics.gain_over_static?.forEach((v, i) => {
      if (v !== null && v > best) {
        best = v;
        at = i;
      }
    });
    if (at !== null) e.figures_from = `point ${at}, the highest gain over static`;
  }
  if (at !== null) {
    e.class = m.classes[at];
    e.enhancement = m.metrics.enhancement?.[at] ?? null;
    e.gain_over_static = m.metrics.gain_over_static?.[at] ?? null;
    e.ripple_rel = m.metrics.ripple_rel?.[at] ?? null;
    e.hops_per_s = m.metrics.hops_per_s?.[at] ?? null;
    e.external_mean_W = m.metrics.external_mean_W?.[at] ?? null;
    e.external_mean_stderr_W = m.metrics.external_mean_stderr_W?.[at] ?? null;
    const idx = at;
    const axisValue = (key: string): number | null => {
      const st = m.axes.map((_, k) => m.axes.slice(k + 1).reduce((n, a) => n * a.values.length, 1));
      const k = m.axes.findIndex((a) => a.key === key);
      return k < 0 ? null : m.axes[k].values[Math.floor(idx / st[k]) % m.axes[k].values.length];
    };
    e.drive = {
      waveform: base.drive.waveform,
      amplitude_m: axisValue('drive.amplitude') ?? finiteOrNull(base.drive.amplitude),
      frequency_Hz: axisValue('drive.frequency') ?? finiteOrNull(base.drive.frequency),
    };
  }
  if (out.interrupted) {
    e.status = 'failed';
    e.error = `stopped with ${out.finished} of ${out.planned} points finished`;
  } else if (out.errors > 0) {
    e.status = 'failed';
    e.error = `${out.errors} of ${out.planned} points stopped on an error (status error in points.ndjson)`;
  } else if (out.failed > 0) {
    e.status = 'failed';
    e.error = `${out.failed} of ${out.planned} points failed (numerical-failure)`;
  } else {
    e.status = 'ok';
    e.error = null;
  }
}

/** A finished run folder of the same scenario (for --resume), or null (a damaged summary is run again, with a warning). */
function finishedRun(dir: string, sha256: string, warn: (m: string) => void): RunSummary | null {
  if (!fs.existsSync(path.join(dir, RUN_FILES.summary))) return null;
  try {
    const s = readRunSummary(dir);
    return s.scenario_sha256 === sha256 ? s : null;
  } catch (err) {
    warn(`${errorText(err)}\n(running it again)`);
    return null;
  }
}

/**
 * Run a batch into `opts.outDir`: one folder per scenario (named after the scenario,
 * made unique in file order), index.json at the end (and after each entry, so an
 * interrupted batch still lists what finished). Runs share one pool and go in parallel;
 * sweeps run one after another, each over the whole pool. With `resume`, a run whose
 * folder holds a summary.json of the same scenario hash is not run again and sweeps
 * resume. Throws InputError only when `paths` cannot be searched.
 */
export async function runBatch(paths: readonly string[], opts: BatchOptions): Promise<BatchIndex> {
  const warn = opts.onWarning ?? (() => undefined);
  const scan = scanScenarioFiles(paths, [opts.outDir]);
  if (scan.skipped.length > 0) opts.onSkipped?.(skippedLine(scan.skipped));
  const files = scan.files;
  if (files.length === 0) {
    throw new InputError(null, [
      {
        path: 'PATH',
        message: `expected .yaml, .yml or .json scenario files, found none under ${paths.join(', ')}${scan.skipped.length > 0 ? ` (${skippedLine(scan.skipped)})` : ''}`,
      },
    ]);
  }
  opts.openOut?.(opts.outDir);
  fs.mkdirSync(opts.outDir, { recursive: true });
  const taken = new Set<string>([BATCH_FILES.index.toLowerCase(), BATCH_FILES.indexHtml.toLowerCase()]);
  const entries: BatchEntry[] = [];
  const jobs: { entry: BatchEntry; scenario: Scenario; dir: string }[] = [];
  const bad: BatchEntry[] = [];
  for (const file of files) {
    const e = entryBase(file);
    entries.push(e);
    try {
      const loaded = loadScenarioFile(file);
      for (const w of loaded.warnings) warn(`${file}: ${w.path ? `${w.path}: ` : ''}${w.message}`);
      const s = withEngine(loaded.scenario, opts.engine);
      e.name = s.name;
      e.kind = s.sweep ? 'sweep' : 'run';
      e.folder = uniqueName(safeFolderName(s.name), taken);
      // Until it finishes, an entry reads as not run (what an index of a killed batch should say).
      e.status = 'failed';
      e.error = 'not run: the batch stopped before it finished';
      jobs.push({ entry: e, scenario: s, dir: path.join(opts.outDir, e.folder) });
    } catch (err) {
      e.status = 'bad-input';
      e.error = errorText(err);
      bad.push(e);
    }
  }

  let done = 0;
  const total = entries.length;
  // Paths in index.json are relative to the batch folder, so a moved or shared folder still finds them.
  const writeIndex = (): BatchIndex => {
    const index: BatchIndex = entries.map((e) => ({ ...e, file: relativeTo(opts.outDir, e.file) }));
    const file = path.join(opts.outDir, BATCH_INDEX_FILE);
    fs.writeFileSync(`${file}.tmp-${process.pid}`, `${JSON.stringify(index, null, 2)}\n`);
    fs.renameSync(`${file}.tmp-${process.pid}`, file);
    return index;
  };
  const finish = (e: BatchEntry) => {
    done++;
    writeIndex();
    opts.onEntry?.(e, done, total);
  };
  for (const e of bad) finish(e);

  const exec: Executor = createExecutor(Math.max(1, opts.jobs ?? 1), opts.inProcess ?? false);
  const onAbort = () => void exec.destroy();
  opts.signal?.addEventListener('abort', onAbort);
  try {
    const runs = jobs
      .filter((j) => j.entry.kind === 'run')
      .map(async ({ entry: e, scenario, dir }) => {
        const t0 = Date.now();
        try {
          const prior = opts.resume ? finishedRun(dir, scenarioSha256(scenario), warn) : null;
          if (prior) {
            fillFromRun(e, prior);
          } else {
            const art = await exec.run({ type: 'run', scenario });
            fs.mkdirSync(dir, { recursive: true });
            opts.hooks.writeRun(dir, art);
            fillFromRun(e, art.summary);
          }
        } catch (err) {
          e.status = 'failed';
          e.error =
            err instanceof ExecutorStopped || opts.signal?.aborted
              ? 'stopped before it finished'
              : errorText(err);
        }
        e.wall_s = (Date.now() - t0) / 1000;
        finish(e);
      });
    for (const { entry: e, scenario, dir } of jobs.filter((j) => j.entry.kind === 'sweep')) {
      const t0 = Date.now();
      if (opts.signal?.aborted) {
        e.status = 'failed';
        e.error = 'stopped before it started';
        finish(e);
        continue;
      }
      try {
        const out = await runSweep(scenario, {
          outDir: dir,
          source: e.file,
          resume: opts.resume,
          full: opts.full ?? false,
          executor: exec,
          signal: opts.signal,
          onWarning: warn,
          onProgress: (d, t, rec) => opts.onSweepProgress?.(scenario.name, d, t, rec),
        });
        fillFromSweep(e, out, scenario);
        if (!out.interrupted) {
          try {
            opts.hooks.afterSweep?.(dir);
          } catch (err) {
            warn(`${dir}: the sweep report could not be written: ${errorText(err)}`);
          }
        }
      } catch (err) {
        e.status = err instanceof InputError ? 'bad-input' : 'failed';
        e.error = errorText(err);
      }
      e.wall_s = (Date.now() - t0) / 1000;
      finish(e);
    }
    await Promise.all(runs);
  } finally {
    opts.signal?.removeEventListener('abort', onAbort);
    await exec.destroy();
  }
  return writeIndex();
}

/** Counts of a batch index by status. */
export function batchCounts(index: readonly BatchIndexEntry[]): {
  total: number;
  ok: number;
  failed: number;
  bad_input: number;
} {
  return {
    total: index.length,
    ok: index.filter((x) => x.status === 'ok').length,
    failed: index.filter((x) => x.status === 'failed').length,
    bad_input: index.filter((x) => x.status === 'bad-input').length,
  };
}
