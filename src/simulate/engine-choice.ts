/**
 * Which engine runs what, and why (docs/model.md §3.7): the round-trip engine (the
 * reference) always applies; the modal engines (per-mode laser equation with the gap as a
 * delay line, `modal`, or as a mean field, `meanfield`) only where their error against the
 * round-trip engine is shown small (weak coupling, returned light close to the lasing
 * line); the adiabatic path where the mirror crosses each resonance slowly compared with
 * the slowest response (the regrowth of a mode from noise).
 *
 * Internally the engines keep their kinds ('roundtrip', 'exact' = modal, 'fast' =
 * meanfield); users see the names of ENGINE_NAMES.
 */
import type { Scenario } from '../scenario/schema';
import type { CoupledParams } from '../physics/coupled/params';
import type { EngineKind } from '../physics/coupled/factory';
import { peakSpeed } from '../physics/drive';
import { roundTripStepFor } from '../physics/coupled/roundtrip';

export type DrivenEngine = EngineKind | 'adiabatic' | 'speedcurve';

/** The name users see for each engine kind. */
export const ENGINE_NAMES: Record<DrivenEngine, string> = {
  roundtrip: 'roundtrip',
  exact: 'modal',
  fast: 'meanfield',
  adiabatic: 'adiabatic',
  speedcurve: 'speedcurve',
};

/** What a scenario or the command line may ask for; 'exact' and 'fast' are the 0.1 names, kept for one release. */
export type EngineRequest =
  'auto' | 'roundtrip' | 'modal' | 'meanfield' | 'adiabatic' | 'speedcurve' | 'exact' | 'fast';

/** The 0.1 engine names and what they are now. */
export const DEPRECATED_ENGINE_NAMES: Partial<Record<EngineRequest, EngineRequest>> = {
  exact: 'modal',
  fast: 'meanfield',
};

/** The name users see for an engine kind. */
export function engineName(kind: DrivenEngine): string {
  return ENGINE_NAMES[kind];
}

/**
 * Largest coupling strength X (below) for which a modal engine may stand in for the
 * round-trip engine (docs/model.md §3.7): measured, the mean gap power of the modal engine
 * is within 2 % of the round-trip engine's below it (test/engine-choice-roundtrip.test.ts).
 */
export const MODAL_MAX_COUPLING = 0.08;
/** Largest spread of the returned light, as a fraction of the laser mode spacing, for a modal engine. */
export const MODAL_MAX_SPREAD = 0.1;

/**
 * The a-priori coupling strength X: how far the gap can move the laser's round-trip loss,
 * as a fraction of the cold-cavity loss chi0 = gamma_c tau_L. The compound mirror
 * r_eff(phi) = r2 + eta T2 r3' e^{-i phi} / (1 + r2 r3' e^{-i phi}) (§2.3) swings between
 * phi = 0 and phi = pi; X = max |ln(|r_eff|^2 / R2)| / chi0 over those two. The modal
 * equation is first order in the returned field and drops the Gires-Tournois return of
 * the light that re-enters the laser off its resonance, so its error grows with X. 0 when
 * the laser ignores its feedback.
 */
export function couplingStrength(p: CoupledParams): number {
  if (!p.hasExternal || !p.returnToLaser) return 0;
  const chi0 = p.gammaC * p.roundTripLaser_s;
  const k = p.feedbackEfficiency * p.T2 * p.r3eff;
  const rPlus = p.r2 + k / (1 + p.r2 * p.r3eff);
  const rMinus = p.r2 - k / (1 - p.r2 * p.r3eff);
  if (!(chi0 > 0) || p.R2 <= 0) return Infinity;
  const x = (r: number) => Math.abs(Math.log((r * r) / p.R2)) / chi0;
  // |r_eff(pi)| may pass through zero (the gap cancels M2's reflection): X is then unbounded
  return Math.max(x(rPlus), rMinus !== 0 ? x(Math.abs(rMinus)) : Infinity);
}

/** Largest round-trip phase change, as a fraction of the resonance width 2 pi / F, for the mean-field engine. */
export const FAST_VALID_FRACTION = 0.01;

