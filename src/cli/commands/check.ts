/**
 * `dithercav check FILE [--json]`: validate a scenario and print what follows from it
 * before any time stepping (docs/model.md §2): mode spacings, lifetimes, finesse, beam
 * sizes, coupling, the mode list and the free-running estimate. Exit 0 valid, 2 not.
 */
import type { Command } from 'commander';
import type { CommandContext } from '../main';
import { loadScenarioFile, LoadedScenario } from '../../scenario/load';
import { formatProblems } from '../../scenario/errors';
import type { Derived } from '../../results/summary';
import { planDraws } from '../../sweep/yield';
import { deriveAll } from '../../physics/derive';
import { bold, colourAllowed, formatNumber, formatQuantity, formatTable } from '../format';
import { expandGrid, pointScenario } from '../../sweep/grid';
import { defaultJobs } from '../../sweep/pool';
import { estimateDrivenTime, type RunTimeEstimate } from '../../simulate/estimate';
import { referenceKey } from '../../simulate/run';
import { formatDuration } from '../progress';

/** Points whose step plan is worked out exactly; a larger grid is estimated from an even sample of them. */
export const ESTIMATE_SAMPLE = 400;

/** What `check` says about a sweep: its size and an estimate of its run time. */
export interface SweepPlanInfo {
  points: number;
  /** distinct free-running/still-mirror reference settings over the grid */
  reference_settings: number;
  jobs: number;
  estimate: RunTimeEstimate;
  /** points whose step plan was worked out (all, or an even sample) */
  sampled: number;
  /** estimated wall time of the driven runs, s, over `jobs` worker threads */
  estimated_wall_s: number;
}

/**
 * The sweep's size and an ESTIMATE of its driven runs' wall time: the step plan of every
 * point (or of ESTIMATE_SAMPLE evenly spread points, scaled to the grid), at the lane-step
 * rate of each engine measured by a short calibration run on this machine, divided over
 * `jobs` worker threads. The references are not included.
 */
export function sweepPlanInfo(loaded: LoadedScenario, jobs = defaultJobs()): SweepPlanInfo | null {
  if (!loaded.scenario.sweep) return null;
  const grid = expandGrid(loaded.scenario);
  const step = Math.max(1, Math.ceil(grid.total / ESTIMATE_SAMPLE));
  const picks: number[] = [];
  for (let i = 0; i < grid.total; i += step) picks.push(i);
  const scenarios = picks.map((i) => pointScenario(grid, i));
  const keys = new Set(scenarios.map((p) => referenceKey(p)));
  const estimate = estimateDrivenTime(scenarios);
  const scale = grid.total / picks.length;
  const effective = Math.min(jobs, grid.total);
  return {
    points: grid.total,
    reference_settings: step === 1 ? keys.size : Math.round(keys.size * scale),
    jobs: effective,
    estimate,
    sampled: picks.length,
    estimated_wall_s: (estimate.driven_s * scale) / effective,
  };
}

function formatSweepPlan(info: SweepPlanInfo): string[] {
  const lines = [
    `  points                 ${info.points}`,
    `  estimated run time     about ${formatDuration(info.estimated_wall_s)} for the driven runs on ${info.jobs} worker thread${info.jobs === 1 ? '' : 's'} (an ESTIMATE)`,
    `  references             free-running and mirror held still, for ${info.reference_settings} distinct laser/cavity setting${info.reference_settings === 1 ? '' : 's'}: not included in the estimate (their step count is adaptive)`,
  ];
  for (const e of info.estimate.engines) {
    if (e.engine === 'none') continue;
    lines.push(
      `  ${e.engine.padEnd(22)} ${e.runs} run${e.runs === 1 ? '' : 's'}${info.sampled < info.points ? ' (of the sample)' : ''}, ${e.lane_steps.toExponential(2)} lane-steps${e.lane_steps_per_s !== null ? ` at ${e.lane_steps_per_s.toExponential(2)} lane-steps per CPU second measured here` : ''}`,
    );
  }
  lines.push(
    `  how                    step plan of ${info.sampled === info.points ? 'every point' : `${info.sampled} evenly spread points, scaled to the grid`} (the first batch of rest offsets: batches added to meet analysis.target_error come on top); engine speed from a ${formatDuration(info.estimate.calibration_s)} calibration run on this machine (CPU time, so it assumes a free core per worker; other load makes the sweep slower)`,
  );
  if (info.estimate.engines.some((e) => e.engine === 'speedcurve'))
    lines.push(
      `  slow path              speedcurve runs count their turning-point windows and the speed curve's base points (docs/model.md §3.6); the curve's refinement comes on top`,
    );
  return lines;
}

