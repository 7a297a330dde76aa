/**
 * The summary of one run (CONTRACT.md `summary.json`), as a pure function of what the run
 * planned, the references it used and what the driven run returned: no stepping, no clock,
 * no randomness. A run is plan -> execute -> summarise; this is the last step.
 *
 * The inputs are described here by what the summary reads of them, so that this room does
 * not depend on the simulate room that produces them.
 */
import type { Scenario } from '../scenario/schema';
import type {
  Derived,
  DrivenSummary,
  DriveSummary,
  RunSummary,
  StaticCurve,
  Warning,
} from '../results/summary';
import { RESULT_VERSION } from '../results/summary';
import {
  DOPPLER_SPREAD_LIMIT,
  INTERFACE_MISMATCH_LIMIT,
  POWER_BALANCE_LIMIT,
  QUASI_STATIC_SAMPLES,
} from '../results/limits';
import {
  createDrive,
  fractionBelowSpeed,
  peakAcceleration,
  peakSpeed,
  strokePeakToPeak,
} from '../physics/drive';
import { actuatorSheet } from '../physics/actuator';
import { normaliseScenarioForJson, scenarioSha256 } from '../scenario/canonical';
import { classifyRun } from './classify';
import { designRule } from './decoupling';
import { stratifiedMeanAndStderr } from './stratified';
import type { StatsResult } from './stats';
import type { BoxcarResult } from './boxcar';
import type { HopResult } from './hops';

/** The figures of the coupled system the summary reads (a subset of the engines' parameters). */
export interface SummaryParams {
  hasExternal: boolean;
  returnToLaser: boolean;
  t2: number;
  feedbackEfficiency: number;
  roundTripLaser_s: number;
  roundTripExternal_s: number;
  alpha: number;
  /** mode slots */
  M: number;
  modes: { index: number[] };
}

/** The free-running reference as the summary reads it. */
export interface FreeRunningFigures {
  intracavity_W: number;
  output_W: number;
  lasingModes: number[];
  modePowers_W: number[];
}

/** One settled static position (up or down branch). */
export interface StaticPoint {
  external_W: number;
  laserOutput_W: number;
  intracavity_W: number;
}

/** The static reference as the summary reads it. */
export interface StaticFigures {
  positions_m: number[];
  up: StaticPoint[];
  down: StaticPoint[];
  converged: boolean;
  levels: { positions: number; mean_W: number }[];
  /** the levels' extrapolated limit when the refinement stopped on it (docs/model.md §4.1) */
  extrapolated?: { mean_W: number; error_W: number; ratio: number } | null;
  worstBalance: number;
  failed: string | null;
}

/** The statistics of one rest offset of the driven run. */
export interface OffsetFigures {
  offset_m: number;
  external: StatsResult;
  laserOutput: StatsResult;
  intracavity: StatsResult;
  band: BoxcarResult;
  hops: HopResult;
}

/** The driven run as the summary reads it. */
export interface DrivenFigures {
  offsets: OffsetFigures[];
  balance: { laser: number; external: number; mismatch: number };
  fieldRatio: number;
  steps: number;
  laneSteps: number;
  failed: string | null;
}

/** What the run decided before stepping. */
export interface RunPlanFigures {
  seed: number;
  engine: string;
  /** the engine's public name, when it differs from its kind */
  engineName?: string;
  engineReason: string;
  /** warnings raised while planning (engine validity) */
  warnings: Warning[];
  /** whether the driven figures come from the round-trip engine (directly or through the static and speed curves) */
  fullBand?: boolean;
  /** failure known before or instead of the driven run (static reference failed, budget refused) */
  failure: string | null;
  settle_s: number;
  analysed_s: number;
  /** time step of the driven run, s */
  dt: number;
  /** drive periods analysed at each offset (null for a still mirror) */
  periods: number | null;
  /** the relative standard error the offsets were added towards */
  targetError: number;
}

