/**
 * Fundamental (TEM00) Gaussian beams: ray (ABCD) matrices, the complex beam parameter q
 * and the eigenmode of a two-mirror resonator.
 *
 * Conventions (Kogelnik & Li, Appl. Opt. 5, 1550 (1966); Siegman, Lasers (1986), ch. 15, 20):
 * - q = z + i z_R with z the distance past the waist along the direction of travel and
 *   z_R = pi w0^2 / lambda; 1/q = 1/R - i lambda / (pi w^2).
 * - R > 0: diverging wavefront (centre of curvature behind the beam); R < 0: converging.
 * - Ray matrices act on (height, slope) in air; a flat-faced slab of thickness d and index
 *   n is the free-space matrix with the reduced length d / n (Siegman ch. 15).
 * - Mirror radii: > 0 concave towards the beam that hits them (focusing), Infinity flat.
 * All lengths in m; wavelength is the vacuum (= air) wavelength.
 */
import type { Complex } from './airy';

/** A 2x2 ray-transfer matrix [[A, B], [C, D]] (B in m, C in 1/m). */
export interface RayMatrix {
  A: number;
  B: number;
  C: number;
  D: number;
}

/**
 * Free propagation over a distance: [[1, d/n], [0, 1]].
 * @param distance_m geometric length d, m
 * @param refractiveIndex n of a flat-faced medium filling the path (reduced length d/n)
 * Reference: Siegman, Lasers, ch. 15 (ray matrices, reduced distance).
 */
export function freeSpace(distance_m: number, refractiveIndex = 1): RayMatrix {
  return { A: 1, B: distance_m / refractiveIndex, C: 0, D: 1 };
}

/**
 * Thin lens: [[1, 0], [-1/f, 1]]; f > 0 converging, f = Infinity no lens.
 * Reference: Siegman, Lasers, ch. 15.
 */
export function thinLens(focalLength_m: number): RayMatrix {
  return { A: 1, B: 0, C: Number.isFinite(focalLength_m) ? -1 / focalLength_m : 0, D: 1 };
}

/**
 * Reflection at a curved mirror, unfolded as a thin lens of focal length R/2:
 * [[1, 0], [-2/R, 1]]. R > 0 concave (focusing), Infinity flat.
 * Reference: Kogelnik & Li (1966), sec. II; Siegman, Lasers, ch. 15.
 */
export function curvedMirror(radius_m: number): RayMatrix {
  return thinLens(radius_m / 2);
}

/**
 * Focal length of a mirror substrate in transmission when the coating (radius R, > 0
 * concave towards the beam arriving from the coated side) is on the entrance face and the
 * exit face is flat: f = -R / (n_sub - 1) (a plano-concave lens diverges).
 * From the refraction power (n_sub - 1)/R_s of one spherical face, with R_s = -R since
 * the centre of curvature lies on the incoming side; thin substrate (thickness ignored).
 * Flat coating (R = Infinity): no lens (returns Infinity).
 * Reference: Hecht, Optics (4th ed.), sec. 5.2 (refraction at a spherical surface, lensmaker).
 */
export function substrateFocalLength_m(coatingRadius_m: number, substrateIndex: number): number {
  if (!Number.isFinite(coatingRadius_m)) return Infinity;
  return -coatingRadius_m / (substrateIndex - 1);
}

/**
 * Effective radius of a coated mirror seen from its uncoated (substrate) side, thin
 * substrate: R_back = -R / n_sub. The sign flips because a surface concave towards one
 * side is convex towards the other; the light reflects inside the glass, where a ray's
 * slope is 1/n_sub of its slope in air, so the mirror power 2/R becomes 2 n_sub / R.
 * Consistent with substrateFocalLength_m: a beam whose wavefront fits the coating on the
 * coated side leaves the substrate with a wavefront that fits R_back (tested).
 * Flat coating: Infinity. Reference: Siegman, Lasers, ch. 15 (reduced slopes n theta).
 */
export function backsideMirrorRadius_m(coatingRadius_m: number, substrateIndex: number): number {
  if (!Number.isFinite(coatingRadius_m)) return Infinity;
  return -coatingRadius_m / substrateIndex;
}

/** Matrix product m1 * m2 (m2 acts first). */
export function multiplyRay(m1: RayMatrix, m2: RayMatrix): RayMatrix {
  return {
    A: m1.A * m2.A + m1.B * m2.C,
    B: m1.A * m2.B + m1.B * m2.D,
    C: m1.C * m2.A + m1.D * m2.C,
    D: m1.C * m2.B + m1.D * m2.D,
  };
}

/**
 * The matrix of a sequence of elements listed in the order the beam meets them:
 * M = M_n ... M_2 M_1. An empty list gives the identity.
 */
