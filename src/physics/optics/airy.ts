/**
 * Static (Airy) response of the external cavity: a two-mirror Fabry-Perot made of the
 * output coupler M2 (amplitude reflection r2, transmission t2) and an effective back
 * reflector r3' = r3 T_gap sqrt(eta_rt) (docs/model.md §2).
 *
 * Sign convention (docs/model.md §2 and §3.3): the reflection of M2 seen from inside the gap is
 * r2' = -r2 (Stokes relations), so with phi = omega tau the external round-trip phase
 *   a / a_in = t2 / (1 + r2 r3' e^{-i phi}),
 * and resonance (largest circulating power) is at e^{-i phi} = -1, i.e. phi = pi (mod 2 pi).
 *
 * All functions take amplitude coefficients (r = sqrt(R), t = sqrt(T)), dimensionless.
 * Complex numbers are plain {re, im} objects: these are static, not hot-loop, functions.
 */
import { SPEED_OF_LIGHT_m_s } from '../constants';

/** A complex number. */
export interface Complex {
  re: number;
  im: number;
}

/**
 * Effective amplitude reflection of the back reflector seen from M2 over one round trip:
 * r3' = r3 T_gap sqrt(eta_rt).
 * The gap element is passed twice (power T_gap^2, amplitude T_gap); eta_rt is the power
 * kept in the external mode per round trip (amplitude sqrt(eta_rt)). docs/model.md §2.
 * @param r3 amplitude reflection of M3 (sqrt(R3))
 * @param gapTransmission single-pass power transmission of the gap element, 0..1
 * @param roundtripEfficiency eta_rt, 0..1
 */
export function effectiveBackReflection(
  r3: number,
  gapTransmission: number,
  roundtripEfficiency: number,
): number {
  return r3 * gapTransmission * Math.sqrt(roundtripEfficiency);
}

/**
 * Circulating forward field in the gap per unit incident field from the laser side:
 * a / a_in = t2 / (1 + r2 r3' e^{-i phi}).
 * Derivation: a = t2 a_in + r2' b, b = r3' e^{-i phi} a, r2' = -r2 (docs/model.md §3.3).
 * Reference: Siegman, Lasers (1986), ch. 11 (Fabry-Perot circulating field), with the
 * r2' = -r2 sign of docs/model.md.
 * @param phi_rad external round-trip phase omega tau, rad
 */
export function circulatingField(r2: number, t2: number, r3p: number, phi_rad: number): Complex {
  const rho = r2 * r3p;
  const dRe = 1 + rho * Math.cos(phi_rad);
  const dIm = -rho * Math.sin(phi_rad);
  const d2 = dRe * dRe + dIm * dIm;
  return { re: (t2 * dRe) / d2, im: (-t2 * dIm) / d2 };
}

/**
 * Circulating one-way power in the gap per unit incident power:
 * |a/a_in|^2 = T2 / (1 + rho^2 + 2 rho cos phi), rho = r2 r3'.
 * On resonance (phi = pi): T2 / (1 - rho)^2; half way between (phi = 0): T2 / (1 + rho)^2.
 * Reference: Hecht, Optics (4th ed.), sec. 9.6 (Airy function); Siegman, Lasers, ch. 11.
 * @param phi_rad external round-trip phase, rad
 */
export function circulatingPowerRatio(r2: number, t2: number, r3p: number, phi_rad: number): number {
  const rho = r2 * r3p;
  return (t2 * t2) / (1 + rho * rho + 2 * rho * Math.cos(phi_rad));
}

/**
 * Phase average of the circulating power ratio, the "incoherent enhancement":
 * <|a/a_in|^2>_phi = T2 / (1 - R2 R3').
 * Analytic integral: (1/2 pi) int_0^{2 pi} dphi / (1 + rho^2 + 2 rho cos phi) = 1 / (1 - rho^2)
 * for rho < 1 (Gradshteyn & Ryzhik 3.613.2 with n = 0; or Parseval on the geometric series
 * sum_k (-rho e^{-i phi})^k, whose squared coefficients sum to 1 / (1 - rho^2)).
 * Special case: rho = 1 gives Infinity.
 */
export function phaseAveragedPowerRatio(r2: number, t2: number, r3p: number): number {
  const rho = r2 * r3p;
  return (t2 * t2) / (1 - rho * rho);
}

