import { describe, expect, it } from 'vitest';
import { createRng, fftComplex, fftReal, hannPeriodic, ifftComplex, isPow2, nextPow2 } from '../src/numerics';

/**
 * O(N^2) DFT from its definition X_k = sum_n x_n e^{-2 pi i k n / N} (Oppenheim & Schafer,
 * Discrete-Time Signal Processing, 3rd ed., chapter 8), interleaved in and out. The angle
 * is reduced mod N in integers so the reference itself stays accurate.
 */
function naiveDft(x: ArrayLike<number>): number[] {
  const n = x.length / 2;
  const out = new Array<number>(2 * n).fill(0);
  for (let k = 0; k < n; k++) {
    let re = 0,
      im = 0;
    for (let j = 0; j < n; j++) {
      const ang = (-2 * Math.PI * ((k * j) % n)) / n;
      const c = Math.cos(ang),
        s = Math.sin(ang);
      re += x[2 * j] * c - x[2 * j + 1] * s;
      im += x[2 * j] * s + x[2 * j + 1] * c;
    }
    out[2 * k] = re;
    out[2 * k + 1] = im;
  }
  return out;
}

function randomArray(n: number, seed: number): number[] {
  const rng = createRng(seed);
  return Array.from({ length: n }, () => rng.normal());
}

const maxAbsDiff = (a: ArrayLike<number>, b: ArrayLike<number>): number => {
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i] - b[i]));
  return m;
};

describe('FFT wrapper (fft.js)', () => {
  it('complex and real forward transforms match the naive DFT for N = 64 (and small N) to 1e-12', () => {
    // rounding of an N-term sum of O(1) terms is ~ sqrt(N) eps |x|, ~1e-14 here; 1e-12 is the allowance
    for (const n of [2, 4, 8, 64]) {
      const z = randomArray(2 * n, n);
      expect(maxAbsDiff(fftComplex(z), naiveDft(z))).toBeLessThan(1e-12);
      const x = randomArray(n, 100 + n);
      const asComplex = x.flatMap((v) => [v, 0]);
      expect(maxAbsDiff(fftReal(x), naiveDft(asComplex))).toBeLessThan(1e-12);
      expect(maxAbsDiff(fftReal(Float64Array.from(x)), naiveDft(asComplex))).toBeLessThan(1e-12);
    }
  });

  it('Parseval: sum |x_n|^2 = (1/N) sum |X_k|^2 to 1e-12 relative (N = 1024)', () => {
    // Parseval's relation for the DFT (Oppenheim & Schafer, chapter 8, DFT properties)
    const n = 1024;
    const x = randomArray(n, 1);
    const X = fftReal(x);
    let ex = 0,
      eX = 0;
    for (let i = 0; i < n; i++) ex += x[i] * x[i];
    for (let k = 0; k < n; k++) eX += X[2 * k] ** 2 + X[2 * k + 1] ** 2;
    expect(Math.abs(eX / n / ex - 1)).toBeLessThan(1e-12);
  });

  it('a pure tone A cos(2 pi k0 n / N + phi) on a bin gives |X_k0| = A N / 2 with phase phi, nothing elsewhere', () => {
    // DFT of a sampled cosine with an integer number of periods: (A N / 2) e^{i phi} at k0 and
    // its conjugate at N - k0 (orthogonality of the DFT basis, Oppenheim & Schafer ch. 8)
    const n = 256,
      k0 = 17,
      A = 0.8,
      phi = 0.6;
    const x = Array.from({ length: n }, (_, j) => A * Math.cos((2 * Math.PI * k0 * j) / n + phi));
    const X = fftReal(x);
    let peak = 0,
      peakBin = -1;
    for (let k = 0; k < n / 2; k++) {
      const mag = Math.hypot(X[2 * k], X[2 * k + 1]);
      if (mag > peak) {
        peak = mag;
        peakBin = k;
      }
    }
    expect(peakBin).toBe(k0);
    expect(Math.abs(peak / ((A * n) / 2) - 1)).toBeLessThan(1e-12);
    expect(Math.abs(Math.atan2(X[2 * k0 + 1], X[2 * k0]) - phi)).toBeLessThan(1e-12);
    expect(X[2 * (n - k0)]).toBeCloseTo(X[2 * k0], 10);
    expect(X[2 * (n - k0) + 1]).toBeCloseTo(-X[2 * k0 + 1], 10);
    for (let k = 0; k < n; k++) {
      if (k !== k0 && k !== n - k0) expect(Math.hypot(X[2 * k], X[2 * k + 1])).toBeLessThan(1e-11);
    }
  });

  it('inverse(forward(x)) = x to 1e-12 (fft.js divides the inverse by N)', () => {
    // inverse DFT definition with the 1/N factor (Oppenheim & Schafer ch. 8)
    for (const n of [1, 2, 16, 4096]) {
      const z = randomArray(2 * n, 7 + n);
      const out: number[] = new Array(2 * n).fill(0);
      const back = ifftComplex(fftComplex(z), out);
      expect(back).toBe(out);
      expect(maxAbsDiff(back, z)).toBeLessThan(1e-12);
    }
  });

  it('non-power-of-two sizes, odd interleaved lengths, wrong output lengths and in-place calls are clear errors', () => {
    expect(() => fftReal(new Array(12).fill(0))).toThrow(/power of two.*got 12.*nextPow2\(12\) = 16/);
    expect(() => fftComplex(new Array(7).fill(0))).toThrow(/even length/);
    expect(() => fftComplex(new Array(8).fill(0), new Array(4).fill(0))).toThrow(/length 4, expected 8/);
    const a = new Array(8).fill(0);
    expect(() => fftComplex(a, a)).toThrow(/different arrays/);
  });

  it('nextPow2 and isPow2', () => {
    expect([1, 2, 3, 5, 64, 65, 1000].map(nextPow2)).toEqual([1, 2, 4, 8, 64, 128, 1024]);
    expect([1, 2, 6, 1024, 0, -4, 2.5].map(isPow2)).toEqual([true, true, false, true, false, false, false]);
    expect(() => nextPow2(0)).toThrow(RangeError);
  });
});

