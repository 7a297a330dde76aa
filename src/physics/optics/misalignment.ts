/**
 * Misalignment of the return mirror M3 (docs/model.md §2.5): a tilt and a decentre of M3
 * move the axis of the gap's eigenmode; the feedback coupling is the overlap of the
 * laser's beam with that displaced, tilted eigenmode. An actuator that tilts the mirror
 * as it moves makes the coupling follow the drive: `couplingLaw` gives the factor the
 * time-domain engines apply to the field coupling t2 sqrt(eta_fb) at every step.
 *
 * Conventions: tilt and decentre act in one plane (x); a positive tilt turns M3's surface
 * normal towards +x, a positive decentre moves M3 towards +x. Small angles throughout
 * (the overlap falls to 1/2 at tilts of order lambda / (pi w) ~ 1e-4 rad).
 */
import type { Scenario } from '../../scenario/schema';
import type { Complex } from './airy';
import {
  backsideMirrorRadius_m,
  cascade,
  curvedMirror,
  freeSpace,
  propagateQ,
  substrateFocalLength_m,
  thinLens,
  twoMirrorEigenmode,
} from './gaussian';
import { SUBSTRATE_INDEX } from './beams';

/**
 * Power overlap of beam 1 with beam 2 displaced by `offset_m` and tilted by `tilt_rad`
 * (same plane x, same plane of evaluation, same direction of travel), both TEM00 with
 * complex beam parameters q1, q2 (field u ~ exp(-i k r^2 / (2 q)), Siegman's convention).
 * With A_j = i k / (2 q_j) (Re A_j = 1 / w_j^2), per transverse axis the overlap integral
 * of exp(-A1 x^2) and exp(-A2 (x - d)^2 - i k theta x) is a Gaussian integral:
 *   eta_x = 2 sqrt(Re A1 Re A2) / |S| exp(2 Re(B^2 / (4 S) - A2* d^2)),
 *   S = A1 + A2*, B = 2 A2* d + i k theta,
 * and eta = eta_x eta_y with eta_y the same without offset or tilt. At equal waists on
 * a common waist plane this is exp(-(d / w0)^2 - (theta / theta0)^2), theta0 =
 * lambda / (pi w0); at unequal waists on a common waist plane
 * eta0 exp(-2 d^2 / (w1^2 + w2^2) - 2 pi^2 theta^2 w1^2 w2^2 / (lambda^2 (w1^2 + w2^2))).
 * Reference: Joyce and DeLoach, Appl. Opt. 23, 4187 (1984) (alignment of Gaussian beams);
 * Kogelnik, Bell Syst. Tech. J. 44, 455 (1965) for the coaxial part.
 * @param q1, q2 complex beam parameters at the plane, m (Im > 0)
 * @param offset_m transverse displacement of beam 2, m
 * @param tilt_rad angle of beam 2's axis to beam 1's, rad
 * @param wavelength_m vacuum wavelength, m
 */
export function offsetTiltedOverlap(
  q1: Complex,
  q2: Complex,
  offset_m: number,
  tilt_rad: number,
  wavelength_m: number,
): number {
  const k = (2 * Math.PI) / wavelength_m;
  const a1 = ikOver2q(q1, k);
  const a2 = ikOver2q(q2, k);
  // S = A1 + conj(A2)
  const sr = a1.re + a2.re;
  const si = a1.im - a2.im;
  const sAbs = Math.hypot(sr, si);
  const eta1 = (2 * Math.sqrt(a1.re * a2.re)) / sAbs;
  // B = 2 conj(A2) d + i k theta
  const br = 2 * a2.re * offset_m;
  const bi = -2 * a2.im * offset_m + k * tilt_rad;
  // B^2 / (4 S)
  const b2r = br * br - bi * bi;
  const b2i = 2 * br * bi;
  const den = 4 * (sr * sr + si * si);
  const qr = (b2r * sr + b2i * si) / den;
  // Re(B^2/(4S) - conj(A2) d^2) = qr - Re A2 d^2
  const expo = 2 * (qr - a2.re * offset_m * offset_m);
  return eta1 * eta1 * Math.exp(expo);
}

