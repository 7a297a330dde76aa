import { describe, expect, it } from 'vitest';
import {
  OpticalSpectrum,
  WelchPsd,
  chooseSegmentLength,
  driveHarmonics,
  nearestBins,
  overlapSegments,
} from '../src/analysis';
import { createRng } from '../src/numerics/rng';

const fs = 1e6;
const dt = 1 / fs;

function hann(n: number): number[] {
  // periodic Hann (F. J. Harris, Proc. IEEE 66, 51 (1978), sec. IV-B), written out again here
  return Array.from({ length: n }, (_, i) => 0.5 * (1 - Math.cos((2 * Math.PI * i) / n)));
}

describe('WelchPsd (P. D. Welch, IEEE Trans. Audio Electroacoust. 15, 70 (1967))', () => {
  it('white noise of variance s^2 has the flat one-sided density 2 s^2 / fs', () => {
    const s = 0.7;
    const N = 1024;
    const psd = new WelchPsd({ dt_s: dt, segmentLength: N });
    const rng = createRng(42);
    const total = N * 100;
    for (let i = 0; i < total; i++) psd.push(s * rng.normal());
    const r = psd.result();
    expect(r.segments).toBe(overlapSegments(total, N));
    expect(r.segments).toBe(199);
    const expected = (2 * s * s) / fs;
    // 8 sub-bands of 64 bins, 199 half-overlapped Hann segments each: relative scatter of a
    // sub-band mean about 1/sqrt(64 * 199 / 1.1) < 1 %, so 5 % is a loose bound
    for (let b = 0; b < 8; b++) {
      let m = 0;
      for (let k = 1 + 64 * b; k < 1 + 64 * (b + 1); k++) m += r.psd[k];
      m /= 64;
      expect(Math.abs(m / expected - 1)).toBeLessThan(0.05);
    }
    expect(r.resolution_Hz).toBeCloseTo(fs / N, 9);
    expect(r.enbw_Hz).toBeCloseTo((1.5 * fs) / N, 9);
    expect(r.f_Hz.length).toBe(N / 2 + 1);
    expect(r.f_Hz[N / 2]).toBeCloseTo(fs / 2, 6);
  });

  it('total power equals the windowed mean square of the segments (Parseval)', () => {
    // sum_k G_k df = mean over segments of sum((x - mean) w)^2 / sum w^2, computed here directly
    // (Parseval's relation for the DFT, Oppenheim & Schafer, Discrete-Time Signal Processing, 3rd ed., ch. 8);
    // agreement to rounding, 1e-12
    const N = 256;
    const rng = createRng(9);
    const x: number[] = [];
    for (let i = 0; i < 1500; i++) x.push(3 + Math.sin(i * 0.37) + 0.3 * rng.normal());
    const psd = new WelchPsd({ dt_s: dt, segmentLength: N });
    for (const v of x) psd.push(v);
    const r = psd.result();
    let total = 0;
    for (const g of r.psd) total += g * r.resolution_Hz;
    const w = hann(N);
    const s2 = w.reduce((a, b) => a + b * b, 0);
    let direct = 0;
    let segs = 0;
    for (let start = 0; start + N <= x.length; start += N / 2) {
      const seg = x.slice(start, start + N);
      const m = seg.reduce((a, b) => a + b, 0) / N;
      direct += seg.reduce((a, v, i) => a + ((v - m) * w[i]) ** 2, 0) / s2;
      segs++;
    }
    direct /= segs;
    expect(r.segments).toBe(segs);
    expect(Math.abs(total / direct - 1)).toBeLessThan(1e-12);
  });

  it('recovers a pure tone: frequency, peak density and power A^2 / 2', () => {
    const N = 1024;
    const df = fs / N;
    const A = 2;
    // on a bin: peak G = 2 (A/2)^2 S1^2 / (fs S2) = A^2 N / (3 fs) with S1 = N/2, S2 = 3N/8
    // (G. Heinzel, A. Rudiger, R. Schilling, "Spectrum and spectral density estimation by the
    // DFT", MPI Gravitationsphysik 2002, "scaling the results"; S1, S2 summed from the Hann definition)
    {
      const f0 = 100 * df;
      const psd = new WelchPsd({ dt_s: dt, segmentLength: N });
      for (let i = 0; i < N * 8; i++) psd.push(A * Math.sin(2 * Math.PI * f0 * i * dt + 0.4));
      const r = psd.result();
      const kmax = r.psd.indexOf(Math.max(...r.psd));
      expect(kmax).toBe(100);
      expect(r.psd[100] / ((A * A * N) / (3 * fs))).toBeCloseTo(1, 9);
    }
    // off a bin: the power summed over +-6 bins is A^2/2; Hann leakage beyond 6 bins is below
    // 1e-4 of the tone (sidelobes fall 18 dB/octave, Harris 1978 table I): tolerance 0.1 %
    {
      const f0 = 137.37 * df;
      const psd = new WelchPsd({ dt_s: dt, segmentLength: N });
      for (let i = 0; i < N * 8; i++) psd.push(A * Math.sin(2 * Math.PI * f0 * i * dt));
      const r = psd.result();
      const kmax = r.psd.indexOf(Math.max(...r.psd));
      expect(Math.abs(r.f_Hz[kmax] - f0)).toBeLessThanOrEqual(df / 2);
      let p = 0;
      for (let k = kmax - 6; k <= kmax + 6; k++) p += r.psd[k] * df;
      expect(Math.abs(p / ((A * A) / 2) - 1)).toBeLessThan(1e-3);
    }
  });

  it('block-averaged input keeps the white density and reports fs / D', () => {
    // the mean of D white samples has variance s^2/D at rate fs/D: 2 (s^2/D) / (fs/D) = 2 s^2 / fs
    const D = 4;
    const N = 512;
    const psd = new WelchPsd({ dt_s: dt, segmentLength: N, decimation: D });
    const rng = createRng(1);
    for (let i = 0; i < N * D * 60; i++) psd.push(rng.normal());
    const r = psd.result();
    expect(r.sampleRate_Hz).toBeCloseTo(fs / D, 6);
    let m = 0;
    for (let k = 1; k < N / 2; k++) m += r.psd[k];
    m /= N / 2 - 1;
    // 255 bins x 119 segments: scatter ~0.6 %; tolerance 3 %
    expect(Math.abs(m / (2 / fs) - 1)).toBeLessThan(0.03);
  });

  it('RIN of P0 (1 + r n), n white of unit variance, is 10 log10(2 r^2 / fs) dB/Hz', () => {
    // definition of RIN as the one-sided PSD of (P - mean)/mean // common practice, no source
    const N = 1024;
    const r0 = 1e-3;
    const psd = new WelchPsd({ dt_s: dt, segmentLength: N });
    const rng = createRng(77);
    for (let i = 0; i < N * 80; i++) psd.push(0.25 * (1 + r0 * rng.normal()));
    const rin = psd.rin();
    expect(rin).not.toBeNull();
    const spec = rin!;
    expect(spec.unit).toBe('dB/Hz');
    expect(spec.f_Hz[0]).toBeCloseTo(fs / N, 6); // DC bin left out
    const lin = spec.values.slice(0, -1).reduce((a, v) => a + 10 ** (v / 10), 0) / (spec.values.length - 1);
    // 511 bins x 159 segments: scatter ~0.4 %, i.e. 0.02 dB; tolerance 0.2 dB
    expect(Math.abs(10 * Math.log10(lin) - 10 * Math.log10((2 * r0 * r0) / fs))).toBeLessThan(0.2);
    expect(spec.segments).toBe(159);
  });

  it('gives null RIN before a segment is complete or without a positive mean', () => {
    const psd = new WelchPsd({ dt_s: dt, segmentLength: 64 });
    for (let i = 0; i < 63; i++) psd.push(1);
    expect(psd.rin()).toBeNull();
    psd.push(1);
    expect(psd.rin(0)).toBeNull();
    expect(psd.rin()).not.toBeNull();
  });

  it('chooses the longest power-of-two segment that still gives the wanted segment count', () => {
    expect(chooseSegmentLength(100000)).toBe(16384); // 11 segments; 32768 gives 5
    expect(overlapSegments(100000, 16384)).toBeGreaterThanOrEqual(8);
    expect(overlapSegments(100000, 32768)).toBeLessThan(8);
    expect(chooseSegmentLength(20)).toBe(16);
    expect(chooseSegmentLength(10)).toBeNull();
  });
});