describe('periodic Hann window', () => {
  it('sums S1 = N/2 and S2 = 3N/8, ENBW 1.5 bins, w_0 = 0 and w_j = w_{N-j}', () => {
    // Heinzel, Rudiger & Schilling 2002 (Hann entry of their window list: NENBW = 1.5 bins);
    // Harris 1978 Table 1 (Hanning, ENBW 1.50 bins); the sums follow from sum_j cos(2 pi j/N) = 0
    // and sum_j cos^2(2 pi j/N) = N/2, the latter for N >= 3 only
    for (const n of [3, 8, 1000, 1024]) {
      const win = hannPeriodic(n);
      expect(win.w[0]).toBe(0);
      expect(Math.abs(win.sum - n / 2)).toBeLessThan(1e-12 * n);
      expect(Math.abs(win.sumSq - (3 * n) / 8)).toBeLessThan(1e-12 * n);
      expect(Math.abs(win.enbwBins - 1.5)).toBeLessThan(1e-12);
      for (let j = 1; j < n; j++) expect(Math.abs(win.w[j] - win.w[n - j])).toBeLessThan(1e-15);
    }
    const two = hannPeriodic(2); // degenerate length: w = [0, 1]
    expect([two.sum, two.sumSq]).toEqual([1, 1]);
  });

  it('a windowed on-bin tone has peak |X_k0| = A S1 / 2 (coherent gain); 50 %-overlapped copies sum to 1', () => {
    // amplitude normalisation of windowed DFTs (Heinzel et al. 2002, power spectrum scaling by
    // S1^2); 1e-12 relative: only rounding remains
    const n = 512,
      k0 = 40,
      A = 1.3;
    const win = hannPeriodic(n);
    const x = Array.from({ length: n }, (_, j) => win.w[j] * A * Math.sin((2 * Math.PI * k0 * j) / n));
    const X = fftReal(x);
    expect(Math.abs(Math.hypot(X[2 * k0], X[2 * k0 + 1]) / ((A * win.sum) / 2) - 1)).toBeLessThan(1e-12);
    // 50 % overlapped periodic Hann windows add to 1 (the constant-overlap-add property Welch uses)
    for (let j = 0; j < n / 2; j++) expect(Math.abs(win.w[j] + win.w[j + n / 2] - 1)).toBeLessThan(1e-15);
    expect(() => hannPeriodic(1)).toThrow(RangeError);
  });
});