export interface SummaryInput {
  scenario: Scenario;
  derived: Derived;
  params: SummaryParams;
  plan: RunPlanFigures;
  free: FreeRunningFigures;
  stat: StaticFigures | null;
  /** null when no driven run was stepped */
  driven: DrivenFigures | null;
  /** what ended the adding of offsets, and the relative standard error of the mean gap power then */
  convergence: { stoppedBy: 'target' | 'budget'; relativeStderr: number } | null;
  /** the tool's version, for provenance */
  toolVersion: string;
  /** measured by the caller: whole run and driven part, s */
  timing: { wall_s: number; drivenWall_s: number };
}

/** Mean, min and max of a list (NaN for an empty one). */
function meanMinMax(values: number[]): { mean: number; min: number; max: number } {
  if (values.length === 0) return { mean: NaN, min: NaN, max: NaN };
  let s = 0;
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of values) {
    s += v;
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
  }
  return { mean: s / values.length, min: lo, max: hi };
}

/** Mean over offsets of one per-offset figure. */
function offsetMean(offs: OffsetFigures[], pick: (o: OffsetFigures) => number): number {
  return offs.reduce((a, o) => a + pick(o), 0) / offs.length;
}

/** Whether the drive moves the mirror at all. */
export function driveMoves(drive: Scenario['drive']): boolean {
  return (
    drive.waveform !== 'off' &&
    (drive.amplitude > 0 || (drive.waveform === 'two-tone' && drive.second_amplitude > 0))
  );
}

/**
 * Mean gap power the static curve (mean of its up and down branches) predicts for lanes at
 * the given rest offsets moving with the drive: the curve averaged along one drive period
 * of x(t) (QUASI_STATIC_SAMPLES samples), then over the lanes; W.
 */
export function quasiStaticMean(
  stat: Pick<StaticFigures, 'positions_m' | 'up' | 'down'>,
  offsets_m: number[],
  drive: Scenario['drive'],
  half_m: number,
): number {
  const N = stat.positions_m.length;
  const cell = half_m / N;
  const motion = createDrive({ ...drive, drift: 0, vibration: undefined }, 0);
  const period = drive.waveform === 'off' ? 1 : 1 / drive.frequency;
  const samples = drive.waveform === 'off' || drive.amplitude === 0 ? 1 : QUASI_STATIC_SAMPLES;
  const curve = stat.up.map((u, i) => 0.5 * (u.external_W + stat.down[i].external_W));
  let sum = 0;
  for (const off of offsets_m) {
    for (let k = 0; k < samples; k++) {
      let rel = (off + motion.position((k * period) / samples) - drive.offset) % half_m;
      if (rel < 0) rel += half_m;
      const u = rel / cell;
      const j = Math.floor(u);
      const w = u - j;
      sum += curve[j % N] * (1 - w) + curve[(j + 1) % N] * w;
    }
  }
  return sum / (offsets_m.length * samples);
}

/** The static curve as saved in static_curve.json. */
export function staticCurveOf(stat: StaticFigures): StaticCurve {
  return {
    position_m: stat.positions_m,
    external_up_W: stat.up.map((v) => v.external_W),
    external_down_W: stat.down.map((v) => v.external_W),
    laser_output_up_W: stat.up.map((v) => v.laserOutput_W),
    laser_output_down_W: stat.down.map((v) => v.laserOutput_W),
  };
}