/**
 * Coefficient of finesse of the Airy function: F = 4 rho / (1 - rho)^2, rho = r2 r3', so
 * that |a/a_in|^2 = [T2 / (1 - rho)^2] / (1 + F sin^2(delta / 2)), delta = phi - pi.
 * Reference: Hecht, Optics (4th ed.), sec. 9.6 (coefficient of finesse F).
 */
export function airyCoefficient(r2: number, r3p: number): number {
  const rho = r2 * r3p;
  return (4 * rho) / ((1 - rho) * (1 - rho));
}

/**
 * Finesse in the usual high-finesse form: F* = pi sqrt(rho) / (1 - rho), rho = r2 r3'.
 * Equals (pi / 2) sqrt(F) with F the coefficient of finesse. Good to O((1 - rho)^2) for
 * rho near 1. Reference: Siegman, Lasers, ch. 11; Hecht, Optics, sec. 9.6.
 */
export function finesse(r2: number, r3p: number): number {
  const rho = r2 * r3p;
  return (Math.PI * Math.sqrt(rho)) / (1 - rho);
}

/**
 * Exact finesse, FSR over the full width at half maximum of the Airy peak:
 * F*_exact = 2 pi / FWHM_phase, FWHM_phase = 4 arcsin(1 / sqrt(F)), F = airyCoefficient.
 * Follows from 1 + F sin^2(delta/2) = 2 at the half-maximum points.
 * Special case: F < 1 (rho < 3 - 2 sqrt 2 ~ 0.17): the response never drops to half its
 * peak, no FWHM exists, and NaN is returned. Reference: Hecht, Optics, sec. 9.6.
 */
export function finesseExact(r2: number, r3p: number): number {
  const F = airyCoefficient(r2, r3p);
  if (!(F >= 1)) return NaN;
  return Math.PI / (2 * Math.asin(1 / Math.sqrt(F)));
}

/**
 * Free spectral range of a two-mirror cavity: FSR = c / (2 n L), Hz.
 * @param length_m mirror spacing L, m
 * @param refractiveIndex n of the medium filling the spacing (1 for the air gap)
 */
export function freeSpectralRange_Hz(length_m: number, refractiveIndex = 1): number {
  return SPEED_OF_LIGHT_m_s / (2 * refractiveIndex * length_m);
}

/**
 * Round-trip time of a two-mirror cavity: tau = 2 n L / c, s.
 * @param length_m mirror spacing L, m
 * @param refractiveIndex n of the medium filling the spacing
 */
export function roundTripTime_s(length_m: number, refractiveIndex = 1): number {
  return (2 * refractiveIndex * length_m) / SPEED_OF_LIGHT_m_s;
}

/**
 * Full width at half maximum of a cavity resonance: delta_nu = FSR / finesse, Hz.
 * Pass finesseExact for the exact Airy width (NaN propagates when it has none).
 * Reference: Siegman, Lasers, ch. 11.
 */
export function linewidth_Hz(freeSpectralRange_Hz: number, cavityFinesse: number): number {
  return freeSpectralRange_Hz / cavityFinesse;
}

/**
 * Amplitude reflection of the compound mirror (M2 + external cavity) seen by the laser:
 * r_eff(phi) = r2 + T2 r3' e^{-i phi} / (1 + r2 r3' e^{-i phi}).
 * Equivalently (r2 + (R2 + T2) r3' z) / (1 + r2 r3' z) with z = e^{-i phi}; with a lossless
 * M2 (R2 + T2 = 1) and r3' = 1 it is an all-pass, |r_eff| = 1. docs/model.md §2.
 * @param phi_rad external round-trip phase, rad
 */
export function compoundReflection(r2: number, t2: number, r3p: number, phi_rad: number): Complex {
  const zRe = Math.cos(phi_rad);
  const zIm = -Math.sin(phi_rad);
  const T2 = t2 * t2;
  // numerator T2 r3' z, denominator 1 + r2 r3' z
  const nRe = T2 * r3p * zRe;
  const nIm = T2 * r3p * zIm;
  const dRe = 1 + r2 * r3p * zRe;
  const dIm = r2 * r3p * zIm;
  const d2 = dRe * dRe + dIm * dIm;
  return { re: r2 + (nRe * dRe + nIm * dIm) / d2, im: (nIm * dRe - nRe * dIm) / d2 };
}
