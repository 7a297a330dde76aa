import { describe, expect, it } from 'vitest';
import {
  backsideMirrorRadius_m,
  beamRadius_m,
  cascade,
  curvedMirror,
  distanceToWaist_m,
  freeSpace,
  multiplyRay,
  propagateQ,
  qFromBeam,
  qFromWaist,
  resonatorStability,
  substrateFocalLength_m,
  thinLens,
  twoMirrorEigenmode,
  waistRadius_m,
  wavefrontRadius_m,
} from '../src/physics/optics';

const LAMBDA = 1064e-9;
const rel = (a: number, b: number) => Math.abs(a / b - 1);

/** Kogelnik & Li (1966) closed forms for a stable two-mirror resonator. */
function kogelnikLi(L: number, g1: number, g2: number, lambda: number) {
  const p = g1 * g2;
  const s = (lambda * L) / Math.PI;
  const denom = g1 + g2 - 2 * p;
  return {
    w0sq: (s * Math.sqrt(p * (1 - p))) / Math.abs(denom),
    w1sq: s * Math.sqrt(g2 / (g1 * (1 - p))),
    w2sq: s * Math.sqrt(g1 / (g2 * (1 - p))),
    z1: (L * g2 * (1 - g1)) / denom,
  };
}

describe('Gaussian beam propagation (ABCD law)', () => {
  it('free space: w(z) = w0 sqrt(1 + (z/zR)^2), R(z) = z (1 + (zR/z)^2)', () => {
    // Siegman, Lasers (1986), ch. 17 (Gaussian beam propagation in free space)
    const w0 = 0.3e-3;
    const zR = (Math.PI * w0 * w0) / LAMBDA;
    const q0 = qFromWaist(w0, 0, LAMBDA);
    for (const z of [0.01, 0.2, 1.5, 10]) {
      const q = propagateQ(q0, freeSpace(z));
      // round-off only: 1e-12
      expect(rel(beamRadius_m(q, LAMBDA), w0 * Math.sqrt(1 + (z / zR) ** 2))).toBeLessThan(1e-12);
      expect(rel(wavefrontRadius_m(q), z * (1 + (zR / z) ** 2))).toBeLessThan(1e-12);
      expect(rel(waistRadius_m(q, LAMBDA), w0)).toBeLessThan(1e-12);
      expect(distanceToWaist_m(q)).toBeCloseTo(-z, 12);
    }
    expect(wavefrontRadius_m(q0)).toBe(Infinity);
  });

  it('thin lens: 1/R_out = 1/R_in - 1/f with w unchanged; a medium of index n propagates over d/n', () => {
    // Siegman, Lasers, ch. 20 (ABCD law, thin lens); ch. 15 (reduced distance d/n)
    const q = qFromBeam(1e-3, 2.0, LAMBDA);
    const out = propagateQ(q, thinLens(0.5));
    expect(rel(beamRadius_m(out, LAMBDA), 1e-3)).toBeLessThan(1e-12);
    expect(rel(1 / wavefrontRadius_m(out), 1 / 2.0 - 1 / 0.5)).toBeLessThan(1e-12);
    const inGlass = propagateQ(q, freeSpace(0.3, 1.5));
    const inAir = propagateQ(q, freeSpace(0.2));
    expect(Math.abs(inGlass.re - inAir.re) + Math.abs(inGlass.im - inAir.im)).toBeLessThan(1e-15);
    // a mirror of radius R is a lens of focal length R/2 (Kogelnik & Li 1966, sec. II)
    expect(curvedMirror(0.8).C).toBeCloseTo(-1 / 0.4, 14);
    expect(curvedMirror(Infinity).C).toBe(0);
  });

  it('cascade applies the elements in the order met: lens then distance differs from distance then lens', () => {
    // matrix order of ray-transfer products, Siegman, Lasers, ch. 15
    const a = cascade(thinLens(0.1), freeSpace(0.2));
    expect(a).toEqual(multiplyRay(freeSpace(0.2), thinLens(0.1)));
    expect(a.A).toBeCloseTo(1 - 0.2 / 0.1, 14);
    expect(a.A * a.D - a.B * a.C).toBeCloseTo(1, 14);
  });

  it('coated substrate: seen from the back, a coating of radius R is a mirror of radius -R/n (explicit interface cascade)', () => {
    // second method: flat air->glass interface [[1,0],[0,1/n]], reflection in the glass at the coating
    // (radius -R seen from the glass side) [[1,0],[2/R,1]], glass->air [[1,0],[0,n]]
    // (Siegman, Lasers, ch. 15, refraction at a flat interface scales slopes by n1/n2)
    const R = 0.75;
    const n = 1.5;
    const explicit = cascade(
      { A: 1, B: 0, C: 0, D: 1 / n },
      { A: 1, B: 0, C: 2 / R, D: 1 },
      { A: 1, B: 0, C: 0, D: n },
    );
    expect(curvedMirror(backsideMirrorRadius_m(R, n)).C).toBeCloseTo(explicit.C, 12);
    // transmission: the coated face refracts with power (n - 1)/(-R) (Hecht, Optics, sec. 5.2), flat exit face none
    expect(substrateFocalLength_m(R, n)).toBeCloseTo(-R / (n - 1), 12);
    expect(substrateFocalLength_m(Infinity, n)).toBe(Infinity);
    // consistency: a beam whose wavefront fits the coating (R_w = R) leaves with R_w = -R_back
    const q = qFromBeam(0.4e-3, R, LAMBDA);
    const out = propagateQ(q, thinLens(substrateFocalLength_m(R, n)));
    expect(rel(wavefrontRadius_m(out), -backsideMirrorRadius_m(R, n))).toBeLessThan(1e-12);
  });
});

