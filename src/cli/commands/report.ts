/**
 * `dithercav report DIR`: rebuild report.html (run, sweep, yield, waveform comparison) or
 * index.html (batch) from the saved result files, with no simulation. `dithercav report
 * DIR_A DIR_B [--out FILE]`: one page comparing two run folders or two sweep folders
 * (default reports/comparison.html). A folder holding none of summary.json, map.json,
 * yield.json, compare.json, index.json is bad input (exit 2).
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import type { Command } from 'commander';
import { rebuildReport } from '../../report/rebuild';
import { COMPARISON_FILE, writeComparison } from '../../report/comparison-report';
import type { CommandContext } from '../main';

export function registerReport(program: Command, ctx: CommandContext): void {
  program
    .command('report')
    .description(
      'rebuild the HTML report of a run, sweep, yield, waveform comparison or batch folder from its saved results, or compare two designs (no simulation)',
    )
    .argument(
      '<dir>',
      'result folder: a run (summary.json), a sweep (map.json), a yield (yield.json), a waveform comparison (compare.json) or a batch (index.json)',
    )
    .argument('[other]', 'a second run or sweep folder: write one page comparing the two designs')
    .option('--out <file>', `comparison page to write (default reports/${COMPARISON_FILE})`)
    .action((dir: string, other: string | undefined, opts: { out?: string }) => {
      if (other !== undefined) {
        const out = opts.out ?? path.join('reports', COMPARISON_FILE);
        fs.mkdirSync(path.dirname(path.resolve(out)), { recursive: true });
        process.stdout.write(`wrote ${writeComparison(dir, other, out)}\n`);
        ctx.setExit(0);
        return;
      }
      const r = rebuildReport(dir);
      for (const f of r.written) process.stdout.write(`wrote ${f}\n`);
      ctx.setExit(0);
    });
}