function ikOver2q(q: Complex, k: number): Complex {
  // i k / (2 q) = i k conj(q) / (2 |q|^2)
  const m = q.re * q.re + q.im * q.im;
  return { re: (k * q.im) / (2 * m), im: (k * q.re) / (2 * m) };
}

/**
 * Where the axis of a two-mirror cavity goes when mirror 2 (M3) is tilted by theta and
 * decentred by d: the axis is the line through both centres of curvature, so with
 * u = theta + d (1 - g3) / L (the decentre of a spherical mirror acts as a tilt d / R3)
 *   offset at mirror 1 (M2) = L u / (1 - g2 g3),
 *   offset at mirror 2 (M3) = g2 L u / (1 - g2 g3),
 *   slope of the axis = -(1 - g2) u / (1 - g2 g3)  (so offset(z) = offset at M2 + slope z).
 * Reference: Siegman, Lasers (1986), ch. 19 (misaligned resonators: the axis displacements
 * L theta2 / (1 - g1 g2) and g1 L theta2 / (1 - g1 g2) for a tilt theta2 of mirror 2).
 * Only meaningful for a stable cavity (0 < g2 g3 < 1).
 * @param length_m mirror spacing L, m
 * @param g2, g3 g-parameters of M2 (as seen from the gap) and M3
 */
export function gapAxisShift(
  length_m: number,
  g2: number,
  g3: number,
  tilt_rad: number,
  decenter_m: number,
): { offsetAtM2_m: number; offsetAtM3_m: number; slope_rad: number } {
  const u = tilt_rad + (decenter_m * (1 - g3)) / length_m;
  const den = 1 - g2 * g3;
  return {
    offsetAtM2_m: (length_m * u) / den,
    offsetAtM3_m: (g2 * length_m * u) / den,
    slope_rad: (-(1 - g2) * u) / den,
  };
}

/** How the return mirror's misalignment acts on the feedback coupling of a scenario. */
export interface Misalignment {
  /** false when the geometry gives no Gaussian beams to overlap (then factor is 1) */
  modelled: boolean;
  /** 'eigenmode' (stable gap: overlap with the displaced, tilted eigenmode) or 'return' (one round trip) */
  basis: 'eigenmode' | 'return' | 'none';
  /** eta_fb(misaligned) / eta_fb(aligned) at the scenario's tilt and decentre */
  factor: number;
  /** the same ratio at any tilt (rad) and decentre (m) of M3 */
  factorAt(tilt_rad: number, decenter_m: number): number;
  /** tilt of M3 (decentre 0) at which the coupling falls to half its aligned value, rad (null if not modelled) */
  halfCouplingTilt_rad: number | null;
  /** the eigenmode axis at M2 for the scenario's tilt and decentre (stable gap), m and rad */
  axisOffsetAtM2_m: number | null;
  axisSlope_rad: number | null;
  note: string | null;
}

/**
 * The misalignment factor of a scenario's geometry (docs/model.md §2.5). Same beam
 * geometry as computeBeams: the laser's TEM00 mode leaves through M2's substrate lens;
 * a stable gap overlaps it with its own eigenmode, displaced and tilted per gapAxisShift;
 * a gap without an eigenmode returns the beam once, tilted by 2u and displaced by 2 u L
 * at M2 (a mirror tilted by u deviates the reflected ray by 2u), overlapped with the
 * time-reversed laser beam.
 */