export interface EnginePlan {
  static: { kind: EngineKind; dt: number };
  driven: { kind: DrivenEngine; dt: number; reason: string; warning: string | null };
  /** why the round-trip engine was or was not needed */
  modal: { allowed: boolean; coupling: number; spreadFraction: number; reason: string };
  /** the round-trip engine's step, s */
  roundTripStep_s: number;
  /** a modal engine was requested where the coupling does not allow it (warning code engine-coupling) */
  couplingWarning?: string | null;
  /** quantities the choice was made from */
  basis: {
    exactStep_s: number;
    fastStep_s: number;
    peakSpeed_m_s: number;
    phasePerRoundTrip_rad: number;
    resonanceWidth_rad: number;
    adiabaticMeasure: number;
  };
}

/**
 * Largest step of the mean-field engine set by the laser alone (docs/model.md §3.4). Its
 * 2 x 2 propagator is exact for the linear part over a step (cold-cavity decay, net gain,
 * the alpha rotation, injection and the gap), so the photon lifetime itself does not limit
 * it; what must be resolved is how fast the gain changes: the relaxation oscillation and
 * tau_N (class B), or the field's own relaxation gamma_c (p - 1) when the inversion follows
 * the field (class A). Measured on a 300 um chip (photon lifetime 2.9 ps, relaxation
 * oscillation 2.1 GHz): steady laser and gap powers agree within 0.5 % (the noise of the
 * 20 ns record) from 0.05 / gamma_c up to 0.2 / omega_R, 100 times longer.
 */
export function fastLaserStep(p: CoupledParams): number {
  const ro = Math.sqrt((p.gammaC * Math.max(p.pump - 1, 0.05)) / p.tauN);
  const own = p.classA ? 0.05 / p.gammaC : 0.5 * p.tauN;
  return Math.min(own, 0.1 / ro);
}

/**
 * Largest step of the delay-line engine set by the laser alone (docs/model.md §3.3): it
 * steps the laser with classical RK4, which must resolve every rate of the laser
 * equation: the field's net rate (1/2) gamma_c sqrt(1 + alpha^2) |n - 1| with |n - 1| up
 * to max(1, p - 1) in a transient, the rate at which returned light drives the field
 * (kappa r3'), the relaxation oscillation and the inversion's own rate. A tenth of each
 * time keeps RK4 far inside its stability limit (|lambda dt| < 2.8) and accurate. On a gas
 * laser this is far longer than the gap's round trip and changes nothing; on a short
 * semiconductor chip (photon lifetime ps, gap round trip ns) it is what keeps the engine
 * stable.
 */
export function exactLaserStep(p: CoupledParams): number {
  const ro = Math.sqrt((p.gammaC * Math.max(p.pump - 1, 0.05)) / p.tauN);
  const net = 0.5 * p.gammaC * Math.sqrt(1 + p.alpha * p.alpha) * Math.max(1, p.pump - 1);
  const inject = p.kappa * (p.hasExternal ? p.r3eff : 0);
  const inversion = p.classA ? Infinity : (0.25 * p.tauN) / Math.max(1, p.pump);
  return Math.min(0.1 / net, inject > 0 ? 0.1 / inject : Infinity, 0.1 / ro, inversion);
}

/** Peak mirror speed including drift and an estimate of the vibration's peak speed, m/s. */
export function totalPeakSpeed(s: Scenario): number {
  const d = s.drive;
  const vib = d.vibration ? Math.SQRT2 * 2 * Math.PI * d.vibration.bandwidth * d.vibration.rms * 2 : 0;
  return peakSpeed(d) + Math.abs(d.drift) + vib;
}

/**
 * Time step of the exact (delay-line) engine, s: tau_E / substeps, shortened to the laser's
 * own limit (exactLaserStep) where the laser is faster than that (or the laser-only step
 * without an external cavity).
 */
export function exactEngineStep(s: Scenario, p: CoupledParams): number {
  return p.hasExternal
    ? Math.min(p.roundTripExternal_s / s.simulation.substeps, exactLaserStep(p))
    : Math.min(fastLaserStep(p), exactLaserStep(p));
}

/** Why the exact engine's step is what it is, in words (for the run's engine reason). */
export function exactStepReason(s: Scenario, p: CoupledParams): string {
  if (!p.hasExternal) return 'laser alone: step set by the laser';
  const gap = p.roundTripExternal_s / s.simulation.substeps;
  const laser = exactLaserStep(p);
  return laser < gap
    ? `step ${laser.toPrecision(3)} s set by the laser (photon lifetime ${(1 / p.gammaC).toPrecision(3)} s, alpha, injection, relaxation), shorter than the gap round trip / substeps ${gap.toPrecision(3)} s`
    : `step ${gap.toPrecision(3)} s = gap round trip / ${s.simulation.substeps}`;
}

