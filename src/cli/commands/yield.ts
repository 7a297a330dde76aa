/**
 * `dithercav yield FILE --draws N [--out DIR] [--jobs N] [--resume] [--shard I/N] [--engine E] [--quiet]`:
 * draw N scenarios from the scenario's `tolerances` section (seeded), run them through the
 * sweep machinery (workers, resume, shards, progress) into DIR, and write yield.json,
 * draws.csv and report.html (docs/model.md §7). Exit 0 when every draw ran, 1 when some
 * failed numerically, 2 for bad input, 130 after Ctrl-C (finished draws kept).
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { Command } from 'commander';
import type { CommandContext } from '../main';
import { InputError } from '../../scenario/errors';
import { loadScenarioFile } from '../../scenario/load';
import { resolveShard } from '../../sweep/shard';
import { runSweep } from '../../sweep/run-sweep';
import { safeFolderName } from '../../sweep/batch';
import { drawsCsv, planDraws, summariseYield } from '../../sweep/yield';
import { readPoints, SWEEP_FILES } from '../../sweep/persist';
import { YIELD_FILES } from '../../results/yield';
import { writeYieldReport } from '../../report/yield-report';
import { formatDuration } from '../progress';
import {
  addPointRunOptions,
  exitIfStopped,
  parseJobs,
  PointRunCliOptions,
  pointRunFolder,
  pointRunSweepOptions,
  printLoadWarnings,
  withProgress,
} from './sweep';
import { formatSI } from '../../scenario/units';

interface YieldCliOptions extends PointRunCliOptions {
  draws: string;
}

/** `--draws N`: a whole number >= 1. */
export function parseDraws(text: string): number {
  const n = Number(text);
  if (!Number.isInteger(n) || n < 1)
    throw new InputError(null, [
      { path: '--draws', message: `expected a whole number >= 1, found '${text}'` },
    ]);
  return n;
}

/** Register `yield`. */
export function registerYield(program: Command, ctx: CommandContext): void {
  const cmd = program
    .command('yield')
    .description(
      "draw N scenarios from the scenario's tolerances section and report the fraction that works; writes yield.json, draws.csv, points.ndjson and report.html",
    )
    .argument('<file>', 'scenario file (YAML or JSON) with a tolerances section')
    .requiredOption('--draws <n>', 'number of drawn scenarios');
  addPointRunOptions(cmd, 'reports/<scenario name>-yield/', 'draws').action(
    async (file: string, opts: YieldCliOptions) => {
      const draws = parseDraws(opts.draws);
      const jobs = parseJobs(opts.jobs);
      const shard = resolveShard(opts.shard);
      const loaded = loadScenarioFile(file);
      const s = loaded.scenario;
      const plan = planDraws(s, draws, file);
      printLoadWarnings(file, loaded.warnings);
      const base = opts.out ?? path.join('reports', `${safeFolderName(s.name)}-yield`);
      const { dir, label } = pointRunFolder('yield', s.name, base, shard);
      const t0 = Date.now();
      const { out, stopped } = await withProgress(label, opts.quiet, (signal, progress) =>
        runSweep(s, {
          ...pointRunSweepOptions(file, dir, jobs, shard, opts, signal, progress),
          pointSet: plan,
          onProgress: (done, total) => progress.update(done, total),
        }),
      );
      // every record in the folder (resumed ones included) from points.ndjson
      const all = readPoints(path.join(dir, SWEEP_FILES.points)).records;
      const summary = summariseYield(plan, s.name, all);
      fs.writeFileSync(path.join(dir, YIELD_FILES.summary), `${JSON.stringify(summary, null, 2)}\n`);
      fs.writeFileSync(path.join(dir, YIELD_FILES.csv), drawsCsv(plan, all));
      try {
        writeYieldReport(dir);
      } catch (err) {
        process.stderr.write(`dithercav yield: the report could not be written: ${(err as Error).message}\n`);
        ctx.setExit(1);
      }
      const pc = (v: number | null) => (v === null ? 'n/a' : `${(100 * v).toFixed(1)} %`);
      const floorText =
        summary.gap_power_floor_W !== null
          ? `, ${pc(summary.yield_above_floor)} at or above ${formatSI(summary.gap_power_floor_W, 'W')}`
          : '';
      const top = summary.ranking[0];
      process.stdout.write(
        `${label}: ${out.finished}/${out.planned} draws in ${formatDuration((Date.now() - t0) / 1000)} -> ${dir}\n` +
          `  decoupled ${pc(summary.yield_decoupled)}${floorText}\n` +
          `  gap power p5 / p50 / p95: ${[summary.gap_power_percentiles_W.p5, summary.gap_power_percentiles_W.p50, summary.gap_power_percentiles_W.p95].map((v) => (v === null ? 'n/a' : formatSI(v, 'W'))).join(' / ')}\n` +
          (top && top.rho_gap_power !== null
            ? `  strongest tolerance: ${top.key} (rank correlation with gap power ${top.rho_gap_power.toFixed(2)})\n`
            : ''),
      );
      exitIfStopped(stopped, label, out.finished, 'draws', dir);
      ctx.setExit(out.failed > 0 || out.interrupted ? 1 : 0);
    },
  );
}
