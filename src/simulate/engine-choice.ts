/**
 * Which engine runs what, and why (MODEL.md 3.4): the exact delay line always applies;
 * the mean-field engine where the round-trip phase changes little per round trip and its
 * longer step pays; the adiabatic path where the mirror crosses each resonance slowly
 * compared with the slowest response (the regrowth of a mode from noise).
 */
import type { Scenario } from '../scenario/schema';
import type { CoupledParams } from '../physics/coupled/params';
import type { EngineKind } from '../physics/coupled/factory';
import { peakSpeed } from '../physics/drive';

export type DrivenEngine = EngineKind | 'adiabatic' | 'speedcurve';

/** Largest round-trip phase change, as a fraction of the resonance width 2 pi / F, for the mean-field engine. */
export const FAST_VALID_FRACTION = 0.01;

export interface EnginePlan {
  static: { kind: EngineKind; dt: number };
  driven: { kind: DrivenEngine; dt: number; reason: string; warning: string | null };
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

/** Largest step of the mean-field engine set by the laser alone: photon lifetime, relaxation oscillation, tau_N. */
export function fastLaserStep(p: CoupledParams): number {
  const ro = Math.sqrt((p.gammaC * Math.max(p.pump - 1, 0.05)) / p.tauN);
  return Math.min(0.05 / p.gammaC, 0.1 / ro, p.classA ? Infinity : 0.5 * p.tauN);
}

/** Peak mirror speed including drift and an estimate of the vibration's peak speed, m/s. */
export function totalPeakSpeed(s: Scenario): number {
  const d = s.drive;
  const vib = d.vibration ? Math.SQRT2 * 2 * Math.PI * d.vibration.bandwidth * d.vibration.rms * 2 : 0;
  return peakSpeed(d) + Math.abs(d.drift) + vib;
}

/** Time step of the exact engine, s: tau_E / substeps (or the laser-only step without an external cavity). */
export function exactEngineStep(s: Scenario, p: CoupledParams): number {
  return p.hasExternal ? p.roundTripExternal_s / s.simulation.substeps : fastLaserStep(p);
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
  requested: 'auto' | 'exact' | 'fast' | 'adiabatic' | 'speedcurve',
  /** memory time of the coupled system (docs/model.md §3.6), s; without it the slow-drive path is not considered */
  memory_s?: number,
): EnginePlan {
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
  const staticKind: EngineKind = requested === 'exact' || hLaser < 2 * exactStep ? 'exact' : 'fast';
  const stat = { kind: staticKind, dt: staticKind === 'exact' ? exactStep : hLaser };
  const fmt = (x: number) => x.toPrecision(3);
  if (requested === 'exact')
    return {
      static: stat,
      driven: { kind: 'exact', dt: exactStep, reason: 'requested', warning: null },
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
  return { static: stat, driven: { kind: 'exact', dt: exactStep, reason: why, warning: null }, basis };
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
