/**
 * One run: free-running reference, static reference, driven run at several rest offsets,
 * analysis, and the summary of CONTRACT.md. The problem (scenario) says what to solve,
 * the engine how; the result carries provenance (scenario hash, engine, steps, status).
 * A numerical failure is data (status 'numerical-failure'), not an exception.
 */
import { createHash } from 'node:crypto';
import type { Scenario } from '../scenario/schema';
import { normaliseScenarioForJson, scenarioSha256 } from '../scenario/canonical';
import type { RunArtifacts, SpectraSet } from '../results/artifacts';
import {
  RESULT_VERSION,
  RunSummary,
  Warning,
  StaticCurve,
  DrivenSummary,
  DriveSummary,
} from '../results/summary';
import { TOOL_VERSION } from '../version';
import { deriveAll } from '../physics/derive';
import type { CoupledParams } from '../physics/coupled/params';
import {
  createDrive,
  peakAcceleration,
  peakSpeed,
  strokePeakToPeak,
  fractionBelowSpeed,
} from '../physics/drive';
import { createRng } from '../numerics/rng';
import { classifyRun } from '../analysis/classify';
import { designRule } from '../analysis/decoupling';
import { driveHarmonics } from '../analysis/harmonics';
import { freeRunning, FreeRunningResult, staticReference, StaticResult } from './references';
import { drivenRun, DrivenResult } from './driven';
import { drivenAdiabatic } from './adiabatic';
import { planEngines, EnginePlan } from './engine-choice';
import { actuatorSheet } from '../physics/actuator';
import type { SpeedCurve } from '../results/speed-curve';
import { memoryTime } from './speed-curve';
import { slowDriveRun } from './slow-drive';

/** What `simulation.engine` and the commands' `--engine` may ask for. */
export const ENGINE_CHOICES = ['auto', 'exact', 'fast', 'adiabatic', 'speedcurve'] as const;
export type EngineChoice = (typeof ENGINE_CHOICES)[number];

export interface RunOptions {
  engine?: EngineChoice;
  seed?: number;
  /** called now and then with the fraction done (0..1) and what is being done */
  onProgress?: (fraction: number, label: string) => void;
  /** references computed earlier for a scenario with the same referenceKey */
  references?: References;
  /** a speed curve computed earlier (reused and extended when its key matches) */
  speedCurve?: SpeedCurve | null;
}

/** Free-running and static references; reusable across sweep points with the same referenceKey. */
export interface References {
  key: string;
  data: { free: FreeRunningResult; stat: StaticResult | null; wall_s: number; staticEngine: string };
}

/**
 * The part of a scenario the references depend on: the laser, the external cavity, the
 * rest position, the static settings, the step and the seed; not the drive's amplitude,
 * frequency or waveform, nor the analysis.
 */
export function referenceKey(s: Scenario, seed = s.simulation.seed, staticEngine = 'auto'): string {
  const relevant = {
    staticEngine,
    laser: s.laser,
    external: s.external ?? null,
    offset: s.drive.offset,
    static_positions: s.simulation.static_positions,
    substeps: s.simulation.substeps,
    seed,
  };
  return createHash('sha256')
    .update(JSON.stringify(relevant, (_k, v) => (v === Infinity ? 'flat' : v)))
    .digest('hex');
}

/** Settle time per static position when continuing from a neighbour, s. */
export function staticSettleTime(p: CoupledParams): number {
  const extPhoton = p.hasExternal ? p.roundTripExternal_s / Math.max(1e-12, 1 - (p.r2 * p.r3eff) ** 2) : 0;
  const response = Math.max(1 / p.gammaC, extPhoton, p.classA ? 0 : p.tauN);
  return Math.min(40e-6, Math.max(4e-6, 40 * response));
}

/** Which engine settles the static reference: the exact one when the exact engine is requested, else the planner's choice. */
function staticEngineRequest(s: Scenario, opts: RunOptions): 'exact' | 'auto' {
  return (opts.engine ?? s.simulation.engine) === 'exact' ? 'exact' : 'auto';
}

