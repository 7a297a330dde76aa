/**
 * `dithercav run FILE [--out DIR] [--engine auto|exact|fast] [--seed N] [--quiet]`: one
 * driven run plus its free-running and static references, written to DIR (default
 * reports/<scenario name>/), with a short table on stdout. Exit 0 when the run finished,
 * 1 on a numerical failure (the folder is still written), 2 on bad input.
 */
import * as path from 'node:path';
import { Command, Option } from 'commander';
import type { CommandContext } from '../main';
import { runHeadline } from '../../report/headline';
import { InputError } from '../../scenario/errors';
import { loadScenarioFile } from '../../scenario/load';
import { runScenario, EngineChoice, ENGINE_CHOICES } from '../../simulate/run';
import type { RunSummary } from '../../results/summary';
import { createRunProgress } from '../progress';
import { formatTable } from '../format';
import { formatSI } from '../../scenario/units';
import { writeRunFolder } from '../run-folder';
import { safeFolderName } from '../../sweep/batch';

function parseSeed(text: string | undefined): number | undefined {
  if (text === undefined) return undefined;
  const n = Number(text);
  if (!Number.isInteger(n) || n < 0 || n > 2 ** 32 - 1)
    throw new InputError(null, [
      { path: '--seed', message: `expected a whole number from 0 to 4294967295, found '${text}'` },
    ]);
  return n;
}

const w = (v: number | null | undefined) =>
  v === null || v === undefined || !Number.isFinite(v) ? 'not computed' : formatSI(v, 'W');
const num = (v: number | null | undefined, digits = 3) =>
  v === null || v === undefined || !Number.isFinite(v)
    ? 'not computed'
    : String(Number(v.toPrecision(digits)));

/** The short table printed after a run. */
export function formatRunTable(s: RunSummary): string {
  const head = runHeadline(s).map((h, k) => [`${k + 1}. ${h.question}`, h.answer]);
  const rows: string[][] = [['', 'gap power', 'laser output (net)', 'laser intracavity']];
  rows.push(['free-running', '-', w(s.free_running.output_W), w(s.free_running.intracavity_W)]);
  if (s.static) {
    rows.push([
      'mirror held still, mean',
      w(s.static.external_W.mean),
      w(s.static.laser_output_W.mean),
      w(s.static.intracavity_W.mean),
    ]);
    rows.push([
      'mirror held still, min / max',
      `${w(s.static.external_W.min)} / ${w(s.static.external_W.max)}`,
      '',
      '',
    ]);
  }
  if (s.driven) {
    rows.push([
      'dithered, mean',
      w(s.driven.external_mean_W),
      w(s.driven.laser_output_mean_W),
      w(s.driven.laser_intracavity_mean_W),
    ]);
    rows.push([
      'dithered, spread over rest positions',
      `${w(s.driven.external_mean_by_offset_W.min)} .. ${w(s.driven.external_mean_by_offset_W.max)}`,
      '',
      '',
    ]);
  }
  const lines = [formatTable(head), '', formatTable(rows)];
  if (s.driven) {
    lines.push('');
    lines.push(
      formatTable([
        ['class', `${s.driven.class} (${s.driven.class_reason})`],
        [
          'gain over the mirror held still (mean over the same rest positions)',
          num(s.driven.gain_over_static),
        ],
        [
          'gain over the still-mirror curve at the same positions (used by the class)',
          num(s.driven.gain_over_quasi_static),
        ],
        ['enhancement (gap power over the free-running intracavity power)', num(s.driven.enhancement)],
        ['incoherent fraction (gap power over the phase-averaged level)', num(s.driven.incoherent_fraction)],
        ['ripple in band / full band', `${num(s.driven.ripple_rel)} / ${num(s.driven.ripple_full_band_rel)}`],
        ['hops per second / per period', `${num(s.driven.hops_per_s)} / ${num(s.driven.hops_per_period)}`],
        [
          'peak mirror speed / critical speed',
          `${num(s.drive.peak_speed_m_s)} m/s / ${num(s.drive.critical_speed_m_s)} m/s`,
        ],
        [
          'power balance error / interface mismatch at the output coupler',
          `${num(s.power_balance?.relative_error, 2)} / ${num(s.power_balance?.interface_mismatch_rel, 2)}`,
        ],
        ['engine', `${s.engine} (${s.engine_reason})`],
        [
          'time',
          `${s.timing.wall_s.toFixed(1)} s wall-clock, ${Number.isFinite(s.timing.mode_steps_per_s) ? s.timing.mode_steps_per_s.toExponential(2) : 'not computed'} mode-steps per second (time steps x laser modes)`,
        ],
      ]),
    );
  }
  if (s.status !== 'ok') lines.push(`\nnumerical failure: ${s.message ?? 'unknown'}`);
  for (const wn of s.warnings) lines.push(`warning: ${wn.message}`);
  return lines.join('\n');
}

export function registerRun(program: Command, ctx: CommandContext): void {
  program
    .command('run')
    .description('one driven run plus its free-running and static references')
    .argument('<file>', 'scenario file (YAML or JSON)')
    .option('--out <dir>', 'output folder (default reports/<scenario name>/)')
    .addOption(new Option('--engine <engine>', 'time-stepping engine').choices(ENGINE_CHOICES))
    .option('--seed <n>', 'seed of the spontaneous-emission noise (overrides simulation.seed)')
    .option('--quiet', 'no progress output')
    .action((file: string, o: { out?: string; engine?: EngineChoice; seed?: string; quiet?: boolean }) => {
      const seed = parseSeed(o.seed);
      const loaded = loadScenarioFile(file);
      for (const wn of loaded.warnings ?? [])
        process.stderr.write(
          `dithercav: ${file}${wn.line !== undefined ? `:${wn.line}` : ''}: warning: ${wn.path}: ${wn.message}\n`,
        );
      const s = loaded.scenario;
      const out = o.out ?? path.join('reports', safeFolderName(s.name));
      const progress = createRunProgress({ label: `run ${s.name}`, quiet: o.quiet });
      let artifacts;
      try {
        artifacts = runScenario(s, { engine: o.engine, seed, onProgress: progress.onProgress });
      } finally {
        progress.stop();
      }
      const report = writeRunFolder(out, artifacts, 'dithercav run');
      process.stdout.write(
        `${formatRunTable(artifacts.summary)}\n\nresults in ${out}${report ? ` (report: ${report})` : ''}\n`,
      );
      if (artifacts.summary.status !== 'ok') ctx.setExit(1);
    });
}