describe('OpticalSpectrum', () => {
  it('shows a carrier and a -20 dB sideband at their signed offsets, centred axis', () => {
    // b = exp(+2 pi i f1 t) + 0.1 exp(-2 pi i f2 t) on bins: the two lines have the power
    // ratio 0.01 = -20 dB (DFT of complex exponentials, Oppenheim & Schafer ch. 8)
    const N = 256;
    const df = fs / N;
    const f1 = 10 * df;
    const f2 = 40 * df;
    const os = new OpticalSpectrum({ dt_s: dt, segmentLength: N, mode: 3 });
    for (let i = 0; i < N * 6; i++) {
      const t = i * dt;
      const a = 2 * Math.PI * f1 * t;
      const b = -2 * Math.PI * f2 * t;
      os.push(Math.cos(a) + 0.1 * Math.cos(b), Math.sin(a) + 0.1 * Math.sin(b));
    }
    const r = os.result()!;
    expect(r.mode).toBe(3);
    expect(r.unit).toBe('dB');
    expect(r.f_Hz.length).toBe(N);
    expect(r.f_Hz[0]).toBeCloseTo(-fs / 2, 6);
    expect(r.f_Hz[N / 2]).toBe(0);
    const at = (f: number): number => r.values[nearestBins(r.f_Hz, [f])[0]];
    expect(at(f1)).toBeCloseTo(0, 9);
    expect(at(-f2)).toBeCloseTo(-20, 6);
    // far from both lines a Hann window leaves nothing above rounding
    expect(at(100 * df)).toBeLessThan(-200);
  });

  it('returns null before the first segment', () => {
    const os = new OpticalSpectrum({ dt_s: dt, segmentLength: 16, mode: 0 });
    for (let i = 0; i < 15; i++) os.push(1, 0);
    expect(os.result()).toBeNull();
  });
});

describe('drive harmonics', () => {
  it('lists k f up to the limit and marks the nearest bins', () => {
    // arithmetic of the definition, no physics source needed // common practice, no source
    const h = driveHarmonics(140e3, 1e6);
    expect(h).toEqual([140e3, 280e3, 420e3, 560e3, 700e3, 840e3, 980e3]);
    expect(driveHarmonics(250e3, 1e6).length).toBe(4); // 1 MHz itself is included
    expect(driveHarmonics(0, 1e6)).toEqual([]);
    const axis = Array.from({ length: 11 }, (_, k) => k * 100e3);
    expect(nearestBins(axis, [140e3, 280e3, 1.04e6, 1.2e6, -60e3])).toEqual([1, 3, 10, -1, -1]);
  });
});