export function cascade(...elementsInOrder: RayMatrix[]): RayMatrix {
  let m: RayMatrix = { A: 1, B: 0, C: 0, D: 1 };
  for (const e of elementsInOrder) m = multiplyRay(e, m);
  return m;
}

/**
 * ABCD law for the complex beam parameter: q' = (A q + B) / (C q + D), m.
 * Reference: Kogelnik & Li (1966), sec. III; Siegman, Lasers, ch. 20.
 */
export function propagateQ(q: Complex, m: RayMatrix): Complex {
  const nRe = m.A * q.re + m.B;
  const nIm = m.A * q.im;
  const dRe = m.C * q.re + m.D;
  const dIm = m.C * q.im;
  const d2 = dRe * dRe + dIm * dIm;
  return { re: (nRe * dRe + nIm * dIm) / d2, im: (nIm * dRe - nRe * dIm) / d2 };
}

/** q of a beam with waist radius w0 at a distance z past the waist: q = z + i pi w0^2 / lambda, m. */
export function qFromWaist(
  waistRadius_m: number,
  distancePastWaist_m: number,
  wavelength_m: number,
): Complex {
  return { re: distancePastWaist_m, im: (Math.PI * waistRadius_m * waistRadius_m) / wavelength_m };
}

/**
 * q from the local beam radius w and wavefront radius R: 1/q = 1/R - i lambda/(pi w^2), m.
 * R = Infinity for a flat wavefront.
 */
export function qFromBeam(beamRadius_m: number, wavefrontRadius_m: number, wavelength_m: number): Complex {
  const uRe = Number.isFinite(wavefrontRadius_m) ? 1 / wavefrontRadius_m : 0;
  const uIm = -wavelength_m / (Math.PI * beamRadius_m * beamRadius_m);
  const u2 = uRe * uRe + uIm * uIm;
  return { re: uRe / u2, im: -uIm / u2 };
}

/**
 * 1/e^2 intensity radius of the beam: w = sqrt(-lambda / (pi Im(1/q))), m.
 * Im(1/q) = -Im(q)/|q|^2. Reference: Siegman, Lasers, ch. 17 (eq. for 1/q).
 */
export function beamRadius_m(q: Complex, wavelength_m: number): number {
  const q2 = q.re * q.re + q.im * q.im;
  return Math.sqrt((wavelength_m * q2) / (Math.PI * q.im));
}

/**
 * Wavefront radius of curvature: R = 1 / Re(1/q) = |q|^2 / Re(q), m; Infinity at a waist.
 * R > 0 diverging, R < 0 converging (along the direction of travel).
 */
export function wavefrontRadius_m(q: Complex): number {
  if (q.re === 0) return Infinity;
  return (q.re * q.re + q.im * q.im) / q.re;
}

/** Waist radius of the beam: w0 = sqrt(lambda Im(q) / pi), m. */
export function waistRadius_m(q: Complex, wavelength_m: number): number {
  return Math.sqrt((wavelength_m * q.im) / Math.PI);
}

/**
 * Distance from this plane forward to the waist: -Re(q), m (negative: the waist lies
 * behind the plane, the beam is diverging).
 */
export function distanceToWaist_m(q: Complex): number {
  return -q.re;
}

/** g-parameter of a mirror for spacing L: g = 1 - L/R (1 for a flat mirror). Kogelnik & Li (1966). */
export function gParameter(length_m: number, radius_m: number): number {
  return Number.isFinite(radius_m) ? 1 - length_m / radius_m : 1;
}

export type Stability = 'stable' | 'marginal' | 'unstable';

/** |g1 g2| or |1 - g1 g2| below this counts as the stability edge (round-off of R = L inputs). */
export const STABILITY_EDGE_TOLERANCE = 1e-12;

/**
 * Stability of a two-mirror resonator from g1 g2: stable for 0 < g1 g2 < 1, marginal at
 * g1 g2 = 0 or 1 (within STABILITY_EDGE_TOLERANCE), unstable otherwise.
 * Reference: Kogelnik & Li (1966), sec. IV (stability diagram).
 */
export function resonatorStability(g1: number, g2: number): Stability {
  const p = g1 * g2;
  if (Math.abs(p) <= STABILITY_EDGE_TOLERANCE || Math.abs(1 - p) <= STABILITY_EDGE_TOLERANCE)
    return 'marginal';
  return p > 0 && p < 1 ? 'stable' : 'unstable';
}

