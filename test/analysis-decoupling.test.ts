import { describe, expect, it } from 'vitest';
import {
  criticalSpeed_m_s,
  designRule,
  dopplerShift_Hz,
  fractionBelowCriticalSampled,
  fractionBelowCriticalSine,
  fractionBelowCriticalTriangle,
  injectionRate_per_s,
  landauZenerCriticalSpeed_m_s,
  landauZenerDiabaticProbability,
  lockingHalfWidth_Hz,
  type CouplingParams,
} from '../src/analysis';

const c0 = 299792458;
// demo numbers (invented, not check values)
const p: CouplingParams = {
  t2: Math.sqrt(0.01),
  feedbackEfficiency: 0.9,
  laserRoundTrip_s: (2 * 0.22) / c0,
  externalRoundTrip_s: (2 * 0.09) / c0,
  alpha: 3,
  wavelength_m: 632.8e-9,
};

describe('fraction of time below the critical speed', () => {
  it('sine: (2/pi) arcsin(v_c / v_peak) matches direct time sampling of 1e6 points', () => {
    // v = v_peak cos(2 pi t / T) sampled at 1e6 midpoints of one period; the count of
    // |v| < v_c differs from the time fraction by at most 4 samples (4 crossings): 4e-6
    // (the formula of MODEL.md section 4 from the crossing times of a sinusoid; the direct
    // count is the independent check // common practice, no source)
    const n = 1_000_000;
    const vPeak = 2.5;
    const v = new Float64Array(n);
    for (let i = 0; i < n; i++) v[i] = vPeak * Math.cos((2 * Math.PI * (i + 0.5)) / n);
    for (const vc of [0.01, 0.5, 1.3, 2.4, 2.5, 3]) {
      const direct = fractionBelowCriticalSampled(v, vc);
      expect(Math.abs(direct - fractionBelowCriticalSine(vc, vPeak))).toBeLessThan(5e-6);
    }
    expect(fractionBelowCriticalSine(1, 0)).toBe(1); // still mirror: always below
    expect(fractionBelowCriticalSine(0, 1)).toBe(0);
  });

  it('triangle: constant speed, so 0 below v_peak and 1 above; sampling agrees', () => {
    // triangle displacement: velocity +-v_peak, turning points instantaneous
    const n = 10000;
    const v = Array.from({ length: n }, (_, i) => (i < n / 2 ? 1.2 : -1.2));
    for (const vc of [0.5, 1.2, 1.5]) {
      expect(fractionBelowCriticalTriangle(vc, 1.2)).toBe(fractionBelowCriticalSampled(v, vc));
    }
    expect(fractionBelowCriticalTriangle(1.5, 1.2)).toBe(1);
    expect(fractionBelowCriticalTriangle(1.2, 1.2)).toBe(0);
  });
});

describe('injection-locking critical speed', () => {
  it('chains kappa, the locking half width and the Doppler condition 2 v_c / lambda = half width', () => {
    const ratio = 0.8;
    const kappa = injectionRate_per_s(p, ratio);
    // kappa = t2 sqrt(eta) / tau_L * |b|/|E|, by hand (MODEL.md eq. 3.1)
    expect(kappa).toBeCloseTo((0.1 * Math.sqrt(0.9) * ratio) / p.laserRoundTrip_s, 0);
    const half = lockingHalfWidth_Hz(kappa, p.alpha);
    // Mogensen, Olesen, Jacobsen, IEEE JQE 21, 784 (1985): kappa sqrt(1 + alpha^2)
    expect(half).toBeCloseTo((kappa * Math.sqrt(10)) / (2 * Math.PI), 0);
    const vc = criticalSpeed_m_s(half, p.wavelength_m);
    expect(dopplerShift_Hz(vc, p.wavelength_m) / half).toBeCloseTo(1, 14);
    const rule = designRule({ ...p, fieldRatio: ratio, waveform: 'sine', peakSpeed_m_s: 2 * vc });
    expect(rule.criticalSpeed_m_s).toBeCloseTo(vc, 12);
    // v_c = v_peak / 2: (2/pi) arcsin(1/2) = 1/3
    expect(rule.fractionBelowCritical).toBeCloseTo(1 / 3, 14);
    expect(rule.peakDoppler_Hz).toBeCloseTo(2 * half, 3);
    const none = designRule({ ...p, fieldRatio: null, waveform: 'sine', peakSpeed_m_s: 1 });
    expect(none.criticalSpeed_m_s).toBeNull();
    expect(none.fractionBelowCritical).toBeNull();
    expect(none.criticalSpeedLandauZener_m_s).toBeGreaterThan(0);
  });
});

