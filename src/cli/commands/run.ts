/**
 * `dithercav run FILE [--out DIR] [--engine auto|exact|fast] [--seed N] [--quiet]`: one
 * driven run plus its free-running and static references, written to DIR (default
 * reports/<scenario name>/), with a short table on stdout. Exit 0 when the run finished,
 * 1 on a numerical failure (the folder is still written), 2 on bad input.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { Worker } from 'node:worker_threads';
import { Command, Option } from 'commander';
import type { CommandContext } from '../main';
import { runHeadline } from '../../report/headline';
import { InputError } from '../../scenario/errors';
import { loadScenarioFile } from '../../scenario/load';
import { runScenarioThreaded } from '../../simulate/parallel-run';
import { SPEED_CURVE_FILE } from '../../results/speed-curve';
import type { SpeedCurve } from '../../results/speed-curve';
import { ENGINE_CHOICES, EngineChoice } from '../../scenario/schema';
import type { RunSummary } from '../../results/summary';
import type { RunArtifacts } from '../../results/artifacts';
import type { RunThreadInput, RunThreadMessage } from '../run-thread';
import { createRunProgress } from '../progress';
import { formatTable } from '../format';
import { formatSI } from '../../scenario/units';
import { writeRunFolder } from '../run-folder';
import { safeFolderName } from '../../sweep/batch';
import { FORCE_HELP, openResultFolder } from '../result-folder';
import { parseJobs } from './sweep';

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
      'dithered, standard error',
      s.driven.external_mean_stderr_W === null ? '-' : w(s.driven.external_mean_stderr_W),
      s.driven.laser_output_mean_stderr_W === null ? '-' : w(s.driven.laser_output_mean_stderr_W),
      s.driven.laser_intracavity_mean_stderr_W === null ? '-' : w(s.driven.laser_intracavity_mean_stderr_W),
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
        [
          'statistics',
          `${s.driven.offsets_used} rest offsets x ${s.driven.periods_used ?? '-'} periods, relative standard error ${s.driven.external_mean_stderr_W === null ? '-' : num(s.driven.external_mean_stderr_W / s.driven.external_mean_W, 2)}, stopped by the ${s.driven.stopped_by === 'target' ? 'target error' : 'step budget'}`,
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

/** Thrown by runOnThread after Ctrl-C: the message says what was kept. */
class RunInterrupted extends Error {}

/**
 * What a stopped run leaves, in words: where it was (the last progress label and
 * fraction) and that nothing was written, since a run folder is written whole at the end.
 */
export function interruptedRunMessage(out: string, label: string | null, fraction: number): string {
  const f = Math.min(1, Math.max(0, fraction));
  const pct = f >= 0.01 ? ` (${Math.round(100 * f)} % of the run)` : '';
  const where =
    label === null
      ? 'before the simulation had started'
      : label.startsWith('driven run')
        ? `the free-running and static references had finished; the driven run was interrupted${pct}`
        : label.startsWith('static reference and')
          ? `the static reference and the driven run, stepping side by side, were interrupted${pct}`
          : `interrupted during the ${label}${pct}; the driven run had not started`;
  return `stopped: ${where}. No result was written to ${out}: a run folder is written whole when the run finishes, so no partial result can be mistaken for a finished one. Run the command again to redo it.`;
}

/**
 * A speed curve left in the output folder by an earlier run (the run checks its key and
 * reuses only a curve of the same laser and cavity), or null.
 */
function priorSpeedCurve(dir: string): SpeedCurve | null {
  try {
    const v = JSON.parse(fs.readFileSync(path.join(dir, SPEED_CURVE_FILE), 'utf8')) as SpeedCurve;
    return typeof v.key === 'string' && Array.isArray(v.forward) && Array.isArray(v.backward) ? v : null;
  } catch {
    return null;
  }
}

/**
 * Run the scenario on a worker thread (dist/cli/run-thread.js) so Ctrl-C is heard while
 * it computes: the first SIGINT/SIGTERM stops the thread, says what was kept and exits
 * 130; a second one exits at once. Without the compiled thread file (running from src/),
 * the run goes on this thread and Ctrl-C ends it with the default behaviour.
 */
