import { describe, expect, it } from 'vitest';
import {
  airyCoefficient,
  circulatingField,
  circulatingPowerRatio,
  compoundReflection,
  effectiveBackReflection,
  finesse,
  finesseExact,
  freeSpectralRange_Hz,
  linewidth_Hz,
  phaseAveragedPowerRatio,
  roundTripTime_s,
} from '../src/physics/optics';

/** Mirror sets (R2, A2, R3', i.e. r3'^2): lossless, lossy, low and high finesse. */
const SETS = [
  { R2: 0.9, A2: 0, R3p: 0.99 },
  { R2: 0.7, A2: 0.01, R3p: 0.95 },
  { R2: 0.99, A2: 0.002, R3p: 0.999 },
  { R2: 0.3, A2: 0.05, R3p: 0.5 },
  { R2: 0.05, A2: 0, R3p: 1 },
];
const amps = (s: { R2: number; A2: number; R3p: number }) => ({
  r2: Math.sqrt(s.R2),
  t2: Math.sqrt(1 - s.R2 - s.A2),
  r3p: Math.sqrt(s.R3p),
});

/** Circulating field by summing the round trips one by one (second method). */
function fieldBySummation(r2: number, t2: number, r3p: number, phi: number): { re: number; im: number } {
  // a = t2 sum_k (r2' r3' e^{-i phi})^k with r2' = -r2 (MODEL.md 3.3)
  let re = 0;
  let im = 0;
  let pRe = t2;
  let pIm = 0;
  const mRe = -r2 * r3p * Math.cos(phi);
  const mIm = r2 * r3p * Math.sin(phi);
  for (let k = 0; k < 200000 && pRe * pRe + pIm * pIm > 1e-40; k++) {
    re += pRe;
    im += pIm;
    const nRe = pRe * mRe - pIm * mIm;
    pIm = pRe * mIm + pIm * mRe;
    pRe = nRe;
  }
  return { re, im };
}