describe('two-mirror resonator eigenmode (Kogelnik & Li, Appl. Opt. 5, 1550 (1966))', () => {
  it('general stable case (L = 0.5 m, R1 = 1 m, R2 = 2 m) matches the closed forms for w0, w1, w2 and waist position', () => {
    // Kogelnik & Li (1966) two-mirror resonator: w0^2 = (lambda L/pi) sqrt(g1g2(1-g1g2))/(g1+g2-2g1g2),
    // w1^2 = (lambda L/pi) sqrt(g2/(g1(1-g1g2))), z1 = L g2 (1 - g1)/(g1 + g2 - 2 g1 g2)
    const L = 0.5;
    const m = twoMirrorEigenmode(L, 1, 2, LAMBDA);
    expect(m.stability).toBe('stable');
    expect(m.g1).toBeCloseTo(0.5, 14);
    expect(m.g2).toBeCloseTo(0.75, 14);
    const k = kogelnikLi(L, m.g1, m.g2, LAMBDA);
    // two independent routes (round-trip ABCD vs closed form): agree to round-off, 1e-10
    expect(rel(m.waistRadius_m! ** 2, k.w0sq)).toBeLessThan(1e-10);
    expect(rel(m.spotAtMirror1_m! ** 2, k.w1sq)).toBeLessThan(1e-10);
    expect(rel(m.spotAtMirror2_m! ** 2, k.w2sq)).toBeLessThan(1e-10);
    expect(rel(m.waistPosition_m!, k.z1)).toBeLessThan(1e-10);
    // self-consistency: the wavefront fits each mirror (Kogelnik & Li 1966: mirrors are phase fronts)
    expect(rel(-wavefrontRadius_m(m.qAtMirror1!), 1)).toBeLessThan(1e-10);
    expect(rel(wavefrontRadius_m(m.qAtMirror2!), 2)).toBeLessThan(1e-10);
  });

  it('negative-g stable case (R1 = R2 = 0.3 m, L = 0.5 m) matches the closed forms', () => {
    // Kogelnik & Li (1966), same formulas with |g1 + g2 - 2 g1 g2|; symmetric: waist in the middle
    const L = 0.5;
    const m = twoMirrorEigenmode(L, 0.3, 0.3, LAMBDA);
    expect(m.stability).toBe('stable');
    const k = kogelnikLi(L, m.g1, m.g2, LAMBDA);
    expect(rel(m.waistRadius_m! ** 2, k.w0sq)).toBeLessThan(1e-10);
    expect(rel(m.spotAtMirror1_m! ** 2, Math.abs(k.w1sq))).toBeLessThan(1e-10);
    expect(m.waistPosition_m!).toBeCloseTo(L / 2, 12);
  });

  it('symmetric confocal (R1 = R2 = L): waist sqrt(lambda L/(2 pi)) in the middle, spot sqrt(lambda L/pi) on the mirrors', () => {
    // Kogelnik & Li (1966), confocal resonator; Siegman, Lasers, ch. 19 (w0 = sqrt(lambda L/2pi), w = sqrt(2) w0)
    const L = 0.3;
    const m = twoMirrorEigenmode(L, L, L, LAMBDA);
    expect(m.stability).toBe('marginal');
    expect(m.hasMode).toBe(true);
    expect(m.reason).toMatch(/confocal/);
    expect(rel(m.waistRadius_m!, Math.sqrt((LAMBDA * L) / (2 * Math.PI)))).toBeLessThan(1e-12);
    expect(m.waistPosition_m!).toBeCloseTo(L / 2, 14);
    expect(rel(m.spotAtMirror1_m!, Math.sqrt((LAMBDA * L) / Math.PI))).toBeLessThan(1e-12);
    // the stable neighbour tends to the same waist (limit g -> 0 of the closed form): 1e-4 for g ~ 1e-4
    const near = twoMirrorEigenmode(L, L * 1.0001, L * 1.0001, LAMBDA);
    expect(near.stability).toBe('stable');
    expect(rel(near.waistRadius_m!, m.waistRadius_m!)).toBeLessThan(1e-4);
  });

  it('near-hemispherical (flat M1, R2 = L (1 + 1e-4)): waist on the flat mirror with the closed-form sizes', () => {
    // Kogelnik & Li (1966) with g1 = 1: w1^2 = (lambda L/pi) sqrt(g2/(1-g2)) at the flat mirror (the waist),
    // w2^2 = (lambda L/pi) / sqrt(g2 (1 - g2)) at the curved mirror
    const L = 0.2;
    const m = twoMirrorEigenmode(L, Infinity, L * (1 + 1e-4), LAMBDA);
    expect(m.stability).toBe('stable');
    const g2 = m.g2;
    const s = (LAMBDA * L) / Math.PI;
    // the small g2 (~1e-4) costs about 4 digits of cancellation in 1 - m^2: 1e-8
    expect(rel(m.spotAtMirror1_m! ** 2, s * Math.sqrt(g2 / (1 - g2)))).toBeLessThan(1e-8);
    expect(rel(m.spotAtMirror2_m! ** 2, s / Math.sqrt(g2 * (1 - g2)))).toBeLessThan(1e-8);
    expect(Math.abs(m.waistPosition_m!)).toBeLessThan(1e-9 * L);
    expect(rel(m.waistRadius_m!, m.spotAtMirror1_m!)).toBeLessThan(1e-8);
  });

  it('exact hemispherical, plane-parallel and unstable cases are results with a reason, not exceptions', () => {
    // stability edges g1 g2 = 0 and 1 (Kogelnik & Li 1966, stability diagram)
    const hemi = twoMirrorEigenmode(0.2, Infinity, 0.2, LAMBDA);
    expect(hemi.stability).toBe('marginal');
    expect(hemi.hasMode).toBe(false);
    expect(hemi.reason).toMatch(/g1 g2 = 0/);
    expect(hemi.spotAtMirror1_m).toBeNull();
    const flat = twoMirrorEigenmode(0.2, Infinity, Infinity, LAMBDA);
    expect(flat.stability).toBe('marginal');
    expect(flat.hasMode).toBe(false);
    expect(flat.reason).toMatch(/plane-parallel/);
    const convex = twoMirrorEigenmode(0.2, -1, Infinity, LAMBDA);
    expect(convex.stability).toBe('unstable');
    expect(convex.reason).toMatch(/unstable/);
    const tooLong = twoMirrorEigenmode(1.2, 1, 1, LAMBDA); // g = -0.2 each, g1g2 = 0.04: stable
    expect(tooLong.stability).toBe('stable');
    const beyondConcentric = twoMirrorEigenmode(2.2, 1, 1, LAMBDA); // g = -1.2, g1g2 = 1.44
    expect(beyondConcentric.stability).toBe('unstable');
  });

  it('stability classification: 0 < g1 g2 < 1 stable, edges marginal, outside unstable', () => {
    // Kogelnik & Li (1966), stability condition 0 < g1 g2 < 1
    expect(resonatorStability(0.5, 0.5)).toBe('stable');
    expect(resonatorStability(-0.5, -0.5)).toBe('stable');
    expect(resonatorStability(1, 1)).toBe('marginal');
    expect(resonatorStability(-1, -1)).toBe('marginal'); // concentric
    expect(resonatorStability(0, 0.7)).toBe('marginal');
    expect(resonatorStability(1, 1.01)).toBe('unstable');
    expect(resonatorStability(-0.5, 0.5)).toBe('unstable');
    expect(resonatorStability(2, 0.49)).toBe('stable');
  });
});