/** The TEM00 eigenmode of a two-mirror resonator, or the reason there is none. */
export interface ResonatorMode {
  g1: number;
  g2: number;
  g1g2: number;
  stability: Stability;
  /** a finite Gaussian eigenmode was found (stable, or the symmetric confocal limit) */
  hasMode: boolean;
  /** plain sentence when there is no mode or the mode is a limit; null otherwise */
  reason: string | null;
  /** q just after reflection at mirror 1, travelling towards mirror 2 (null without a mode) */
  qAtMirror1: Complex | null;
  /** q arriving at mirror 2 from mirror 1, before reflection (null without a mode) */
  qAtMirror2: Complex | null;
  waistRadius_m: number | null;
  /** waist position measured from mirror 1 towards mirror 2 (outside 0..L: virtual waist) */
  waistPosition_m: number | null;
  spotAtMirror1_m: number | null;
  spotAtMirror2_m: number | null;
}

/**
 * Eigenmode of the two-mirror resonator M1 - L - M2 by q self-consistency over one round
 * trip: with M = [[A, B], [C, D]] from just after mirror 1 (travel to 2, reflect, travel
 * back, reflect at 1), q = (A q + B)/(C q + D) gives
 *   1/q = (D - A) / (2 B) - i sqrt(1 - m^2) / |B|,  m = (A + D)/2 = 2 g1 g2 - 1.
 * The closed forms (Kogelnik & Li 1966) follow, e.g. w1^2 = (lambda L/pi) sqrt(g2/(g1(1 - g1 g2))).
 * Special cases (results, not exceptions):
 * - g1 g2 = 1 (e.g. plane-parallel) or other marginal/unstable cases: no finite mode.
 * - g1 = g2 = 0 (symmetric confocal): the round trip is -1 for every q; the mode given is
 *   the symmetric limit (waist sqrt(lambda L / (2 pi)) in the middle), with a reason.
 * @param length_m mirror spacing (reduced length d/n through a flat-faced medium), m
 * @param radius1_m, radius2_m mirror radii, > 0 concave towards the resonator, Infinity flat
 * @param wavelength_m vacuum wavelength, m
 */
export function twoMirrorEigenmode(
  length_m: number,
  radius1_m: number,
  radius2_m: number,
  wavelength_m: number,
): ResonatorMode {
  const g1 = gParameter(length_m, radius1_m);
  const g2 = gParameter(length_m, radius2_m);
  const g1g2 = g1 * g2;
  const stability = resonatorStability(g1, g2);
  const none = (reason: string): ResonatorMode => ({
    g1,
    g2,
    g1g2,
    stability,
    hasMode: false,
    reason,
    qAtMirror1: null,
    qAtMirror2: null,
    waistRadius_m: null,
    waistPosition_m: null,
    spotAtMirror1_m: null,
    spotAtMirror2_m: null,
  });

  let q1: Complex;
  let reason: string | null = null;
  if (stability === 'stable') {
    const p = freeSpace(length_m);
    const m = cascade(p, curvedMirror(radius2_m), p, curvedMirror(radius1_m));
    const half = (m.A + m.D) / 2;
    const u: Complex = { re: (m.D - m.A) / (2 * m.B), im: -Math.sqrt(1 - half * half) / Math.abs(m.B) };
    const u2 = u.re * u.re + u.im * u.im;
    q1 = { re: u.re / u2, im: -u.im / u2 };
  } else if (stability === 'marginal' && Math.abs(g1) <= 1e-9 && Math.abs(g2) <= 1e-9) {
    q1 = { re: -length_m / 2, im: length_m / 2 };
    reason =
      'symmetric confocal resonator (g1 = g2 = 0): the mode is degenerate; the symmetric-limit mode is given';
  } else if (stability === 'marginal') {
    const what =
      Math.abs(1 - g1g2) <= STABILITY_EDGE_TOLERANCE
        ? g1 === 1 && g2 === 1
          ? 'plane-parallel (flat/flat)'
          : 'at the edge g1 g2 = 1'
        : 'at the edge g1 g2 = 0 (e.g. hemispherical)';
    return none(
      `resonator is marginally stable, ${what} (g1 g2 = ${g1g2.toPrecision(6)}): no finite Gaussian eigenmode`,
    );
  } else {
    return none(
      `resonator is unstable (g1 g2 = ${g1g2.toPrecision(6)}, outside 0..1): no Gaussian eigenmode`,
    );
  }
  const q2 = propagateQ(q1, freeSpace(length_m));
  return {
    g1,
    g2,
    g1g2,
    stability,
    hasMode: true,
    reason,
    qAtMirror1: q1,
    qAtMirror2: q2,
    waistRadius_m: waistRadius_m(q1, wavelength_m),
    waistPosition_m: distanceToWaist_m(q1),
    spotAtMirror1_m: beamRadius_m(q1, wavelength_m),
    spotAtMirror2_m: beamRadius_m(q2, wavelength_m),
  };
}