/** The `--json` output: which file, its scenario hash, the derived quantities, the warnings. */
export interface CheckJson {
  file: string;
  scenario_sha256: string;
  /** a sweep's size and estimated run time (driven runs only; an estimate) */
  sweep?: {
    points: number;
    estimated_wall_s: number;
    estimate_is: string;
    jobs: number;
    reference_settings: number;
  };
  derived: Derived;
  warnings: { path: string; message: string; line?: number }[];
}

/** Where an efficiency came from: the basis in words when the summary has it (docs/model.md §2.4). */
function source(s: 'geometry' | 'scenario', basis: string | undefined): string {
  if (s === 'scenario') return 'given in the scenario';
  return basis ? `from Gaussian beams: ${basis}` : 'from Gaussian beams';
}

/**
 * The readable report of `check`: sections of aligned "quantity  value  note" rows and
 * the mode table, and for a sweep its size and estimated run time (sweepPlanInfo, passed
 * in). Pure (no I/O) so it can be tested without a terminal.
 */
export function formatCheck(
  file: string,
  loaded: LoadedScenario,
  d: Derived,
  colour: boolean,
  sweep: SweepPlanInfo | null = null,
): string {
  const s = loaded.scenario;
  const q = formatQuantity;
  const out: string[] = [];
  const section = (title: string, rows: string[][]) => {
    out.push('', bold(title, colour), formatTable(rows, { indent: '  ' }));
  };
  out.push(`${bold(file, colour)}: scenario '${s.name}' is valid (sha256 ${loaded.sha256.slice(0, 12)})`);

  section('Laser (M1 to M2)', [
    ['wavelength', q(s.laser.wavelength, 'm')],
    [
      'cavity length L1',
      q(s.laser.cavity_length, 'm'),
      `refractive index ${formatNumber(s.laser.refractive_index)}`,
    ],
    ['free spectral range', q(d.fsr_laser_Hz, 'Hz'), 'c / (2 n L1)'],
    ['round-trip time', q(d.roundtrip_laser_s, 's'), '2 n L1 / c'],
    [
      'photon lifetime',
      q(d.photon_lifetime_s, 's'),
      `decay rate ${formatNumber(d.photon_decay_rate_per_s)} /s`,
    ],
    ['inversion lifetime', q(s.laser.gain.inversion_lifetime, 's')],
    [
      'laser class',
      d.laser_class,
      d.laser_class === 'A'
        ? 'inversion follows the field (adiabatic)'
        : 'inversion integrated (relaxation oscillations)',
    ],
    ['pump ratio', formatNumber(s.laser.gain.pump_ratio), '1 = threshold of the gain peak'],
    ['free-running estimate', q(d.free_running_estimate_W, 'W'), 'one-way intracavity power'],
  ]);

  if (s.external) {
    section('External cavity (M2 to M3)', [
      ['length L2', q(s.external.length, 'm')],
      ['free spectral range', q(d.fsr_external_Hz, 'Hz'), 'c / (2 L2)'],
      ['round-trip time', q(d.roundtrip_external_s, 's'), '2 L2 / c'],
      [
        'finesse',
        formatNumber(d.finesse_external),
        `from R2, R3, the gap element and round-trip efficiency ${formatNumber(d.roundtrip_efficiency)}`,
      ],
      ['linewidth (FWHM)', q(d.linewidth_external_Hz, 'Hz')],
      [
        'incoherent enhancement',
        formatNumber(d.incoherent_enhancement),
        'phase-averaged circulating / incident',
      ],
      [
        'feedback efficiency',
        formatNumber(d.feedback_efficiency),
        source(d.feedback_efficiency_source, d.feedback_efficiency_basis),
      ],
      [
        'round-trip efficiency',
        formatNumber(d.roundtrip_efficiency),
        source(d.roundtrip_efficiency_source, d.roundtrip_efficiency_basis),
      ],
      [
        'return to laser',
        s.external.return_to_laser ? 'yes' : 'no (reference: the laser ignores its feedback)',
      ],
    ]);
  } else {
    out.push('', bold('External cavity', colour), '  none: the laser runs alone');
  }

  const b = d.beams;
  const waist = b.gap_waist_m === null ? 'none in the gap' : q(b.gap_waist_m, 'm');
  // a waist on M2 itself comes out of the ABCD algebra as a rounding residue (~1e-17 m)
  const waistAt =
    b.gap_waist_position_m === null
      ? ''
      : Math.abs(b.gap_waist_position_m) < 1e-9
        ? 'at M2'
        : `${q(b.gap_waist_position_m, 'm')} from M2`;
  section('Beams (TEM00)', [
    ['radius at M1', q(b.radius_at_M1_m, 'm')],
    ['radius at M2', q(b.radius_at_M2_m, 'm')],
    ['radius at M3', q(b.radius_at_M3_m, 'm')],
    ['waist in the gap', waist, waistAt],
    [
      'peak intensity per watt',
      b.peak_intensity_per_W_m2 === null ? 'n/a' : `${formatNumber(b.peak_intensity_per_W_m2)} W/m^2 per W`,
      'at the gap waist, per watt circulating',
    ],
    ['laser g1 g2', formatNumber(b.laser_g1g2), b.laser_stable ? 'stable' : 'UNSTABLE'],
    ['external g2 g3', formatNumber(b.external_g2g3), b.external_stable ? 'stable' : 'UNSTABLE'],
  ]);
  for (const n of b.notes) out.push(`  note: ${n}`);

  const al = d.alignment;
  if (s.external && al) {
    // docs/model.md §2.5
    const angle = (v: number | null) => (v === null ? 'n/a' : `${formatNumber(v * 1e6)} urad`);
    section('Alignment of the return mirror', [
      ['tilt', angle(al.tilt_rad)],
      ['decentre', q(al.decenter_m, 'm')],
      [
        'coupling',
        formatNumber(d.feedback_efficiency),
        `aligned ${formatNumber(al.aligned_feedback_efficiency)} x misalignment factor ${formatNumber(al.coupling_factor)}`,
      ],
      [
        'tilt that halves the coupling',
        angle(al.half_coupling_tilt_rad),
        al.basis === 'eigenmode'
          ? 'M3 tilted alone; the gap eigenmode axis moves'
          : al.basis === 'return'
            ? 'M3 tilted alone; one round trip (no eigenmode)'
            : 'not modelled',
      ],
      ...(al.tilt_per_stroke_rad_m !== 0
        ? [['actuator tilt per stroke', `${formatNumber(al.tilt_per_stroke_rad_m)} urad/um`] as string[]]
        : []),
    ]);
  }

  out.push('', bold(`Laser modes (${d.modes.length})`, colour));
  out.push(
    formatTable(
      d.modes.map((m) => [
        String(m.index),
        q(m.detuning_Hz, 'Hz'),
        q(m.frequency_Hz, 'Hz', 10),
        formatNumber(m.gain_rel),
      ]),
      {
        header: ['index', 'offset from gain peak', 'frequency', 'gain (1 = peak)'],
        align: ['right', 'right', 'right', 'right'],
        colour,
        indent: '  ',
      },
    ),
  );

  if (sweep) {
    out.push('', bold('Sweep', colour), ...formatSweepPlan(sweep));
  }

  if (loaded.warnings.length > 0) {
    out.push('', bold('Warnings', colour));
    out.push(
      formatProblems(file, loaded.warnings)
        .split('\n')
        .map((l) => `  ${l}`)
        .join('\n'),
    );
  }
  return `${out.join('\n')}\n`;
}