/** The `static` section: the mean of the up/down average, extremes over both branches, hysteresis. */
function summariseStatic(stat: StaticFigures): NonNullable<RunSummary['static']> {
  const both = [...stat.up, ...stat.down];
  const avg = stat.up.map((u, i) => 0.5 * (u.external_W + stat.down[i].external_W));
  const ext = meanMinMax(both.map((v) => v.external_W));
  const meanExt = avg.reduce((a, b) => a + b, 0) / avg.length;
  const hyst =
    stat.up.reduce((a, u, i) => a + Math.abs(u.external_W - stat.down[i].external_W), 0) / stat.up.length;
  const out = meanMinMax(both.map((v) => v.laserOutput_W));
  // the static mean is the levels' extrapolated limit when the refinement stopped on it
  const x = stat.extrapolated ?? null;
  return {
    external_W: { ...ext, mean: x ? x.mean_W : meanExt },
    external_mean_curve_W: meanExt,
    external_mean_error_W: x ? x.error_W : null,
    laser_output_W: { ...out, mean: out.mean },
    intracavity_W: meanMinMax(both.map((v) => v.intracavity_W)),
    hysteresis_rel: meanExt > 0 ? hyst / meanExt : 0,
    positions: stat.positions_m.length,
    converged: stat.converged,
  };
}

