/**
 * Power overlap (mode-matching efficiency) of two coaxial fundamental Gaussian beams.
 */
import type { Complex } from './airy';

/**
 * Power overlap of two TEM00 beams at the same plane, travelling the same way, same
 * wavelength, given by their q-parameters:
 *   eta = |int u1 u2* dA|^2 / (int |u1|^2 dA int |u2|^2 dA) = 4 Im(q1) Im(q2) / |q1 - q2*|^2.
 * Derivation: u_j ~ (1/w_j) exp(-i k r^2 / (2 q_j)); the Gaussian integral gives
 * eta = 4 / (w1^2 w2^2 |1/w1^2 + 1/w2^2 + i (k/2)(1/R1 - 1/R2)|^2), which is the form above
 * (curvature mismatch included). Dimensionless, 0 < eta <= 1, 1 only for q1 = q2.
 * Reference: Kogelnik, Bell Syst. Tech. J. 44, 455 (1965) (coupling of Gaussian beams);
 * Siegman, Lasers (1986), ch. 17.
 * @param q1, q2 complex beam parameters, m (Im > 0)
 */
export function gaussianOverlap(q1: Complex, q2: Complex): number {
  const dRe = q1.re - q2.re;
  const dIm = q1.im + q2.im;
  return (4 * q1.im * q2.im) / (dRe * dRe + dIm * dIm);
}

/**
 * Kogelnik's mode-matching formula for coaxial beams from their waists and the distance
 * between the waists:
 *   eta = 4 / ((w01/w02 + w02/w01)^2 + (lambda d / (pi w01 w02))^2).
 * Reference: Kogelnik, Bell Syst. Tech. J. 44, 455 (1965); Siegman, Lasers, ch. 17.
 * @param waist1_m, waist2_m waist radii w01, w02, m
 * @param separation_m distance d between the two waists along the axis, m
 * @param wavelength_m vacuum wavelength, m
 */
export function waistOverlap(
  waist1_m: number,
  waist2_m: number,
  separation_m: number,
  wavelength_m: number,
): number {
  const ratio = waist1_m / waist2_m + waist2_m / waist1_m;
  const defocus = (wavelength_m * separation_m) / (Math.PI * waist1_m * waist2_m);
  return 4 / (ratio * ratio + defocus * defocus);
}