/** Register `check FILE [--json]`. Bad input throws InputError (exit 2 via main). */
export function registerCheck(program: Command, ctx: CommandContext): void {
  program
    .command('check')
    .description(
      'validate a scenario and print its derived quantities (FSRs, finesse, lifetimes, modes, beams, coupling)',
    )
    .argument('<file>', 'scenario file (YAML or JSON)')
    .option('--json', 'print { file, scenario_sha256, derived, warnings } as JSON')
    .action((file: string, opts: { json?: boolean }) => {
      const loaded = loadScenarioFile(file);
      // the tolerances section's keys and spreads are checked here too (docs/model.md §7)
      if (loaded.scenario.tolerances) planDraws(loaded.scenario, 1, file);
      const { derived } = deriveAll(loaded.scenario);
      const sweep = sweepPlanInfo(loaded);
      if (opts.json) {
        const body: CheckJson = {
          file,
          scenario_sha256: loaded.sha256,
          ...(sweep
            ? {
                sweep: {
                  points: sweep.points,
                  estimated_wall_s: sweep.estimated_wall_s,
                  estimate_is: 'an estimate of the driven runs only, from a short calibration run',
                  jobs: sweep.jobs,
                  reference_settings: sweep.reference_settings,
                },
              }
            : {}),
          derived,
          warnings: loaded.warnings.map((w) => ({
            path: w.path,
            message: w.message,
            ...(w.line !== undefined ? { line: w.line } : {}),
          })),
        };
        process.stdout.write(`${JSON.stringify(body, null, 2)}\n`);
      } else {
        process.stdout.write(formatCheck(file, loaded, derived, colourAllowed(process.stdout), sweep));
      }
      ctx.setExit(0);
    });
}