/** The `driven` section and the class, from the per-offset statistics. */
function summariseDriven(
  x: SummaryInput,
  driven: DrivenFigures,
  staticSummary: RunSummary['static'],
  warnings: Warning[],
): DrivenSummary {
  const { scenario: s, derived, params, free, stat, plan } = x;
  const drive = s.drive;
  const f = driveMoves(drive) ? drive.frequency : null;
  const offs = driven.offsets;
  const means = offs.map((o) => o.external.mean);
  const meanExt = means.reduce((a, b) => a + b, 0) / means.length;
  // pooled standard deviation over all offsets: within-offset variance plus spread of the means
  const pooledVar =
    offs.reduce((a, o) => a + o.external.variance + (o.external.mean - meanExt) ** 2, 0) / offs.length;
  const meanOut = offsetMean(offs, (o) => o.laserOutput.mean);
  const outVar =
    offs.reduce((a, o) => a + o.laserOutput.variance + (o.laserOutput.mean - meanOut) ** 2, 0) / offs.length;
  const hopsPerS = offsetMean(offs, (o) => o.hops.hopsPerSecond);
  const hopsPerPeriod = f ? offsetMean(offs, (o) => o.hops.hopsPerPeriod ?? 0) : 0;
  const ripple = offsetMean(offs, (o) => o.band.ripple_rel);
  const rippleFull = offsetMean(offs, (o) => o.band.ripple_full_band_rel);
  if (!offs.every((o) => o.band.enoughWindows)) {
    warnings.push({
      code: 'short-window',
      message:
        'the analysed window holds fewer than three detection-band windows after the first filled; the in-band ripple is uncertain',
    });
  }
  const occupation = params.modes.index.map((index, m) => ({
    index,
    fraction: offsetMean(offs, (o) => o.hops.occupation[m]),
  }));
  const hist = offs[0].hops.phaseHistogram.map((_, k) =>
    offs.reduce((a, o) => a + o.hops.phaseHistogram[k], 0),
  );
  // standard errors over the offsets (docs/model.md §4.2): per-offset means are the samples
  const ordered = [...offs].sort((a, b) => a.offset_m - b.offset_m);
  const stderrOf = (pick: (o: OffsetFigures) => number) => stratifiedMeanAndStderr(ordered.map(pick)).stderr;
  const scaled = (e: number | null, by: number | null) =>
    e !== null && by !== null && by > 0 ? e / by : null;
  const extStderr = stderrOf((o) => o.external.mean);
  const staticMean = staticSummary ? staticSummary.external_W.mean : null;
  const gainOverStatic = staticMean && staticMean > 0 ? meanExt / staticMean : null;
  // What the still-mirror curve alone predicts at the same rest offsets and strokes: a few
  // rest offsets sample a peaked static curve coarsely, so a small stroke can show a
  // "gain" over the static mean that is only sampling. The class is judged against this.
  const quasi =
    stat && !stat.failed
      ? quasiStaticMean(
          stat,
          offs.map((o) => o.offset_m),
          drive,
          s.laser.wavelength / 2,
        )
      : null;
  const gainOverQuasiStatic = quasi !== null && quasi > 0 ? meanExt / quasi : null;
  const gainOverWorstStatic =
    staticSummary && staticSummary.external_W.min > 0 ? meanExt / staticSummary.external_W.min : null;
  const incoherentLevel = derived.incoherent_enhancement * free.intracavity_W;
  const incoherentFraction =
    Number.isFinite(incoherentLevel) && incoherentLevel > 0 ? meanExt / incoherentLevel : null;
  // the class judges the smaller of the two gains; its reference is taken as exact
  const classGain =
    gainOverQuasiStatic !== null && gainOverStatic !== null
      ? Math.min(gainOverStatic, gainOverQuasiStatic)
      : gainOverStatic;
  const classGainRef = classGain === null ? null : classGain === gainOverStatic ? staticMean : quasi;
  const hopsPerPeriodStderr = f ? stderrOf((o) => o.hops.hopsPerPeriod ?? 0) : null;
  const rippleStderr = stderrOf((o) => o.band.ripple_rel);
  const incoherentStderr = scaled(extStderr, Number.isFinite(incoherentLevel) ? incoherentLevel : null);
  const cls = classifyRun(
    {
      status: 'ok',
      message: null,
      freeRunningIntracavity_W: free.intracavity_W,
      hopsPerPeriod: f ? hopsPerPeriod : null,
      gainOverStatic: classGain,
      rippleRel: ripple,
      incoherentFraction,
      stderr: {
        hopsPerPeriod: hopsPerPeriodStderr,
        gainOverStatic: scaled(extStderr, classGainRef),
        rippleRel: rippleStderr,
        incoherentFraction: incoherentStderr,
      },
    },
    s.analysis,
  );
  return {
    external_mean_W: meanExt,
    external_std_W: Math.sqrt(pooledVar),
    external_min_W: Math.min(...offs.map((o) => o.external.min)),
    external_max_W: Math.max(...offs.map((o) => o.external.max)),
    ripple_rel: ripple,
    ripple_full_band_rel: rippleFull,
    laser_output_mean_W: meanOut,
    laser_output_std_W: Math.sqrt(outVar),
    laser_output_min_W: Math.min(...offs.map((o) => o.laserOutput.min)),
    laser_output_max_W: Math.max(...offs.map((o) => o.laserOutput.max)),
    laser_intracavity_mean_W: offsetMean(offs, (o) => o.intracavity.mean),
    enhancement: free.intracavity_W > 0 ? meanExt / free.intracavity_W : 0,
    gain_over_static: gainOverStatic,
    gain_over_worst_static: gainOverWorstStatic,
    gain_over_quasi_static: gainOverQuasiStatic,
    incoherent_fraction: incoherentFraction,
    hops_per_s: hopsPerS,
    hops_per_period: hopsPerPeriod,
    class: cls.class,
    class_reason: cls.reason,
    offsets: offs.length,
    offset_positions_m: offs.map((o) => o.offset_m),
    external_mean_by_offset_W: { min: Math.min(...means), max: Math.max(...means), values: means },
    mode_occupation: occupation,
    hop_phase_histogram: hist,
    analysed_time_s: plan.analysed_s,
    settle_time_s: plan.settle_s,
    external_mean_stderr_W: extStderr,
    laser_output_mean_stderr_W: stderrOf((o) => o.laserOutput.mean),
    laser_intracavity_mean_stderr_W: stderrOf((o) => o.intracavity.mean),
    ripple_rel_stderr: rippleStderr,
    ripple_full_band_rel_stderr: stderrOf((o) => o.band.ripple_full_band_rel),
    enhancement_stderr: scaled(extStderr, free.intracavity_W),
    gain_over_static_stderr: scaled(extStderr, staticMean),
    incoherent_fraction_stderr: incoherentStderr,
    hops_per_s_stderr: stderrOf((o) => o.hops.hopsPerSecond),
    hops_per_period_stderr: f ? hopsPerPeriodStderr : null,
    periods_used: plan.periods,
    offsets_used: offs.length,
    stopped_by: x.convergence?.stoppedBy ?? 'target',
  };
}