export function computeReferences(s: Scenario, opts: RunOptions = {}): References {
  const t0 = Date.now();
  const seed = opts.seed ?? s.simulation.seed;
  const { derived, params } = deriveAll(s);
  const req = staticEngineRequest(s, opts);
  const plan = planEngines(
    s,
    params,
    derived.finesse_external,
    staticSettleTime(params),
    req === 'exact' ? 'exact' : 'auto',
  );
  const rng = createRng(seed);
  const free = freeRunning(params, rng.fork(1));
  let stat: StaticResult | null = null;
  if (params.hasExternal && Number.isFinite(params.gammaC)) {
    opts.onProgress?.(0, 'static reference');
    stat = staticReference(params, {
      positions: s.simulation.static_positions,
      finesse: derived.finesse_external,
      settle_s: staticSettleTime(params),
      dt: plan.static.dt,
      engine: plan.static.kind,
      halfWavelength_m: s.laser.wavelength / 2,
      rest_m: s.drive.offset,
      initial: free,
      rng: rng.fork(2),
    });
  }
  return {
    key: referenceKey(s, seed, req),
    data: { free, stat, wall_s: (Date.now() - t0) / 1000, staticEngine: plan.static.kind },
  };
}

function mmm(values: number[]): { mean: number; min: number; max: number } {
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

/**
 * Mean gap power the static curve (mean of its up and down branches) predicts for lanes at
 * the given rest offsets moving with the drive: the curve averaged along one drive period
 * of x(t) (2000 samples), then over the lanes; W.
 */
export function quasiStaticMean(
  stat: StaticResult,
  offsets_m: number[],
  drive: Scenario['drive'],
  half_m: number,
): number {
  const N = stat.positions_m.length;
  const cell = half_m / N;
  const motion = createDrive({ ...drive, drift: 0, vibration: undefined }, 0);
  const period = drive.waveform === 'off' ? 1 : 1 / drive.frequency;
  const samples = drive.waveform === 'off' || drive.amplitude === 0 ? 1 : 2000;
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

/** Run one scenario: references (or reuse), driven run, analysis, summary and artifacts. */
export function runScenario(s: Scenario, opts: RunOptions = {}): RunArtifacts {
  const wall0 = Date.now();
  const seed = opts.seed ?? s.simulation.seed;
  const requested = opts.engine ?? s.simulation.engine;
  const { derived, params } = deriveAll(s);
  const warnings: Warning[] = [];
  const progress = opts.onProgress ?? (() => undefined);

  const refKey = referenceKey(s, seed, staticEngineRequest(s, opts));
  const refs =
    opts.references && opts.references.key === refKey
      ? opts.references
      : computeReferences(s, { ...opts, seed, onProgress: (f) => progress(0.4 * f, 'references') });
  const { free, stat } = refs.data;
  progress(0.4, 'driven run');

  const drive = s.drive;
  const moving =
    drive.waveform !== 'off' &&
    (drive.amplitude > 0 || (drive.waveform === 'two-tone' && drive.second_amplitude > 0));
  const f = moving ? drive.frequency : null;
  const vPeak = peakSpeed(drive);
  const lambda = s.laser.wavelength;
  const tContStatic = staticSettleTime(params);
  const plan: EnginePlan = planEngines(
    s,
    params,
    derived.finesse_external,
    tContStatic,
    requested,
    memoryTime(params, free),
  );
  const engine = plan.driven.kind;
  let engineReason = `${plan.driven.reason}; static reference: ${refs.data.staticEngine} engine`;
  let speedCurve: SpeedCurve | null = null;
  if (plan.driven.warning) warnings.push({ code: 'engine-validity', message: plan.driven.warning });
  const dt =
    plan.driven.kind === 'adiabatic' || plan.driven.kind === 'speedcurve'
      ? plan.basis.exactStep_s
      : plan.driven.dt;

  let driven: DrivenResult | null = null;
  let status: 'ok' | 'numerical-failure' = 'ok';
  let message: string | null = null;
  if (stat && stat.failed) {
    status = 'numerical-failure';
    message = `static reference: ${stat.failed}`;
  }
  const bandwidth = s.analysis.detection_bandwidth;
  let settle_s = 0;
  let analysed_s = 0;
  if (status === 'ok' && params.hasExternal && Number.isFinite(params.gammaC)) {
    // the lanes start from settled static states: one drive period (both turning points) and
    // a few response times bring them to the periodic regime
    settle_s =
      s.simulation.settle === 'auto' ? Math.max(3 * tContStatic, f ? 1 / f : 0) : s.simulation.settle;
    // analysed window: whole drive periods, holding >= 4 detection windows (the first fills, then >= 3)
    const minWindow = 4 / bandwidth;
    if (f) {
      const periods = Math.max(s.simulation.periods, Math.ceil(minWindow * f));
      analysed_s = periods / f;
    } else analysed_s = Math.max(minWindow, 20 * tContStatic);
    const settleSteps = Math.ceil(settle_s / dt);
    const analysedSteps = Math.ceil(analysed_s / dt);
    const lanes = s.simulation.drive_offsets;
    const laneSteps =
      engine === 'adiabatic' || engine === 'speedcurve' ? 0 : (settleSteps + analysedSteps) * lanes;
    if (laneSteps > s.simulation.max_steps) {
      status = 'numerical-failure';
      message = `the driven run would take ${laneSteps.toExponential(2)} lane-steps, above simulation.max_steps = ${s.simulation.max_steps.toExponential(2)}; shorten simulation.periods, or let the engine choice (simulation.engine: auto) pick a faster engine`;
    } else {
      const half = lambda / 2;
      const laneOffsets = Array.from({ length: lanes }, (_, l) => (l * half) / lanes);
      const F = derived.finesse_external;
      const spread = Math.max(((F / Math.PI) * (2 * vPeak)) / lambda, f ? 8 * f : 0, 1e5);
      // strongest mode of the static reference (up branch at position 0), for the optical spectrum
      const specMode = stat ? stat.up[0].dominant : 0;
      const common = {
        detectionBandwidth_Hz: bandwidth,
        hopDwell_s: s.analysis.hop_dwell,
        driveFrequency_Hz: f,
        drivePhase_rad: drive.phase,
        traceBuckets: Math.floor(s.simulation.trace_points / 2),
        spectralSpread_Hz: spread,
        spectrumMode: specMode,
      };
      // slow-drive path (docs/model.md §3.6): its own module, same DrivenResult shape
      const slow =
        engine === 'speedcurve' && stat
          ? slowDriveRun({
              s,
              p: params,
              finesse: F,
              regrowth_s: tContStatic,
              stat,
              free,
              seed,
              requested,
              prior: opts.speedCurve ?? null,
              laneOffsets_m: laneOffsets,
              analysed_s,
              common,
              onProgress: (x) => progress(0.4 + 0.6 * x, 'slow drive'),
            })
          : null;
      if (slow) {
        speedCurve = slow.curve;
        engineReason += slow.note;
        analysed_s = slow.analysed_s;
      }
      driven = slow
        ? slow.driven
        : engine === 'adiabatic' && stat
          ? drivenAdiabatic(params, stat, {
              ...common,
              motion: createDrive(drive, seed),
              rest_m: drive.offset,
              laneOffsets_m: laneOffsets,
              analysed_s,
              halfWavelength_m: half,
              peakSpeed_m_s: plan.basis.peakSpeed_m_s,
            })
          : drivenRun(params, {
              engine: engine === 'adiabatic' || engine === 'speedcurve' ? 'exact' : engine,
              dt,
              motion: createDrive(drive, seed),
              laneOffsets_m: laneOffsets,
              start: stat ? { store: stat.store, positions_m: stat.positions_m } : null,
              initial: free,
              settleSteps,
              analysedSteps,
              ...common,
              rng: createRng(seed).fork(3),
              maxExcursion_m:
                Math.abs(drive.offset) +
                half +
                drive.amplitude +
                drive.second_amplitude +
                Math.abs(drive.drift) * (settle_s + analysed_s) +
                5 * (drive.vibration?.rms ?? 0),
              onProgress: (x) => progress(0.4 + 0.6 * x, 'driven run'),
            });
      if (driven.failed) {
        status = 'numerical-failure';
        message = driven.failed;
      }
      // MODEL.md 3.1: the mean-field laser equation needs the returned light's spread well below FSR1
      const spreadDoppler = ((F / Math.PI) * (2 * vPeak)) / lambda;
      if (spreadDoppler > 0.2 * derived.fsr_laser_Hz) {
        warnings.push({
          code: 'doppler-spread',
          message: `frequency spread of the returned light (F/pi) 2 v / lambda = ${(spreadDoppler / 1e6).toFixed(1)} MHz reaches ${((100 * spreadDoppler) / derived.fsr_laser_Hz).toFixed(0)} % of the laser mode spacing; the per-mode mean-field model is strained`,
        });
      }
    }
  }

  // ---- static summary
  let staticSummary: RunSummary['static'] = null;
  let staticCurve: StaticCurve | null = null;
  if (stat && !stat.failed) {
    const both = [...stat.up, ...stat.down];
    const avg = stat.up.map((u, i) => 0.5 * (u.external_W + stat.down[i].external_W));
    const ext = mmm(both.map((v) => v.external_W));
    const meanExt = avg.reduce((a, b) => a + b, 0) / avg.length;
    const hyst =
      stat.up.reduce((a, u, i) => a + Math.abs(u.external_W - stat.down[i].external_W), 0) / stat.up.length;
    staticSummary = {
      external_W: { ...ext, mean: meanExt },
      laser_output_W: {
        ...mmm(both.map((v) => v.laserOutput_W)),
        mean: mmm(both.map((v) => v.laserOutput_W)).mean,
      },
      intracavity_W: mmm(both.map((v) => v.intracavity_W)),
      hysteresis_rel: meanExt > 0 ? hyst / meanExt : 0,
      positions: stat.positions_m.length,
      converged: stat.converged,
    };
    staticCurve = {
      position_m: stat.positions_m,
      external_up_W: stat.up.map((v) => v.external_W),
      external_down_W: stat.down.map((v) => v.external_W),
      laser_output_up_W: stat.up.map((v) => v.laserOutput_W),
      laser_output_down_W: stat.down.map((v) => v.laserOutput_W),
    };
    if (!stat.converged) {
      warnings.push({
        code: 'static-not-converged',
        message: `static mean not converged to 1 % at ${stat.positions_m.length} positions (levels: ${stat.levels.map((l) => `${l.positions}: ${l.mean_W.toExponential(3)} W`).join(', ')})`,
      });
    }
  }

  // ---- driven summary
  let drivenSummary: DrivenSummary | null = null;
  const rule = designRule({
    t2: params.t2,
    feedbackEfficiency: params.feedbackEfficiency,
    laserRoundTrip_s: params.roundTripLaser_s,
    externalRoundTrip_s: params.hasExternal ? params.roundTripExternal_s : 1,
    alpha: params.alpha,
    wavelength_m: lambda,
    fieldRatio: driven && !driven.failed && params.returnToLaser ? driven.fieldRatio : null,
    waveform: drive.waveform === 'triangle' ? 'triangle' : moving ? 'sine' : 'off',
    peakSpeed_m_s: vPeak,
  });
  if (driven && !driven.failed) {
    const offs = driven.offsets;
    const means = offs.map((o) => o.external.mean);
    const meanExt = means.reduce((a, b) => a + b, 0) / means.length;
    // pooled standard deviation over all offsets: within-offset variance plus spread of the means
    const pooledVar =
      offs.reduce((a, o) => a + o.external.variance + (o.external.mean - meanExt) ** 2, 0) / offs.length;
    const outMeans = offs.map((o) => o.laserOutput.mean);
    const meanOut = outMeans.reduce((a, b) => a + b, 0) / outMeans.length;
    const outVar =
      offs.reduce((a, o) => a + o.laserOutput.variance + (o.laserOutput.mean - meanOut) ** 2, 0) /
      offs.length;
    const hopsPerS = offs.reduce((a, o) => a + o.hops.hopsPerSecond, 0) / offs.length;
    const hopsPerPeriod = f ? offs.reduce((a, o) => a + (o.hops.hopsPerPeriod ?? 0), 0) / offs.length : 0;
    const ripple = offs.reduce((a, o) => a + o.band.ripple_rel, 0) / offs.length;
    const rippleFull = offs.reduce((a, o) => a + o.band.ripple_full_band_rel, 0) / offs.length;
    if (!offs.every((o) => o.band.enoughWindows)) {
      warnings.push({
        code: 'short-window',
        message:
          'the analysed window holds fewer than three detection-band windows after the first filled; the in-band ripple is uncertain',
      });
    }
    const occupation = params.modes.index.map((index, m) => ({
      index,
      fraction: offs.reduce((a, o) => a + o.hops.occupation[m], 0) / offs.length,
    }));
    const hist = offs[0].hops.phaseHistogram.map((_, k) =>
      offs.reduce((a, o) => a + o.hops.phaseHistogram[k], 0),
    );
    const staticMean = staticSummary ? staticSummary.external_W.mean : null;
    const gos = staticMean && staticMean > 0 ? meanExt / staticMean : null;
    // What the still-mirror curve alone predicts at the same rest offsets and strokes: a few
    // rest offsets sample a peaked static curve coarsely, so a small stroke can show a
    // "gain" over the static mean that is only sampling. The class is judged against this.
    const quasi =
      stat && !stat.failed
        ? quasiStaticMean(
            stat,
            offs.map((o) => o.offset_m),
            drive,
            lambda / 2,
          )
        : null;
    const goqs = quasi !== null && quasi > 0 ? meanExt / quasi : null;
    const gows =
      staticSummary && staticSummary.external_W.min > 0 ? meanExt / staticSummary.external_W.min : null;
    const incoherentLevel = derived.incoherent_enhancement * free.intracavity_W;
    const incoherentFraction =
      Number.isFinite(incoherentLevel) && incoherentLevel > 0 ? meanExt / incoherentLevel : null;
    const cls = classifyRun(
      {
        status,
        message,
        freeRunningIntracavity_W: free.intracavity_W,
        hopsPerPeriod: f ? hopsPerPeriod : null,
        gainOverStatic: goqs !== null && gos !== null ? Math.min(gos, goqs) : gos,
        rippleRel: ripple,
        incoherentFraction,
      },
      s.analysis,
    );
    drivenSummary = {
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
      laser_intracavity_mean_W: offs.reduce((a, o) => a + o.intracavity.mean, 0) / offs.length,
      enhancement: free.intracavity_W > 0 ? meanExt / free.intracavity_W : 0,
      gain_over_static: gos,
      gain_over_worst_static: gows,
      gain_over_quasi_static: goqs,
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
      analysed_time_s: analysed_s,
      settle_time_s: settle_s,
    };
  }

  const driveSummary: DriveSummary = {
    waveform: drive.waveform,
    amplitude_m: drive.amplitude,
    frequency_Hz: drive.frequency,
    stroke_m: strokePeakToPeak(drive),
    peak_speed_m_s: vPeak,
    peak_acceleration_m_s2: peakAcceleration(drive),
    peak_doppler_Hz: (2 * vPeak) / lambda,
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
  const balance =
    driven && !driven.failed
      ? {
          laser_relative_error: Math.max(driven.balance.laser, stat?.worstBalance ?? 0),
          external_relative_error: driven.balance.external,
          relative_error: Math.max(driven.balance.laser, driven.balance.external, stat?.worstBalance ?? 0),
          interface_mismatch_rel: driven.balance.mismatch,
        }
      : null;
  if (balance) {
    if (balance.interface_mismatch_rel > 0.05) {
      warnings.push({
        code: 'interface-mismatch',
        message: `interface mismatch at M2 ${(100 * balance.interface_mismatch_rel).toFixed(1)} % > 5 %: the mean-field laser equation's approximation is large here (MODEL.md 3.3)`,
      });
    }
    if (balance.relative_error > 1e-4) {
      warnings.push({
        code: 'power-balance',
        message: `power balance closes only to ${balance.relative_error.toExponential(2)} (> 1e-4): reduce the step (simulation.substeps)`,
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
  const wall = (Date.now() - wall0) / 1000;
  const drivenWall = Math.max(
    1e-9,
    wall - (opts.references && opts.references.key === refKey ? 0 : refs.data.wall_s),
  );
  const summary: RunSummary = {
    version: RESULT_VERSION,
    tool_version: TOOL_VERSION,
    name: s.name,
    scenario: normaliseScenarioForJson(s),
    scenario_sha256: scenarioSha256(s),
    seed,
    engine,
    engine_reason: engineReason,
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
      wall_s: wall,
      steps,
      engine_steps_per_s: steps / drivenWall,
      mode_steps_per_s: (laneSteps * params.M) / drivenWall,
    },
    warnings,
    actuator: s.actuator ? actuatorSheet(s) : null,
  };
  const spectra: SpectraSet | null =
    driven && !driven.failed
      ? {
          rin: driven.rin,
          optical: driven.optical,
          drive_harmonics_Hz:
            f && driven.rin ? driveHarmonics(f, driven.rin.f_Hz[driven.rin.f_Hz.length - 1], 50) : [],
        }
      : null;
  return {
    summary,
    traces: driven && !driven.failed ? driven.traces : null,
    spectra,
    static_curve: staticCurve,
    speed_curve: speedCurve,
  };
}
