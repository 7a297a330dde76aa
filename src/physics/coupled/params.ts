/**
 * The numbers the time-stepping engines need, gathered once from a scenario (SI).
 * Symbols follow docs/model.md §3.
 */
import { mirrorTransmission, Scenario } from '../../scenario/schema';
import type { GainSpec } from '../../scenario/schema';
import { SPEED_OF_LIGHT_m_s } from '../constants';
import { cavityModes, crossSaturation, ModeSet } from '../laser/modes';

export interface CoupledParams {
  modes: ModeSet;
  /** number of laser modes M */
  M: number;
  /** laser round-trip time tau_L = 2 n L1 / c, s */
  roundTripLaser_s: number;
  /** external round-trip time at rest tau_E = 2 L2 / c, s (0 without an external cavity) */
  roundTripExternal_s: number;
  /** cold-cavity power decay rate gamma_c = -ln(R1 R2 (1 - l)^2) / tau_L, 1/s */
  gammaC: number;
  /** inversion relaxation time tau_N, s */
  tauN: number;
  /** class A: inversion eliminated adiabatically (tau_N < 0.1 / gamma_c) */
  classA: boolean;
  pump: number;
  /** gain shape f_m per mode */
  gainRel: Float64Array;
  /** cross-saturation C_mk, row-major M x M */
  cross: Float64Array;
  /** 1 / P_sat, 1/W */
  invPsat: number;
  /**
   * Doppler (inhomogeneous) gain: the inversion target is p f_m / sqrt(1 + S_m / 2) instead
   * of p f_m / (1 + S_m) (docs/model.md §3.2, src/physics/laser/saturation.ts)
   */
  inhomogeneous: boolean;
  /**
   * Linewidth-enhancement factor as data sheets sign it: a gain above its steady value
   * raises the optical frequency, d(phase)/dt = (alpha / 2)(G - gamma_c) (docs/model.md §3.1)
   */
  alpha: number;
  /** spontaneous power P_sp at the gain peak, W; mode m receives P_sp f_m */
  spontaneous_W: number;
  hasExternal: boolean;
  returnToLaser: boolean;
  /** amplitude coefficients of M2: r2 = sqrt(R2), t2 = sqrt(T2) */
  r2: number;
  t2: number;
  R1: number;
  T1: number;
  A1: number;
  R2: number;
  T2: number;
  A2: number;
  R3: number;
  T3: number;
  A3: number;
  gapTransmission: number;
  feedbackEfficiency: number;
  roundtripEfficiency: number;
  /** field coupling of the laser mode into the external mode, t2 sqrt(eta_fb) */
  couplingOut: number;
  /** injection rate coefficient kappa = t2 sqrt(eta_fb) / tau_L (0 when the laser ignores its feedback), 1/s */
  kappa: number;
  /** effective return mirror r3' = r3 T_gap sqrt(eta_rt) */
  r3eff: number;
  /** external length at rest L2, m */
  externalLength_m: number;
  /** 2 pi frac(2 L2 / lambda_m): rest phase of the external round trip, rad, per mode */
  extPhase0: Float64Array;
  /** 4 pi / lambda_m: phase per metre of mirror displacement, rad/m, per mode */
  phasePerMetre: Float64Array;
  /** single-pass internal loss */
  internalLoss: number;
  /** the gain line as the scenario gives it (the round-trip engine builds its packets from it) */
  gain: GainSpec;
  /**
   * The coupling law of docs/model.md §2.5: amplitude factor on couplingOut and kappa at
   * mirror displacement x from rest (m; the lane's rest offset plus the drive), relative to
   * feedbackEfficiency, when an actuator tilts the return mirror as it moves
   * (actuator.tilt_per_stroke); null when the coupling does not depend on the position.
   * Every time-domain engine applies it at the step's mirror position; the power flows use
   * eta_fb factor(x)^2 as the instantaneous feedback efficiency.
   */
  couplingAt: ((x_m: number) => number) | null;
}

/**
 * Build the engine parameters. feedback/roundtrip efficiencies are passed in (from the
 * Gaussian-beam optics or the scenario overrides).
 */
export function buildCoupledParams(
  s: Scenario,
  efficiencies: { feedback: number; roundtrip: number; couplingAt?: ((x_m: number) => number) | null },
): CoupledParams {
  const c = SPEED_OF_LIGHT_m_s;
  const L = s.laser;
  const modes = cavityModes(L);
  const M = modes.count;
  const tauL = (2 * L.refractive_index * L.cavity_length) / c;
  const R1 = L.rear_mirror.reflectivity;
  const R2 = L.output_coupler.reflectivity;
  const survive = R1 * R2 * (1 - L.internal_loss) ** 2;
  const gammaC = survive > 0 ? -Math.log(survive) / tauL : Infinity;
  const ext = s.external;
  const hasExternal = ext !== undefined;
  const T2 = mirrorTransmission(L.output_coupler);
  const R3 = ext ? ext.return_mirror.reflectivity : 0;
  const T3 = ext ? mirrorTransmission(ext.return_mirror) : 0;
  const Tg = ext ? ext.gap_transmission : 1;
  const etaFb = hasExternal ? efficiencies.feedback : 0;
  const etaRt = hasExternal ? efficiencies.roundtrip : 0;
  const L2 = ext ? ext.length : 0;
  const extPhase0 = new Float64Array(M);
  const phasePerMetre = new Float64Array(M);
  for (let m = 0; m < M; m++) {
    // 2 L2 nu_m / c split as an integer part and a fraction keeps the phase exact to ~1e-10 rad.
    const cycles = (2 * L2 * modes.frequency_Hz[m]) / c;
    extPhase0[m] = 2 * Math.PI * (cycles - Math.floor(cycles));
    phasePerMetre[m] = (4 * Math.PI) / modes.wavelength_m[m];
  }
  const t2 = Math.sqrt(T2);
  const returnToLaser = hasExternal && (ext?.return_to_laser ?? true);
  return {
    modes,
    M,
    roundTripLaser_s: tauL,
    roundTripExternal_s: hasExternal ? (2 * L2) / c : 0,
    gammaC,
    tauN: L.gain.inversion_lifetime,
    classA: L.gain.inversion_lifetime < 0.1 / gammaC,
    pump: L.gain.pump_ratio,
    gainRel: Float64Array.from(modes.gainRel),
    cross: crossSaturation(modes, L.gain),
    invPsat: 1 / L.gain.saturation_power,
    inhomogeneous: L.gain.broadening === 'inhomogeneous',
    alpha: L.gain.alpha,
    spontaneous_W: L.gain.spontaneous_power,
    hasExternal,
    returnToLaser,
    r2: Math.sqrt(R2),
    t2,
    R1,
    T1: mirrorTransmission(L.rear_mirror),
    A1: L.rear_mirror.loss,
    R2,
    T2,
    A2: L.output_coupler.loss,
    R3,
    T3,
    A3: ext ? ext.return_mirror.loss : 0,
    gapTransmission: Tg,
    feedbackEfficiency: etaFb,
    roundtripEfficiency: etaRt,
    couplingOut: t2 * Math.sqrt(etaFb),
    kappa: returnToLaser ? (t2 * Math.sqrt(etaFb)) / tauL : 0,
    r3eff: Math.sqrt(R3) * Tg * Math.sqrt(etaRt),
    externalLength_m: L2,
    extPhase0,
    phasePerMetre,
    internalLoss: L.internal_loss,
    gain: L.gain,
    couplingAt: hasExternal ? (efficiencies.couplingAt ?? null) : null,
  };
}