/**
 * Plan the engines of a run. finesse is that of the external cavity, regrowth_s the
 * slowest response time (the static settle time), requested the user's choice.
 */
export function planEngines(
  s: Scenario,
  p: CoupledParams,
  finesse: number,
  regrowth_s: number,
  requestedIn: EngineRequest,
  /** memory time of the coupled system (docs/model.md §3.6), s; without it the slow-drive path is not considered */
  memory_s?: number,
): EnginePlan {
  const requested = DEPRECATED_ENGINE_NAMES[requestedIn] ?? requestedIn;
  const modalRequest =
    requested === 'modal'
      ? 'exact'
      : requested === 'meanfield'
        ? 'fast'
        : requested === 'adiabatic'
          ? 'adiabatic'
          : requested === 'speedcurve'
            ? 'speedcurve'
            : 'auto';
  const m = planModalEngines(s, p, finesse, regrowth_s, modalRequest, memory_s);
  const rt = roundTripStepFor(p).dt;
  const X = couplingStrength(p);
  const F = Number.isFinite(finesse) && finesse > 0 ? finesse : 1;
  const spread = ((F / Math.PI) * 2 * m.basis.peakSpeed_m_s) / s.laser.wavelength;
  // the spread matters only to a laser that feels the returned light
  const spreadFraction = p.returnToLaser && p.modes.fsr_Hz > 0 ? spread / p.modes.fsr_Hz : 0;
  const fmt = (x: number) => x.toPrecision(3);
  const allowed = X <= MODAL_MAX_COUPLING && spreadFraction <= MODAL_MAX_SPREAD;
  const modalReason = allowed
    ? `weak coupling: the gap moves the laser's round-trip loss by at most ${fmt(X)} of itself (<= ${MODAL_MAX_COUPLING}), spread of the returned light ${fmt(100 * spreadFraction)} % of the mode spacing`
    : X > MODAL_MAX_COUPLING
      ? `strong coupling: the gap moves the laser's round-trip loss by up to ${fmt(X)} of itself (> ${MODAL_MAX_COUPLING})`
      : `spread of the returned light ${fmt(100 * spreadFraction)} % of the laser mode spacing > ${100 * MODAL_MAX_SPREAD} %`;
  const modal = { allowed, coupling: X, spreadFraction, reason: modalReason };
  const rtStatic = { kind: 'roundtrip' as const, dt: rt };
  const plan = (st: EnginePlan['static'], dr: EnginePlan['driven']): EnginePlan => ({
    static: st,
    driven: dr,
    modal,
    roundTripStep_s: rt,
    basis: m.basis,
  });
  const notValid = `a modal engine was requested where it is not shown to hold (${modalReason}); the round-trip engine is the reference (docs/model.md §3.7)`;
  if (requested === 'roundtrip')
    return plan(rtStatic, { kind: 'roundtrip', dt: rt, reason: 'requested', warning: null });
  if (requested === 'modal' || requested === 'meanfield')
    return { ...plan(m.static, { ...m.driven }), couplingWarning: allowed ? null : notValid };
  // asked for by name, the adiabatic and slow-drive paths run on the modal family (as in
  // 0.1), with the same coupling warning; `auto` builds them on the round-trip engine
  if (requested === 'adiabatic' || requested === 'speedcurve')
    return { ...plan(m.static, { ...m.driven }), couplingWarning: allowed ? null : notValid };
  // auto
  if (allowed) return plan(m.static, { ...m.driven, reason: `${modalReason}; ${m.driven.reason}` });
  if (m.driven.kind === 'adiabatic' || m.driven.kind === 'speedcurve')
    return plan(rtStatic, {
      ...m.driven,
      reason: `${m.driven.reason}; static curve${m.driven.kind === 'speedcurve' ? ' and speed curve' : ''} from the round-trip engine (${modalReason})`,
    });
  return plan(rtStatic, {
    kind: 'roundtrip',
    dt: rt,
    reason: `${modalReason}: round-trip engine`,
    warning: null,
  });
}