/** The `drive` section: stroke, speeds and the decoupling design rule. */
function summariseDrive(x: SummaryInput, driven: DrivenFigures | null): DriveSummary {
  const { scenario: s, params } = x;
  const drive = s.drive;
  const moving = driveMoves(drive);
  const vPeak = peakSpeed(drive);
  const rule = designRule({
    t2: params.t2,
    feedbackEfficiency: params.feedbackEfficiency,
    laserRoundTrip_s: params.roundTripLaser_s,
    externalRoundTrip_s: params.hasExternal ? params.roundTripExternal_s : 1,
    alpha: params.alpha,
    wavelength_m: s.laser.wavelength,
    fieldRatio: driven && !driven.failed && params.returnToLaser ? driven.fieldRatio : null,
    waveform: drive.waveform === 'triangle' ? 'triangle' : moving ? 'sine' : 'off',
    peakSpeed_m_s: vPeak,
  });
  return {
    waveform: drive.waveform,
    amplitude_m: drive.amplitude,
    frequency_Hz: drive.frequency,
    stroke_m: strokePeakToPeak(drive),
    peak_speed_m_s: vPeak,
    peak_acceleration_m_s2: peakAcceleration(drive),
    peak_doppler_Hz: (2 * vPeak) / s.laser.wavelength,
    critical_speed_m_s: rule.criticalSpeed_m_s,
    critical_speed_landau_zener_m_s: params.hasExternal ? rule.criticalSpeedLandauZener_m_s : null,
    fraction_below_critical:
      rule.criticalSpeed_m_s !== null
        ? moving
          ? fractionBelowSpeed(drive, rule.criticalSpeed_m_s)
          : 1
        : null,
    locking_half_width_Hz: rule.lockingHalfWidth_Hz,
  };
}

/** Spread of the returned light's frequencies, (F / pi) 2 v_peak / lambda, Hz (docs/model.md §3.1). */
export function returnedLightSpread_Hz(finesse: number, peakSpeed_m_s: number, wavelength_m: number): number {
  return ((finesse / Math.PI) * (2 * peakSpeed_m_s)) / wavelength_m;
}

