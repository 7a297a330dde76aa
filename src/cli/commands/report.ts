/**
 * `dithercav report DIR`: rebuild report.html (run, sweep, waveform comparison) or
 * index.html (batch) from the saved result files, with no simulation. A folder holding none
 * of summary.json, map.json, compare.json, index.json is bad input (exit 2).
 */
import type { Command } from 'commander';
import { rebuildReport } from '../../report/rebuild';
import type { CommandContext } from '../main';

export function registerReport(program: Command, ctx: CommandContext): void {
  program
    .command('report')
    .description(
      'rebuild the HTML report of a run, sweep, comparison or batch folder from its saved results (no simulation)',
    )
    .argument(
      '<dir>',
      'result folder: a run (summary.json), a sweep (map.json), a comparison (compare.json) or a batch (index.json)',
    )
    .action((dir: string) => {
      const r = rebuildReport(dir);
      for (const f of r.written) process.stdout.write(`wrote ${f}\n`);
      ctx.setExit(0);
    });
}