/** The plan among the modal engines and the adiabatic path alone (the 0.1 choice). */
function planModalEngines(
  s: Scenario,
  p: CoupledParams,
  finesse: number,
  regrowth_s: number,
  requested: 'auto' | 'exact' | 'fast' | 'adiabatic' | 'speedcurve',
  memory_s?: number,
): Pick<EnginePlan, 'static' | 'driven' | 'basis'> {
  const lambda = s.laser.wavelength;
  const exactStep = exactEngineStep(s, p);
  const v = totalPeakSpeed(s);
  const F = Number.isFinite(finesse) && finesse > 0 ? finesse : 1;
  const hPhase = v > 0 ? Math.min(lambda / (16 * F * v), (0.3 * lambda) / (4 * Math.PI * v)) : Infinity;
  const hLaser = fastLaserStep(p);
  const fastStep = Math.min(hLaser, hPhase);
  const tauE = p.hasExternal ? p.roundTripExternal_s : 0;
  const phaseRT = (4 * Math.PI * v * tauE) / lambda;
  const width = (2 * Math.PI) / F;
  // Measured against the exact engine on the demo cavity (laser ignoring its feedback, the
  // cleanest case): the mean gap power differs by -0.01 % at 0.14 % of the resonance width
  // per round trip, -0.13 % at 0.46 %, -0.97 % at 1.4 %, 6 % at 3.6 %, 17 % at 9 %, growing
  // as the square of that fraction. The mean field needs many round trips per resonance
  // crossing; 1 % of the width keeps it within about 0.5 %.
  const fastValid = phaseRT <= FAST_VALID_FRACTION * width;
  // v x (regrowth time) against the resonance width in position lambda / (2 F)
  const adiabaticMeasure = (v * regrowth_s) / (lambda / (2 * F));
  const adiabaticValid = adiabaticMeasure <= 0.05;
  const moving = v > 0;
  const basis = {
    exactStep_s: exactStep,
    fastStep_s: fastStep,
    peakSpeed_m_s: v,
    phasePerRoundTrip_rad: phaseRT,
    resonanceWidth_rad: width,
    adiabaticMeasure,
  };
  // a delay-line step shortened by the laser says so in the reason (docs/model.md §3.7)
  const laserLimited = p.hasExternal && exactLaserStep(p) < p.roundTripExternal_s / s.simulation.substeps;
  const stepNote = laserLimited ? `; ${exactStepReason(s, p)}` : '';
  const staticKind: EngineKind = requested === 'exact' || hLaser < 2 * exactStep ? 'exact' : 'fast';
  const stat = { kind: staticKind, dt: staticKind === 'exact' ? exactStep : hLaser };
  const fmt = (x: number) => x.toPrecision(3);
  if (requested === 'exact')
    return {
      static: stat,
      driven: { kind: 'exact', dt: exactStep, reason: `requested${stepNote}`, warning: null },
      basis,
    };
  if (requested === 'fast') {
    return {
      static: stat,
      driven: {
        kind: 'fast',
        dt: Math.max(fastStep, exactStep),
        reason: 'requested',
        warning: fastValid
          ? null
          : `the mean-field engine was requested but the round-trip phase changes by ${fmt(phaseRT)} rad per round trip, not small against the resonance width ${fmt(width)} rad`,
      },
      basis,
    };
  }
  if (requested === 'adiabatic') {
    return {
      static: stat,
      driven: {
        kind: 'adiabatic',
        dt: 0,
        reason: 'requested',
        warning: adiabaticValid
          ? null
          : `the adiabatic path was requested but v x regrowth time = ${fmt(adiabaticMeasure)} resonance widths, not << 1`,
      },
      basis,
    };
  }
  // ---- slow-drive path (docs/model.md §3.6): a step of its own, before the stepping engines
  const slow = memory_s !== undefined ? slowDriveCheck(s, memory_s) : null;
  if (slow && (requested === 'speedcurve' || (slow.applies && p.hasExternal && !adiabaticValid))) {
    return {
      static: stat,
      driven: {
        kind: 'speedcurve',
        dt: 0,
        reason: requested === 'speedcurve' ? 'requested' : slow.reason,
        warning: slow.applies ? null : `the speed-curve path was requested but ${slow.reason}`,
      },
      basis,
    };
  }
  // ---- end of the slow-drive step
  if (moving && p.hasExternal && adiabaticValid) {
    return {
      static: stat,
      driven: {
        kind: 'adiabatic',
        dt: 0,
        reason: `mirror slow: v x regrowth time = ${fmt(adiabaticMeasure)} resonance widths <= 0.05`,
        warning: null,
      },
      basis,
    };
  }
  if (fastValid && fastStep >= 2 * exactStep) {
    return {
      static: stat,
      driven: {
        kind: 'fast',
        dt: fastStep,
        reason: `round-trip phase change ${fmt(phaseRT)} rad <= ${FAST_VALID_FRACTION} of the resonance width ${fmt(width)} rad, step ${fmt(fastStep / exactStep)} x the exact one`,
        warning: null,
      },
      basis,
    };
  }
  const why = !fastValid
    ? `round-trip phase change ${fmt(phaseRT)} rad exceeds ${FAST_VALID_FRACTION} of the resonance width ${fmt(width)} rad`
    : `the mean-field step would be only ${fmt(fastStep / exactStep)} x the exact one`;
  return {
    static: stat,
    driven: { kind: 'exact', dt: exactStep, reason: `${why}${stepNote}`, warning: null },
    basis,
  };
}

