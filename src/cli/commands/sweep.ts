/**
 * `dithercav sweep FILE [--out DIR] [--jobs N] [--resume] [--shard I/N] [--full] [--quiet] [--engine E]`:
 * the grid of the scenario's `sweep` section, refined where the answer changes (a coarse
 * grid first, then subdivided where neighbours differ; src/sweep/refine.ts) or every
 * point with --full, one point per worker thread at a time,
 * into DIR (default reports/<scenario name>/; a shard into DIR/shard-I-of-N/):
 * points.ndjson (appended as each point finishes), sweep.json, map.json, report.html.
 * Exit 0 when every point ran, 1 when some point failed numerically or the sweep was
 * cut short by an error, 2 for bad input, 130 after Ctrl-C (finished points kept).
 */
import * as path from 'node:path';
import { Command, Option } from 'commander';
import type { CommandContext } from '../main';
import { InputError } from '../../scenario/errors';
import { loadScenarioFile } from '../../scenario/load';
import { ENGINE_CHOICES, EngineChoice } from '../../scenario/schema';
import { defaultJobs } from '../../sweep/pool';
import { resolveShard, shardFolderName } from '../../sweep/shard';
import type { Shard } from '../../sweep/shard';
import type { InputProblem } from '../../scenario/errors';
import { runSweep } from '../../sweep/run-sweep';
import type { SweepOptions } from '../../sweep/run-sweep';
import { safeFolderName } from '../../sweep/batch';
import { createProgress, formatDuration } from '../progress';
import type { ProgressReporter } from '../progress';
import { writeSweepReport } from '../../report/sweep-report';
import { recommendedPointLine } from '../format';
import { FORCE_HELP, openResultFolder } from '../result-folder';

/** `--jobs N`: a whole number >= 1; absent: os.availableParallelism(). Throws InputError otherwise. */
export function parseJobs(text: string | undefined): number {
  if (text === undefined) return defaultJobs();
  const n = Number(text);
  if (!Number.isInteger(n) || n < 1)
    throw new InputError(null, [
      { path: '--jobs', message: `expected a whole number >= 1, found '${text}'` },
    ]);
  return n;
}

/**
 * Turn the first SIGINT/SIGTERM into an abort (the command stops starting work, keeps
 * what finished, then exits 130); a second one quits at once. Returns the signal and a
 * function removing the handlers.
 */
export function interruptOnSignal(onFirst: (message: string) => void): {
  signal: AbortSignal;
  dispose: () => void;
} {
  const ac = new AbortController();
  const handler = () => {
    if (ac.signal.aborted) process.exit(130);
    onFirst('stopping: finished points are kept (press Ctrl-C again to quit at once)');
    ac.abort();
  };
  process.on('SIGINT', handler);
  process.on('SIGTERM', handler);
  return {
    signal: ac.signal,
    dispose: () => {
      process.off('SIGINT', handler);
      process.off('SIGTERM', handler);
    },
  };
}

/** The counts of a finished (or stopped by an error) sweep that decide its exit code. */
export interface SweepCounts {
  failed: number;
  errors: number;
  interrupted: boolean;
}

/**
 * Exit code of a sweep that was not stopped by Ctrl-C: 1 when a point failed numerically,
 * a point's run threw (status 'error', a program error), or points are missing; else 0.
 */
export function sweepExitCode(c: SweepCounts): 0 | 1 {
  return c.failed > 0 || c.errors > 0 || c.interrupted ? 1 : 0;
}

/** What the sweep says at the end about failed and erroneous points (stderr lines). */
export function sweepEndLines(label: string, c: SweepCounts): string[] {
  const lines: string[] = [];
  if (c.errors > 0)
    lines.push(
      `${label}: ${c.errors} point(s) stopped on an error, not a numerical failure (status error, message and stack in points.ndjson): please report it`,
    );
  if (c.failed > 0)
    lines.push(`${label}: ${c.failed} point(s) failed (class numerical-failure, see points.ndjson)`);
  return lines;
}

/** The options of the commands that run the sweep machinery (`sweep`, `yield`). */
export interface PointRunCliOptions {
  out?: string;
  jobs?: string;
  resume?: boolean;
  shard?: string;
  quiet?: boolean;
  engine?: EngineChoice;
}

/**
 * Add the options of a command that runs the sweep machinery: --out (default `outDefault`),
 * --jobs, --resume, --shard, --quiet, --engine; `what` names its points ('points', 'draws').
 */
export function addPointRunOptions(cmd: Command, outDefault: string, what: string): Command {
  return cmd
    .option('--out <dir>', `output folder (default ${outDefault})`)
    .option('--jobs <n>', 'worker threads (default: the available processors)')
    .option('--resume', `keep the ${what} already in the folder and run the others`)
    .option(
      '--shard <i/n>',
      `run shard I of N (${what} with index % N == I - 1); default from SLURM_ARRAY_TASK_ID/COUNT`,
    )
    .option('--quiet', 'no progress output')
    .addOption(new Option('--engine <engine>', 'override simulation.engine').choices(ENGINE_CHOICES));
}

/** Print a scenario file's warnings to stderr, one line each. */
export function printLoadWarnings(file: string, warnings: InputProblem[]): void {
  for (const w of warnings)
    process.stderr.write(`${file}: warning: ${w.path ? `${w.path}: ` : ''}${w.message}\n`);
}

