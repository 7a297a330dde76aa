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
import { runSweep } from '../../sweep/run-sweep';
import { safeFolderName } from '../../sweep/batch';
import { createProgress, formatDuration } from '../progress';
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

interface SweepCliOptions {
  out?: string;
  jobs?: string;
  resume?: boolean;
  shard?: string;
  quiet?: boolean;
  engine?: EngineChoice;
  force?: boolean;
  full?: boolean;
}

/** Register `sweep`. */
export function registerSweep(program: Command, ctx: CommandContext): void {
  program
    .command('sweep')
    .description(
      "the grid in the scenario's sweep section; writes points.ndjson, map.json, sweep.json and report.html",
    )
    .argument('<file>', 'scenario file (YAML or JSON) with a sweep section')
    .option('--out <dir>', 'output folder (default reports/<scenario name>/)')
    .option('--jobs <n>', 'worker threads (default: the available processors)')
    .option('--resume', 'keep the points already in the folder and run the others')
    .option(
      '--shard <i/n>',
      'run shard I of N (points with index % N == I - 1); default from SLURM_ARRAY_TASK_ID/COUNT',
    )
    .option(
      '--full',
      'compute every grid point (default: a coarse grid refined where neighbouring points differ; the rest is inferred and marked so)',
    )
    .option('--quiet', 'no progress output')
    .addOption(new Option('--engine <engine>', 'override simulation.engine').choices(ENGINE_CHOICES))
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
      for (const w of loaded.warnings)
        process.stderr.write(`${file}: warning: ${w.path ? `${w.path}: ` : ''}${w.message}\n`);
      const base = opts.out ?? path.join('reports', safeFolderName(s.name));
      const dir = shard ? path.join(base, shardFolderName(shard)) : base;
      const label = `sweep ${s.name}${shard ? ` (shard ${shard.index}/${shard.count})` : ''}`;
      const lock = openResultFolder(dir, 'sweep', { force: opts.force, label: 'dithercav sweep' });
      const progress = createProgress({ label, total: 0, quiet: opts.quiet });
      const stop = interruptOnSignal((m) => progress.log(m));
      const t0 = Date.now();
      let out;
      try {
        out = await runSweep(s, {
          outDir: dir,
          source: file,
          jobs,
          resume: opts.resume ?? false,
          shard,
          engine: opts.engine,
          full: opts.full ?? false,
          signal: stop.signal,
          onWarning: (m) => progress.log(`warning: ${m}`),
          onProgress: (done, total, _rec, bound) =>
            progress.update(done, total, bound?.refining ? bound.upper : undefined),
        });
      } finally {
        progress.stop();
        stop.dispose();
        lock.release();
      }
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
      if (stop.signal.aborted) {
        process.stderr.write(
          `${label}: stopped; ${out.finished} finished points kept in ${dir} (continue with --resume)\n`,
        );
        process.exit(130);
      }
      for (const line of sweepEndLines(label, out)) process.stderr.write(`${line}\n`);
      ctx.setExit(sweepExitCode(out));
    });
}