describe('Airy response of the external cavity', () => {
  it('circulating field equals the sum over round trips a = t2 sum (r2 prime r3 prime e^-i phi)^k', () => {
    // second method: the multiple-beam sum of Hecht, Optics (4th ed.), sec. 9.6, with r2' = -r2
    for (const set of SETS) {
      const { r2, t2, r3p } = amps(set);
      for (const phi of [0, 0.3, Math.PI / 2, Math.PI - 0.01, Math.PI, 4.1]) {
        const a = circulatingField(r2, t2, r3p, phi);
        const b = fieldBySummation(r2, t2, r3p, phi);
        // the series is truncated at |term|^2 < 1e-40: relative error far below 1e-9
        expect(Math.hypot(a.re - b.re, a.im - b.im)).toBeLessThan(1e-9 * Math.hypot(b.re, b.im));
      }
    }
  });

  it('on resonance (phi = pi) the circulating power is T2/(1 - r2 r3 prime)^2, half way (phi = 0) T2/(1 + r2 r3 prime)^2', () => {
    // Siegman, Lasers (1986), ch. 11: circulating intensity T1/(1 - g_rt)^2 at resonance,
    // T1/(1 + g_rt)^2 at anti-resonance; Hecht, Optics, sec. 9.6 (Airy function extrema)
    const r2 = Math.sqrt(0.9);
    const t2 = Math.sqrt(0.1);
    const r3p = Math.sqrt(0.99);
    const rho = r2 * r3p;
    expect(circulatingPowerRatio(r2, t2, r3p, Math.PI)).toBeCloseTo(0.1 / (1 - rho) ** 2, 10);
    expect(circulatingPowerRatio(r2, t2, r3p, 0)).toBeCloseTo(0.1 / (1 + rho) ** 2, 12);
    // resonance is the maximum: neighbouring phases are lower
    expect(circulatingPowerRatio(r2, t2, r3p, Math.PI + 1e-3)).toBeLessThan(
      circulatingPowerRatio(r2, t2, r3p, Math.PI),
    );
    // |a|^2 from circulatingField agrees with circulatingPowerRatio (same quantity, two forms), to round-off
    const a = circulatingField(r2, t2, r3p, 1.234);
    expect(a.re * a.re + a.im * a.im).toBeCloseTo(circulatingPowerRatio(r2, t2, r3p, 1.234), 12);
  });

  it('Airy shape: power = peak / (1 + F sin^2(delta/2)) with F = 4 rho / (1 - rho)^2', () => {
    // Hecht, Optics (4th ed.), sec. 9.6: coefficient of finesse F and the Airy function
    for (const set of SETS) {
      const { r2, t2, r3p } = amps(set);
      const rho = r2 * r3p;
      const F = airyCoefficient(r2, r3p);
      expect(F).toBeCloseTo((4 * rho) / (1 - rho) ** 2, 10);
      const peak = (t2 * t2) / (1 - rho) ** 2;
      for (const delta of [0.01, 0.5, 2]) {
        const expected = peak / (1 + F * Math.sin(delta / 2) ** 2);
        // relative 1e-12: the two forms differ only by round-off
        expect(Math.abs(circulatingPowerRatio(r2, t2, r3p, Math.PI + delta) / expected - 1)).toBeLessThan(
          1e-12,
        );
      }
    }
  });

  it('finesse pi sqrt(rho)/(1 - rho) is (pi/2) sqrt(F), and the exact finesse matches the numerically measured FWHM', () => {
    // Hecht, Optics, sec. 9.6: finesse = pi sqrt(F) / 2; Siegman, Lasers, ch. 11
    for (const set of SETS.slice(0, 3)) {
      const { r2, t2, r3p } = amps(set);
      expect(finesse(r2, r3p)).toBeCloseTo((Math.PI / 2) * Math.sqrt(airyCoefficient(r2, r3p)), 9);
      // second method: find the half-maximum phase by bisection on the Airy curve itself
      const peak = circulatingPowerRatio(r2, t2, r3p, Math.PI);
      let lo = 0;
      let hi = Math.PI;
      for (let i = 0; i < 200; i++) {
        const mid = (lo + hi) / 2;
        if (circulatingPowerRatio(r2, t2, r3p, Math.PI + mid) > peak / 2) lo = mid;
        else hi = mid;
      }
      const measured = (2 * Math.PI) / (2 * lo);
      // bisection to machine precision; relative 1e-10 allows for round-off near the peak
      expect(Math.abs(finesseExact(r2, r3p) / measured - 1)).toBeLessThan(1e-10);
    }
    // high finesse: the two forms agree to O(1/F*^2) (Siegman ch. 11, small-loss limit)
    const r = Math.sqrt(0.999);
    const fApprox = finesse(r, r);
    expect(Math.abs(finesseExact(r, r) / fApprox - 1)).toBeLessThan(10 / fApprox ** 2);
    // no half-maximum for F < 1: undefined (documented NaN)
    expect(finesseExact(0.1, 0.5)).toBeNaN();
  });

  it('phase average of the circulating power is T2/(1 - R2 R3 prime) (trapezoid over 200000 phases)', () => {
    // analytic integral: Gradshteyn & Ryzhik 3.613.2 (n = 0), (1/2pi) int dphi/(1 + rho^2 + 2 rho cos phi) = 1/(1 - rho^2);
    // equivalently Parseval on the round-trip series of circulatingField
    const N = 200000;
    for (const set of SETS) {
      const { r2, t2, r3p } = amps(set);
      let sum = 0;
      // periodic trapezoid rule: N equal-weight points over one period
      for (let k = 0; k < N; k++) sum += circulatingPowerRatio(r2, t2, r3p, (2 * Math.PI * k) / N);
      const numeric = sum / N;
      const analytic = phaseAveragedPowerRatio(r2, t2, r3p);
      expect(analytic).toBeCloseTo((1 - set.R2 - set.A2) / (1 - set.R2 * set.R3p), 12);
      // trapezoid on a periodic analytic function converges geometrically; 1e-6 is the brief's bound
      expect(Math.abs(numeric / analytic - 1)).toBeLessThan(1e-6);
    }
  });

  it('compound mirror |r_eff| <= 1 for every phase on a 10000-point grid, lossy mirror sets', () => {
    // MODEL.md section 2 requirement; passivity follows from the Stokes relations (Hecht, Optics, sec. 4.10)
    for (const set of SETS) {
      const { r2, t2, r3p } = amps(set);
      let largest = 0;
      for (let k = 0; k < 10000; k++) {
        const r = compoundReflection(r2, t2, r3p, (2 * Math.PI * k) / 10000);
        largest = Math.max(largest, Math.hypot(r.re, r.im));
      }
      // 1e-12 allows round-off only
      expect(largest).toBeLessThanOrEqual(1 + 1e-12);
    }
  });

  it('energy balance: |r_eff|^2 + losses in M2, the gap element and M3 = 1 at every phase', () => {
    // energy conservation at the two-port M2 with S = [[r2, t2], [t2, -r2]], S^H S = (R2 + T2) I
    // (Stokes relations, Hecht, Optics, sec. 4.10): M2 loses A2 times the power falling on it from
    // both sides (1 from the laser, R3'|a|^2 from the gap); one round trip loses (1 - R3')|a|^2.
    // Lossless M3 (R3 = 1, T3 = 0) with a lossy gap element: R3' = T_gap^2.
    const cases = [
      { R2: 0.9, A2: 0.01, r3p: effectiveBackReflection(1, 0.98, 1) },
      { R2: 0.6, A2: 0, r3p: effectiveBackReflection(1, 0.9, 0.95) },
      { R2: 0.99, A2: 0.001, r3p: effectiveBackReflection(1, 1, 1) },
    ];
    for (const c of cases) {
      const r2 = Math.sqrt(c.R2);
      const t2 = Math.sqrt(1 - c.R2 - c.A2);
      const R3p = c.r3p * c.r3p;
      for (let k = 0; k < 1000; k++) {
        const phi = (2 * Math.PI * k) / 1000;
        const r = compoundReflection(r2, t2, c.r3p, phi);
        const P = circulatingPowerRatio(r2, t2, c.r3p, phi);
        const balance = r.re * r.re + r.im * r.im + c.A2 * (1 + R3p * P) + (1 - R3p) * P;
        // powers up to ~400 on resonance: 1e-10 absolute is round-off
        expect(Math.abs(balance - 1)).toBeLessThan(1e-10);
      }
    }
    // lossless M2 (A2 = 0) and R3' = 1: an all-pass, |r_eff| = 1 exactly (to round-off)
    const r2 = Math.sqrt(0.8);
    const t2 = Math.sqrt(0.2);
    for (let k = 0; k < 1000; k++) {
      const r = compoundReflection(r2, t2, 1, (2 * Math.PI * k) / 1000);
      expect(Math.abs(Math.hypot(r.re, r.im) - 1)).toBeLessThan(1e-14);
    }
  });

  it('compound mirror: off resonance with a strong back reflector it reflects in phase, on resonance the reflection dips', () => {
    // closed-form values of r_eff = (r2 + (R2+T2) r3' z)/(1 + r2 r3' z) at z = +1 and z = -1 (MODEL.md section 2)
    const r2 = Math.sqrt(0.5);
    const t2 = Math.sqrt(0.5);
    const r3p = Math.sqrt(0.5);
    const atZero = compoundReflection(r2, t2, r3p, 0); // z = 1
    expect(atZero.re).toBeCloseTo((r2 + r3p) / (1 + r2 * r3p), 12);
    expect(atZero.im).toBeCloseTo(0, 12);
    const atPi = compoundReflection(r2, t2, r3p, Math.PI); // z = -1, impedance matched: r2 = r3' gives 0
    expect(Math.hypot(atPi.re, atPi.im)).toBeLessThan(1e-12);
  });

  it('free spectral range of a 30 cm cavity is c/(2L) = 500 MHz; round-trip time 2L/c; linewidth FSR/finesse', () => {
    // c = 299792458 m/s exact (SI 2019); FSR = c/(2 n L), Siegman, Lasers, ch. 11
    expect(freeSpectralRange_Hz(0.3)).toBe(299792458 / 0.6);
    // "500 MHz" is the rounded textbook figure: within 0.1 %
    expect(Math.abs(freeSpectralRange_Hz(0.3) / 500e6 - 1)).toBeLessThan(1e-3);
    expect(freeSpectralRange_Hz(0.3, 1.5)).toBeCloseTo(299792458 / 0.9, 3);
    expect(roundTripTime_s(0.3) * freeSpectralRange_Hz(0.3)).toBeCloseTo(1, 14);
    const r = Math.sqrt(0.99);
    expect(linewidth_Hz(freeSpectralRange_Hz(0.3), finesse(r, r))).toBeCloseTo(
      freeSpectralRange_Hz(0.3) / finesse(r, r),
      6,
    );
  });

  it("effective back reflection r3' = r3 T_gap sqrt(eta_rt)", () => {
    // MODEL.md section 2 definition: gap element passed twice (power T_gap^2)
    const r3p = effectiveBackReflection(Math.sqrt(0.98), 0.9, 0.81);
    expect(r3p * r3p).toBeCloseTo(0.98 * 0.81 * 0.81, 14);
  });
});