describe('Landau-Zener estimate', () => {
  it('diabatic probability exp(-2 pi g^2 / beta) agrees with integrating the two-level crossing', () => {
    // i c' = H(t) c, H = [[beta t / 2, g], [g, -beta t / 2]], from t = -T to T starting in
    // state 1; the diabatic probability |c1|^2 tends to exp(-2 pi g^2 / beta) (C. Zener,
    // Proc. R. Soc. A 137, 696 (1932)). Second method: a unitary midpoint step, H frozen at
    // the step's middle and exponentiated exactly, exp(-i H h) = cos(W h) - i sin(W h) H / W,
    // W = sqrt(d^2 + g^2) (the Pauli-matrix identity, J. J. Sakurai, Modern Quantum Mechanics,
    // ch. 3). The finite span approaches the limit like 1/T (0.4 % low at T = 200, beta = 2 pi,
    // measured by doubling T); h = 5e-4 is converged (halving it changes nothing at 1e-10):
    // tolerance 1 %.
    const g = 1;
    for (const beta of [2 * Math.PI, 4 * Math.PI]) {
      const T = 200;
      const h = 0.0005;
      let ar = 1;
      let ai = 0;
      let br = 0;
      let bi = 0;
      const steps = Math.round((2 * T) / h);
      for (let s = 0; s < steps; s++) {
        const d = (beta * (-T + (s + 0.5) * h)) / 2;
        const w = Math.sqrt(d * d + g * g);
        const c = Math.cos(w * h);
        const sn = Math.sin(w * h) / w;
        const hr1 = d * ar + g * br;
        const hi1 = d * ai + g * bi;
        const hr2 = g * ar - d * br;
        const hi2 = g * ai - d * bi;
        ar = c * ar + sn * hi1;
        ai = c * ai - sn * hr1;
        br = c * br + sn * hi2;
        bi = c * bi - sn * hr2;
      }
      const pNum = ar * ar + ai * ai;
      const pLZ = Math.exp((-2 * Math.PI * g * g) / beta);
      expect(Math.abs(pNum / pLZ - 1)).toBeLessThan(0.01);
      expect(ar * ar + ai * ai + br * br + bi * bi).toBeCloseTo(1, 9);
    }
  });

  it('v_LZ = T2 eta_fb lambda / (2 tau_L), where the passage probability is e^-1', () => {
    // g^2 tau_E lambda / 2 with g^2 = kappa_L kappa_E simplifies to T2 eta lambda / (2 tau_L)
    const vLZ = landauZenerCriticalSpeed_m_s(p);
    expect(vLZ / ((0.01 * 0.9 * p.wavelength_m) / (2 * p.laserRoundTrip_s))).toBeCloseTo(1, 13);
    expect(landauZenerDiabaticProbability(p, vLZ)).toBeCloseTo(Math.exp(-1), 13);
    // faster passage is more diabatic
    expect(landauZenerDiabaticProbability(p, 10 * vLZ)).toBeGreaterThan(
      landauZenerDiabaticProbability(p, vLZ),
    );
    expect(landauZenerDiabaticProbability(p, 0)).toBe(0);
  });
});
