/**
 * `dithercav batch PATH... [--out DIR] [--jobs N] [--resume] [--full] [--quiet] [--engine E]`:
 * every .yaml/.yml/.json scenario under the paths (recursive, sorted), run or swept by
 * content, one folder each under DIR (default reports/batch/), with index.json (and
 * index.html from the report room) listing every file: status, class or error, key
 * figures, folder. A bad file is reported and skipped. Exit 0 all ok; 1 any failed or
 * refused; 2 only when nothing could run because of the command line or paths.
 */
import * as path from 'node:path';
import { Command, Option } from 'commander';
import type { CommandContext } from '../main';
import { ENGINE_CHOICES, EngineChoice } from '../../scenario/schema';
import { batchCounts, runBatch } from '../../sweep/batch';
import { writeBatchIndexHtml } from '../../report/batch-index';
import { writeSweepReport } from '../../report/sweep-report';
import { writeRunFolder } from '../run-folder';
import type { BatchHooks, BatchIndex } from '../../sweep/batch';
import { createProgress } from '../progress';
import type { ProgressReporter } from '../progress';
import { interruptOnSignal, parseJobs } from './sweep';
import { FORCE_HELP, openResultFolder } from '../result-folder';
import { BATCH_FILES } from '../../results/files';
import type { FolderLock } from '../../results/lock';

interface BatchCliOptions {
  out?: string;
  jobs?: string;
  resume?: boolean;
  quiet?: boolean;
  engine?: EngineChoice;
  force?: boolean;
  full?: boolean;
}

/** Register `batch`. */
export function registerBatch(program: Command, ctx: CommandContext): void {
  program
    .command('batch')
    .description(
      'every scenario file under the paths (run or sweep by content), one folder each plus index.json and index.html',
    )
    .argument('<paths...>', 'scenario files or folders to search (recursive) for .yaml, .yml, .json')
    .option('--out <dir>', 'output folder (default reports/batch/)')
    .option('--jobs <n>', 'worker threads (default: the available processors)')
    .option('--resume', 'skip finished runs and resume sweeps')
    .option('--full', 'sweeps compute every grid point (default: refined where neighbouring points differ)')
    .option('--quiet', 'no progress output')
    .addOption(new Option('--engine <engine>', 'override simulation.engine').choices(ENGINE_CHOICES))
    .option('--force', FORCE_HELP)
    .action(async (paths: string[], opts: BatchCliOptions) => {
      const jobs = parseJobs(opts.jobs);
      const outDir = opts.out ?? path.join('reports', 'batch');
      const log = (m: string) => (bar ? bar.log(m) : process.stderr.write(`${m}\n`));
      let bar: ProgressReporter | null = null;
      let barName = '';
      const stop = interruptOnSignal((m) => log(`batch: ${m}`));
      const hooks: BatchHooks = {
        writeRun: writeRunFolder,
        afterSweep: (dir) => void writeSweepReport(dir),
      };
      let index: BatchIndex;
      let lock: FolderLock | null = null;
      try {
        index = await runBatch(paths, {
          outDir,
          jobs,
          resume: opts.resume ?? false,
          engine: opts.engine,
          full: opts.full ?? false,
          signal: stop.signal,
          hooks,
          onWarning: (m) => log(`warning: ${m}`),
          onSkipped: (line) => log(`batch: ${line}`),
          openOut: (dir) => {
            lock = openResultFolder(dir, 'batch', { force: opts.force, label: 'dithercav batch' });
          },
          onEntry: (e, done, total) => {
            const what =
              e.status === 'ok' ? `ok${e.class ? ` (${e.class})` : ''}` : `${e.status}: ${e.error ?? ''}`;
            if (!opts.quiet || e.status !== 'ok') log(`batch [${done}/${total}] ${e.file}: ${what}`);
          },
          onSweepProgress: (name, done, total) => {
            if (opts.quiet) return;
            if (!bar || barName !== name) {
              bar?.stop();
              bar = createProgress({ label: `sweep ${name}`, total });
              barName = name;
            }
            bar.update(done, total);
          },
        });
      } finally {
        (bar as ProgressReporter | null)?.stop();
        bar = null;
        stop.dispose();
      }
      try {
        writeBatchIndexHtml(outDir, index);
      } catch (err) {
        process.stderr.write(`dithercav batch: index.html could not be written: ${(err as Error).message}\n`);
      }
      (lock as FolderLock | null)?.release();
      const c = batchCounts(index);
      process.stdout.write(
        `batch: ${c.total} scenario(s): ${c.ok} ok, ${c.failed} failed, ${c.bad_input} bad input -> ${path.join(outDir, BATCH_FILES.index)}\n`,
      );
      if (stop.signal.aborted) process.exit(130);
      ctx.setExit(c.failed > 0 || c.bad_input > 0 ? 1 : 0);
    });
}