// ---- slow-drive criterion (docs/model.md §3.6) ------------------------------------------

/**
 * Largest 2 pi f tau_mem for the slow-drive path. Each turning point is stepped directly
 * over a window of about (2 x 3 + 4) tau_mem (see simulate/slow-drive.ts), two per period:
 * at 0.05 the windows take a sixth of the period and the speed curve starts at 0.15 of the
 * peak speed. Measured against direct stepping: see docs/model.md §3.6.
 */
export const SLOW_DRIVE_MAX_MEMORY_RATIO = 0.05;
/** Fewest half wavelengths per stroke: with one or two there is no averaged moving state. */
export const SLOW_DRIVE_MIN_HALF_WAVES = 20;

export interface SlowDriveCheck {
  applies: boolean;
  /** 2 pi f tau_mem with f the highest drive frequency */
  memoryRatio: number;
  /** peak-to-peak stroke over lambda / 2 (smallest stroke of a two-tone drive's tones) */
  halfWaves: number;
  reason: string;
}

/** Whether a drive is slow enough and long enough in stroke for the slow-drive path. */
export function slowDriveCheck(s: Scenario, memory_s: number): SlowDriveCheck {
  const d = s.drive;
  const half = s.laser.wavelength / 2;
  const fmt = (x: number) => x.toPrecision(3);
  const fMax =
    d.waveform === 'two-tone' && d.second_amplitude > 0
      ? Math.max(d.frequency, d.second_frequency)
      : d.frequency;
  const stroke =
    d.waveform === 'two-tone' && d.second_amplitude > 0
      ? 2 * Math.max(d.amplitude, d.second_amplitude)
      : 2 * d.amplitude;
  const memoryRatio = 2 * Math.PI * fMax * memory_s;
  const halfWaves = stroke / half;
  const base = { memoryRatio, halfWaves };
  if (d.waveform === 'off' || d.amplitude <= 0)
    return { ...base, applies: false, reason: 'the mirror is not driven' };
  if (d.vibration && d.vibration.rms > 0)
    return {
      ...base,
      applies: false,
      reason: 'a random vibration adds turning points the path does not place',
    };
  if (memoryRatio > SLOW_DRIVE_MAX_MEMORY_RATIO)
    return {
      ...base,
      applies: false,
      reason: `2 pi f tau_mem = ${fmt(memoryRatio)} > ${SLOW_DRIVE_MAX_MEMORY_RATIO} (tau_mem ${fmt(memory_s)} s): the drive is not slow against the system's memory`,
    };
  if (halfWaves < SLOW_DRIVE_MIN_HALF_WAVES)
    return {
      ...base,
      applies: false,
      reason: `the stroke spans ${fmt(halfWaves)} half wavelengths < ${SLOW_DRIVE_MIN_HALF_WAVES}: no averaged moving state`,
    };
  return {
    ...base,
    applies: true,
    reason: `slow drive: 2 pi f tau_mem = ${fmt(memoryRatio)} <= ${SLOW_DRIVE_MAX_MEMORY_RATIO} (tau_mem ${fmt(memory_s)} s) and the stroke spans ${fmt(halfWaves)} half wavelengths >= ${SLOW_DRIVE_MIN_HALF_WAVES}`,
  };
}