export function misalignmentOf(s: Scenario): Misalignment {
  const ext = s.external;
  const tilt = ext?.return_mirror.tilt ?? 0;
  const dec = ext?.return_mirror.decenter ?? 0;
  const none = (note: string | null): Misalignment => ({
    modelled: false,
    basis: 'none',
    factor: 1,
    factorAt: () => 1,
    halfCouplingTilt_rad: null,
    axisOffsetAtM2_m: null,
    axisSlope_rad: null,
    note,
  });
  if (!ext) return none(null);
  const lambda = s.laser.wavelength;
  const n = s.laser.refractive_index;
  const r2 = s.laser.output_coupler.radius;
  const laser = twoMirrorEigenmode(s.laser.cavity_length / n, s.laser.rear_mirror.radius, r2, lambda);
  if (!laser.qAtMirror2) {
    return none(
      tilt !== 0 || dec !== 0
        ? 'the laser has no Gaussian eigenmode, so the tilt and decentre of the return mirror are not modelled (coupling factor 1)'
        : null,
    );
  }
  const qOut = propagateQ(laser.qAtMirror2, thinLens(substrateFocalLength_m(r2, SUBSTRATE_INDEX)));
  const L = ext.length;
  const r3 = ext.return_mirror.radius;
  const gap = twoMirrorEigenmode(L, backsideMirrorRadius_m(r2, SUBSTRATE_INDEX), r3, lambda);
  let factorAt: (t: number, d: number) => number;
  let basis: Misalignment['basis'];
  let axis: { offsetAtM2_m: number; slope_rad: number } | null = null;
  if (gap.qAtMirror1 && gap.stability === 'stable') {
    const qEig = gap.qAtMirror1;
    const aligned = offsetTiltedOverlap(qOut, qEig, 0, 0, lambda);
    factorAt = (t, d) => {
      const sh = gapAxisShift(L, gap.g1, gap.g2, t, d);
      return offsetTiltedOverlap(qOut, qEig, sh.offsetAtM2_m, sh.slope_rad, lambda) / aligned;
    };
    basis = 'eigenmode';
    axis = gapAxisShift(L, gap.g1, gap.g2, tilt, dec);
  } else {
    const back = propagateQ(qOut, cascade(freeSpace(L), curvedMirror(r3), freeSpace(L)));
    const reversed: Complex = { re: -qOut.re, im: qOut.im };
    const aligned = offsetTiltedOverlap(back, reversed, 0, 0, lambda);
    const perTilt = Number.isFinite(r3) ? 1 / r3 : 0;
    factorAt = (t, d) => {
      const u = t + d * perTilt;
      return offsetTiltedOverlap(back, reversed, 2 * u * L, 2 * u, lambda) / aligned;
    };
    basis = 'return';
  }
  // ln(factor) is exactly quadratic in the tilt at zero decentre (a Gaussian integral),
  // so one evaluation gives the half-coupling tilt: theta_1/2 = sqrt(ln 2 / c), c = -ln f(theta) / theta^2
  const probe = 1e-6;
  const c = -Math.log(factorAt(probe, 0)) / (probe * probe);
  return {
    modelled: true,
    basis,
    factor: factorAt(tilt, dec),
    factorAt,
    halfCouplingTilt_rad: c > 0 ? Math.sqrt(Math.LN2 / c) : null,
    axisOffsetAtM2_m: axis ? axis.offsetAtM2_m : null,
    axisSlope_rad: axis ? axis.slope_rad : null,
    note: null,
  };
}

/**
 * The coupling law the time-domain engines read (docs/model.md §2.5): the amplitude
 * factor on the field coupling t2 sqrt(eta_fb) (and on the injection rate kappa) at mirror
 * displacement x from rest, relative to the eta_fb in the engine parameters (which holds
 * the static tilt and decentre):
 *   factor(x) = sqrt( f(tilt + tilt_per_stroke x, decenter) / f(tilt, decenter) ),
 * f the misalignment factor. Null when the coupling does not depend on the position
 * (no actuator tilt, or nothing to overlap): the engines then skip it.
 */
export function couplingLaw(
  s: Scenario,
  m: Misalignment = misalignmentOf(s),
): ((x_m: number) => number) | null {
  const k = s.actuator?.tilt_per_stroke ?? 0;
  if (k === 0 || !m.modelled || !s.external) return null;
  const tilt = s.external.return_mirror.tilt;
  const dec = s.external.return_mirror.decenter;
  const base = m.factorAt(tilt, dec);
  if (!(base > 0)) return () => 0;
  return (x_m: number) => Math.sqrt(m.factorAt(tilt + k * x_m, dec) / base);
}