/** The folder a point run writes to (a shard's below the base) and the label of its lines. */
export function pointRunFolder(
  command: string,
  name: string,
  base: string,
  shard: Shard | null,
): { dir: string; label: string } {
  return {
    dir: shard ? path.join(base, shardFolderName(shard)) : base,
    label: `${command} ${name}${shard ? ` (shard ${shard.index}/${shard.count})` : ''}`,
  };
}

/**
 * Run `body` with a progress line on stderr and the first Ctrl-C turned into a stop
 * (interruptOnSignal); `release` runs after it whatever happens. Returns its outcome and
 * whether it was stopped.
 */
export async function withProgress<T>(
  label: string,
  quiet: boolean | undefined,
  body: (signal: AbortSignal, progress: ProgressReporter) => Promise<T>,
  release?: () => void,
): Promise<{ out: T; stopped: boolean }> {
  const progress = createProgress({ label, total: 0, quiet });
  const stop = interruptOnSignal((m) => progress.log(m));
  try {
    const out = await body(stop.signal, progress);
    return { out, stopped: stop.signal.aborted };
  } finally {
    progress.stop();
    stop.dispose();
    release?.();
  }
}

/** The runSweep options that follow from the shared command-line options. */
export function pointRunSweepOptions(
  file: string,
  dir: string,
  jobs: number,
  shard: Shard | null,
  opts: PointRunCliOptions,
  signal: AbortSignal,
  progress: ProgressReporter,
): SweepOptions {
  return {
    outDir: dir,
    source: file,
    jobs,
    resume: opts.resume ?? false,
    shard,
    engine: opts.engine,
    signal,
    onWarning: (m) => progress.log(`warning: ${m}`),
  };
}

/** After a stop by Ctrl-C: say what was kept and exit 130. */
export function exitIfStopped(
  stopped: boolean,
  label: string,
  finished: number,
  what: string,
  dir: string,
): void {
  if (!stopped) return;
  process.stderr.write(
    `${label}: stopped; ${finished} finished ${what} kept in ${dir} (continue with --resume)\n`,
  );
  process.exit(130);
}

interface SweepCliOptions extends PointRunCliOptions {
  force?: boolean;
  full?: boolean;
}

/** Register `sweep`. */
export function registerSweep(program: Command, ctx: CommandContext): void {
  const cmd = program
    .command('sweep')
    .description(
      "the grid in the scenario's sweep section; writes points.ndjson, map.json, sweep.json and report.html",
    )
    .argument('<file>', 'scenario file (YAML or JSON) with a sweep section');
  addPointRunOptions(cmd, 'reports/<scenario name>/', 'points')
    .option(
      '--full',
      'compute every grid point (default: a coarse grid refined where neighbouring points differ; the rest is inferred and marked so)',
    )
    .option('--force', FORCE_HELP)
    .action(async (file: string, opts: SweepCliOptions) => {
      const jobs = parseJobs(opts.jobs);
      const shard = resolveShard(opts.shard);
      const loaded = loadScenarioFile(file);
      const s = loaded.scenario;
      if (!s.sweep) {
        throw new InputError(file, [
          {
            path: 'sweep',
            message: 'expected a sweep section with axes, found none (use `dithercav run` for one run)',
          },
        ]);
      }
      printLoadWarnings(file, loaded.warnings);
      const base = opts.out ?? path.join('reports', safeFolderName(s.name));
      const { dir, label } = pointRunFolder('sweep', s.name, base, shard);
      const lock = openResultFolder(dir, 'sweep', { force: opts.force, label: 'dithercav sweep' });
      const t0 = Date.now();
      const { out, stopped } = await withProgress(
        label,
        opts.quiet,
        (signal, progress) =>
          runSweep(s, {
            ...pointRunSweepOptions(file, dir, jobs, shard, opts, signal, progress),
            full: opts.full ?? false,
            onProgress: (done, total, _rec, bound) =>
              progress.update(done, total, bound?.refining ? bound.upper : undefined),
          }),
        () => lock.release(),
      );
      try {
        writeSweepReport(dir);
      } catch (err) {
        process.stderr.write(`dithercav sweep: the report could not be written: ${(err as Error).message}\n`);
        ctx.setExit(1);
      }
      const counts = new Map<string, number>();
      out.map.classes.forEach((c, i) => {
        if (c && out.map.point_source?.[i] !== 'inferred') counts.set(c, (counts.get(c) ?? 0) + 1);
      });
      const classes = [...counts].map(([c, n]) => `${n} ${c}`).join(', ');
      const inferred =
        out.inferred > 0
          ? ` computed and ${out.inferred} inferred (not run: inside cells whose computed corners agree; marked in map.json, hatched in the report; --full computes every point)`
          : '';
      process.stdout.write(
        `${label}: ${out.finished}/${out.planned} points${inferred}${out.resumed > 0 ? ` (${out.resumed} resumed)` : ''}` +
          `${classes ? `: ${classes}` : ''} in ${formatDuration((Date.now() - t0) / 1000)} -> ${dir}\n`,
      );
      const pointLine = recommendedPointLine(out.map);
      if (pointLine !== null) process.stdout.write(`${pointLine}\n`);
      exitIfStopped(stopped, label, out.finished, 'points', dir);
      for (const line of sweepEndLines(label, out)) process.stderr.write(`${line}\n`);
      ctx.setExit(sweepExitCode(out));
    });
}
