/**
 * `dithercav merge DIR... [--out DIR] [--quiet]`: join the shard folders of one sweep
 * into one folder (points.ndjson, sweep.json, map.json, report.html). Default output:
 * the first folder's parent/<scenario name>-merged. Shards of different scenarios are
 * refused (exit 2); missing points are allowed and listed.
 */
import type { Command } from 'commander';
import type { CommandContext } from '../main';
import { mergeShards } from '../../sweep/merge';
import { writeSweepReport } from '../../report/sweep-report';
import { recommendedPointLine } from '../format';
import { FORCE_HELP, openResultFolder } from '../result-folder';
import type { FolderLock } from '../../results/lock';

/** Register `merge`. */
export function registerMerge(program: Command, ctx: CommandContext): void {
  program
    .command('merge')
    .description('combine the shards of one sweep into one result and report')
    .argument('<dirs...>', 'shard folders (each holding sweep.json and points.ndjson)')
    .option('--out <dir>', 'output folder (default: next to the first folder, <name>-merged)')
    .option('--quiet', 'no warnings about dropped lines or missing points')
    .option('--force', FORCE_HELP)
    .action((dirs: string[], opts: { out?: string; quiet?: boolean; force?: boolean }) => {
      const warn = (m: string) => {
        if (!opts.quiet) process.stderr.write(`dithercav merge: warning: ${m}\n`);
      };
      let lock: FolderLock | null = null;
      const out = mergeShards(dirs, {
        outDir: opts.out,
        onWarning: warn,
        openOut: (dir) => {
          lock = openResultFolder(dir, 'sweep', { force: opts.force, label: 'dithercav merge' });
        },
      });
      (lock as FolderLock | null)?.release();
      if (out.missing > 0)
        warn(
          `${out.missing} of ${out.header.total_points} grid points are in none of the folders (a shard missing?)`,
        );
      try {
        writeSweepReport(out.dir);
      } catch (err) {
        process.stderr.write(`dithercav merge: the report could not be written: ${(err as Error).message}\n`);
        ctx.setExit(1);
      }
      process.stdout.write(
        `merged ${dirs.length} folder(s): ${out.records.length}/${out.header.total_points} points of '${out.header.name}'${(out.map.inferred_points ?? 0) > 0 ? ` computed, ${out.map.inferred_points} inferred (refined map)` : ''} -> ${out.dir}\n`,
      );
      const pointLine = recommendedPointLine(out.map);
      if (pointLine !== null) process.stdout.write(`${pointLine}\n`);
      ctx.setExit(0);
    });
}