async function runOnThread(
  input: RunThreadInput,
  out: string,
  onProgress: (f: number, label: string) => void,
  onStop: (message: string) => void,
): Promise<RunArtifacts> {
  const file = path.join(__dirname, '..', 'run-thread.js');
  if (!fs.existsSync(file))
    return runScenarioThreaded(input.scenario, {
      engine: input.engine,
      seed: input.seed,
      onProgress,
      speedCurve: input.speedCurve ?? null,
      threads: input.threads,
    });
  const worker = new Worker(file, { workerData: input });
  let label: string | null = null;
  let fraction = 0;
  let stopping = false;
  return new Promise<RunArtifacts>((resolve, reject) => {
    const onSignal = () => {
      if (stopping) process.exit(130);
      stopping = true;
      onStop(interruptedRunMessage(out, label, fraction));
      void worker.terminate().then(() => reject(new RunInterrupted()));
    };
    const done = () => {
      process.off('SIGINT', onSignal);
      process.off('SIGTERM', onSignal);
    };
    process.on('SIGINT', onSignal);
    process.on('SIGTERM', onSignal);
    worker.on('message', (m: RunThreadMessage) => {
      if (m.type === 'progress') {
        label = m.label;
        fraction = m.fraction;
        onProgress(m.fraction, m.label);
      } else if (m.type === 'done') {
        done();
        resolve(m.artifacts);
      } else if (m.type === 'input-error') {
        done();
        reject(new InputError(m.file, m.problems));
      } else {
        done();
        const err = new Error(m.message);
        if (m.stack) err.stack = m.stack;
        reject(err);
      }
    });
    worker.on('error', (err) => {
      done();
      reject(err);
    });
    worker.on('exit', (code) => {
      if (!stopping && code !== 0) {
        done();
        reject(new Error(`the run's thread ended with code ${code}`));
      }
    });
  });
}

export function registerRun(program: Command, ctx: CommandContext): void {
  program
    .command('run')
    .description('one driven run plus its free-running and static references')
    .argument('<file>', 'scenario file (YAML or JSON)')
    .option('--out <dir>', 'output folder (default reports/<scenario name>/)')
    .addOption(new Option('--engine <engine>', 'time-stepping engine').choices(ENGINE_CHOICES))
    .option('--seed <n>', 'seed of the spontaneous-emission noise (overrides simulation.seed)')
    .option(
      '--jobs <n>',
      'threads for the static reference and the driven lanes of the round-trip engine (default: the available processors; the result does not depend on it)',
    )
    .option('--quiet', 'no progress output')
    .option('--force', FORCE_HELP)
    .action(
      async (
        file: string,
        o: {
          out?: string;
          engine?: EngineChoice;
          seed?: string;
          jobs?: string;
          quiet?: boolean;
          force?: boolean;
        },
      ) => {
        const seed = parseSeed(o.seed);
        const threads = parseJobs(o.jobs);
        const loaded = loadScenarioFile(file);
        for (const wn of loaded.warnings ?? [])
          process.stderr.write(
            `dithercav: ${file}${wn.line !== undefined ? `:${wn.line}` : ''}: warning: ${wn.path}: ${wn.message}\n`,
          );
        const s = loaded.scenario;
        const out = o.out ?? path.join('reports', safeFolderName(s.name));
        const lock = openResultFolder(out, 'run', { force: o.force, label: 'dithercav run' });
        const progress = createRunProgress({ label: `run ${s.name}`, quiet: o.quiet });
        let artifacts: RunArtifacts;
        try {
          artifacts = await runOnThread(
            { scenario: s, engine: o.engine, seed, speedCurve: priorSpeedCurve(out), threads },
            out,
            progress.onProgress,
            (m) => {
              progress.stop();
              process.stderr.write(`\ndithercav run: ${m} (press Ctrl-C again to quit at once)\n`);
            },
          );
        } catch (err) {
          if (err instanceof RunInterrupted) {
            lock.release();
            process.exit(130);
          }
          throw err;
        } finally {
          progress.stop();
        }
        const report = writeRunFolder(out, artifacts, 'dithercav run');
        lock.release();
        process.stdout.write(
          `${formatRunTable(artifacts.summary)}\n\nresults in ${out}${report ? ` (report: ${report})` : ''}\n`,
        );
        if (artifacts.summary.status !== 'ok') ctx.setExit(1);
      },
    );
}