/** The summary of one run; see the file comment. */
export function summariseRun(x: SummaryInput): RunSummary {
  const { scenario: s, derived, params, plan, free, stat, driven } = x;
  const warnings: Warning[] = [...plan.warnings];
  let status: RunSummary['status'] = plan.failure === null ? 'ok' : 'numerical-failure';
  let message = plan.failure;
  if (status === 'ok' && driven && driven.failed) {
    status = 'numerical-failure';
    message = driven.failed;
  }
  if (driven) {
    // docs/model.md §3.1: the mean-field laser equation needs the returned light's spread well below FSR1
    const spread = returnedLightSpread_Hz(derived.finesse_external, peakSpeed(s.drive), s.laser.wavelength);
    // (not for the round-trip engine, nor for the slow-drive path built on it)
    if (!plan.fullBand && spread > DOPPLER_SPREAD_LIMIT * derived.fsr_laser_Hz) {
      warnings.push({
        code: 'doppler-spread',
        message: `frequency spread of the returned light (F/pi) 2 v / lambda = ${(spread / 1e6).toFixed(1)} MHz reaches ${((100 * spread) / derived.fsr_laser_Hz).toFixed(0)} % of the laser mode spacing; the per-mode mean-field model is strained`,
      });
    }
  }

  let staticSummary: RunSummary['static'] = null;
  if (stat && !stat.failed) {
    staticSummary = summariseStatic(stat);
    if (!stat.converged) {
      warnings.push({
        code: 'static-not-converged',
        message: `static mean not converged to 1 % at ${stat.positions_m.length} positions (levels: ${stat.levels.map((l) => `${l.positions}: ${l.mean_W.toExponential(3)} W`).join(', ')})`,
      });
    } else if (stat.extrapolated) {
      const x = stat.extrapolated;
      warnings.push({
        code: 'static-extrapolated',
        message: `static mean ${x.mean_W.toExponential(3)} W +- ${x.error_W.toExponential(1)} W is the limit the refinement levels converge to (Aitken's delta-squared, ratio ${x.ratio.toFixed(2)}); the saved curve of ${stat.positions_m.length} positions averages ${staticSummary.external_mean_curve_W?.toExponential(3)} W and the quasi-static figures use it (docs/model.md §4.1)`,
      });
    }
  }

  const drivenOk = driven && !driven.failed ? driven : null;
  const drivenSummary = drivenOk ? summariseDriven(x, drivenOk, staticSummary, warnings) : null;
  if (drivenSummary && x.convergence && x.convergence.stoppedBy === 'budget') {
    const rel = x.convergence.relativeStderr;
    warnings.push({
      code: 'target-error-not-met',
      message: `the driven mean gap power's relative standard error ${Number.isFinite(rel) ? `${(100 * rel).toFixed(1)} %` : '(not estimable with one offset)'} is above analysis.target_error ${(100 * plan.targetError).toFixed(1)} %: the step budget (simulation.max_steps) stopped the run at ${drivenSummary.offsets_used} offsets`,
    });
  }
  const driveSummary = summariseDrive(x, driven);

  const balance = drivenOk
    ? {
        laser_relative_error: Math.max(drivenOk.balance.laser, stat?.worstBalance ?? 0),
        external_relative_error: drivenOk.balance.external,
        relative_error: Math.max(drivenOk.balance.laser, drivenOk.balance.external, stat?.worstBalance ?? 0),
        interface_mismatch_rel: drivenOk.balance.mismatch,
      }
    : null;
  if (balance) {
    if (balance.interface_mismatch_rel > INTERFACE_MISMATCH_LIMIT) {
      warnings.push({
        code: 'interface-mismatch',
        message: `interface mismatch at M2 ${(100 * balance.interface_mismatch_rel).toFixed(1)} % > ${(100 * INTERFACE_MISMATCH_LIMIT).toFixed(0)} %: the mean-field laser equation's approximation is large here (docs/model.md §3.3)`,
      });
    }
    if (balance.relative_error > POWER_BALANCE_LIMIT) {
      warnings.push({
        code: 'power-balance',
        message: `power balance closes only to ${balance.relative_error.toExponential(2)} (> ${POWER_BALANCE_LIMIT.toExponential(0)}): reduce the step (simulation.substeps)`,
      });
    }
  }
  if (!params.hasExternal)
    warnings.push({
      code: 'no-external',
      message: 'no external section: only the free-running reference was computed',
    });

  const steps = driven ? driven.steps : 0;
  const laneSteps = driven ? driven.laneSteps : 0;
  const drivenWall_s = x.timing.drivenWall_s;
  return {
    version: RESULT_VERSION,
    tool_version: x.toolVersion,
    name: s.name,
    scenario: normaliseScenarioForJson(s),
    scenario_sha256: scenarioSha256(s),
    seed: plan.seed,
    engine: plan.engineName ?? plan.engine,
    engine_reason: plan.engineReason,
    status,
    message,
    derived,
    free_running: {
      intracavity_W: free.intracavity_W,
      output_W: free.output_W,
      lasing_modes: free.lasingModes,
      mode_powers_W: free.modePowers_W,
    },
    static: staticSummary,
    driven: drivenSummary,
    drive: driveSummary,
    power_balance: balance,
    timing: {
      wall_s: x.timing.wall_s,
      steps,
      engine_steps_per_s: steps / drivenWall_s,
      mode_steps_per_s: (laneSteps * params.M) / drivenWall_s,
      dt_s: driven ? plan.dt : null,
      lanes: driven ? driven.offsets.length : 0,
      simulated_lane_s_per_s: (laneSteps * (driven ? plan.dt : 0)) / drivenWall_s,
    },
    warnings,
    actuator: s.actuator ? actuatorSheet(s) : null,
  };
}
