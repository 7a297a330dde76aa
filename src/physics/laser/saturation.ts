/**
 * The one saturation law of the modal engines (docs/model.md §3.2).
 *
 * With S_m = sum_k C_mk |E_k|^2 / P_sat the saturation a mode sees, the inversion it
 * relaxes towards is n_m = p f_m / D(S_m), where
 *   homogeneous gain:              D = 1 + S                (one reservoir, 1 / (1 + s));
 *   inhomogeneous (Doppler) gain:  D = sqrt(1 + S / 2)     (power-broadened holes, 1 / sqrt(1 + s)).
 * The factor 1/2 keeps P_sat the homogeneous one-way saturation power in both: a single
 * mode off line centre (C_mm = 1) settles at 2 P_sat [(p f)^2 - 1], one at line centre
 * (C_mm = 2, both travelling waves burn the same hole: the Lamb dip) at P_sat [(p f)^2 - 1]
 * (W. E. Lamb, Phys. Rev. 134, A1429 (1964); Siegman, Lasers (1986), ch. 12 on
 * inhomogeneous saturation).
 */

/** Saturation denominator D(S) of the law above (S dimensionless, >= 0). */
export function saturationDenominator(inhomogeneous: boolean, S: number): number {
  return inhomogeneous ? Math.sqrt(1 + 0.5 * S) : 1 + S;
}

/**
 * Steady single-mode one-way intracavity power |E|^2 for pump times line shape pf and
 * self-saturation C_mm, W (0 below threshold pf <= 1): the root of p f / D(C_mm |E|^2 / P_sat) = 1.
 */
export function singleModePower(inhomogeneous: boolean, pf: number, Cmm: number, Psat_W: number): number {
  if (!(pf > 1)) return 0;
  return inhomogeneous ? (2 * Psat_W * (pf * pf - 1)) / Cmm : (Psat_W * (pf - 1)) / Cmm;
}
