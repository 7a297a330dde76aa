import { describe, expect, it } from 'vitest';
import {
  beamRadius_m,
  gaussianOverlap,
  qFromWaist,
  waistOverlap,
  wavefrontRadius_m,
} from '../src/physics/optics';
import type { Complex } from '../src/physics/optics';

const LAMBDA = 780e-9;

/**
 * Power overlap by brute force: |sum u1 u2*|^2 / (sum|u1|^2 sum|u2|^2) on an x-y grid, with
 * u = exp(-i k r^2 / (2 q)) (Siegman, Lasers (1986), ch. 17, the TEM00 field in terms of q).
 */
function numericOverlap(q1: Complex, q2: Complex, lambda: number): number {
  const k = (2 * Math.PI) / lambda;
  const inv = (q: Complex) => {
    const d = q.re * q.re + q.im * q.im;
    return { re: q.re / d, im: -q.im / d };
  };
  const u1 = inv(q1);
  const u2 = inv(q2);
  const wMax = Math.max(beamRadius_m(q1, lambda), beamRadius_m(q2, lambda));
  const half = 5 * wMax;
  const N = 601;
  const h = (2 * half) / (N - 1);
  let sRe = 0;
  let sIm = 0;
  let n1 = 0;
  let n2 = 0;
  for (let i = 0; i < N; i++) {
    const x = -half + i * h;
    for (let j = 0; j < N; j++) {
      const y = -half + j * h;
      const r2 = x * x + y * y;
      // exponent -i k r^2/(2q) = (k r^2/2) (Im(1/q) - i Re(1/q))
      const a1 = (k * r2) / 2;
      const m1 = Math.exp(a1 * u1.im);
      const p1 = -a1 * u1.re;
      const m2 = Math.exp(a1 * u2.im);
      const p2 = -a1 * u2.re;
      sRe += m1 * m2 * Math.cos(p1 - p2);
      sIm += m1 * m2 * Math.sin(p1 - p2);
      n1 += m1 * m1;
      n2 += m2 * m2;
    }
  }
  return (sRe * sRe + sIm * sIm) / (n1 * n2);
}

describe('overlap of two fundamental Gaussian beams', () => {
  it('q-form 4 Im q1 Im q2 / |q1 - q2*|^2 equals a 2-D numerical integral of the two fields, curvature mismatch included', () => {
    // Kogelnik, Bell Syst. Tech. J. 44, 455 (1965) (coupling coefficient of two Gaussian beams), checked against
    // direct quadrature; grid of 601^2 points over +-5 w: the Gaussian tails beyond are < e^-50 and the phase
    // k r^2/(2R) is sampled finely, so the trapezoid sum is accurate to far better than the 1e-6 asked
    const cases: [Complex, Complex][] = [
      [qFromWaist(0.5e-3, 0.1, LAMBDA), qFromWaist(0.5e-3, 0.1, LAMBDA)],
      [qFromWaist(0.5e-3, 0, LAMBDA), qFromWaist(0.8e-3, 0, LAMBDA)],
      [qFromWaist(0.5e-3, 0.3, LAMBDA), qFromWaist(0.4e-3, -0.2, LAMBDA)],
      [qFromWaist(0.2e-3, 0.5, LAMBDA), qFromWaist(0.6e-3, 0.05, LAMBDA)],
    ];
    for (const [a, b] of cases) {
      expect(Math.abs(gaussianOverlap(a, b) - numericOverlap(a, b, LAMBDA))).toBeLessThan(1e-6);
    }
    // pure curvature mismatch (equal w, different R) lowers the overlap
    const c = cases[2];
    expect(wavefrontRadius_m(c[0])).not.toBeCloseTo(wavefrontRadius_m(c[1]), 1);
    expect(gaussianOverlap(c[0], c[1])).toBeLessThan(1);
  });

  it("q-form equals Kogelnik's waists-and-separation formula for coaxial beams", () => {
    // Kogelnik (1965): eta = 4 / ((w1/w2 + w2/w1)^2 + (lambda d/(pi w1 w2))^2); two forms, round-off only (1e-12)
    const grid = [
      [0.3e-3, 0.3e-3, 0],
      [0.3e-3, 0.5e-3, 0],
      [0.3e-3, 0.3e-3, 0.4],
      [0.2e-3, 1.1e-3, -0.7],
      [1e-3, 0.1e-3, 2.5],
    ];
    for (const [w1, w2, d] of grid) {
      // beam 1 waist at z = 0, beam 2 waist at z = d; compare at an arbitrary plane z = 0.37 m
      const z = 0.37;
      const a = qFromWaist(w1, z, LAMBDA);
      const b = qFromWaist(w2, z - d, LAMBDA);
      expect(Math.abs(gaussianOverlap(a, b) - waistOverlap(w1, w2, d, LAMBDA))).toBeLessThan(1e-12);
    }
    // identical beams couple fully; symmetric in the two beams
    expect(waistOverlap(0.4e-3, 0.4e-3, 0, LAMBDA)).toBe(1);
    const p = qFromWaist(0.3e-3, 0.2, LAMBDA);
    const q = qFromWaist(0.5e-3, -0.1, LAMBDA);
    expect(gaussianOverlap(p, q)).toBeCloseTo(gaussianOverlap(q, p), 15);
  });

  it('a waist-size ratio of 2 at the same position gives 16/25', () => {
    // Kogelnik (1965) formula with d = 0: 4 / (2 + 1/2)^2 = 0.64
    expect(waistOverlap(1e-3, 2e-3, 0, LAMBDA)).toBeCloseTo(0.64, 14);
    expect(gaussianOverlap(qFromWaist(1e-3, 0, LAMBDA), qFromWaist(2e-3, 0, LAMBDA))).toBeCloseTo(0.64, 14);
  });
});
