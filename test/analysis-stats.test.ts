import { describe, expect, it } from 'vitest';
import { RunningStats, WeightedRunningStats, rippleRel } from '../src/analysis';
import { createRng } from '../src/numerics/rng';

function twoPass(x: number[]): { mean: number; variance: number } {
  // Two-pass formula: mean first, then the mean of squared deviations
  // (Chan, Golub, LeVeque, Am. Stat. 37, 242 (1983), eq. 1.2a).
  const mean = x.reduce((a, b) => a + b, 0) / x.length;
  const variance = x.reduce((a, b) => a + (b - mean) * (b - mean), 0) / x.length;
  return { mean, variance };
}

describe('RunningStats', () => {
  it('matches the two-pass mean and variance, min and max', () => {
    const rng = createRng(7);
    const x: number[] = [];
    const s = new RunningStats();
    for (let i = 0; i < 10000; i++) {
      const v = 3 + 2 * rng.normal();
      x.push(v);
      s.push(v);
    }
    const ref = twoPass(x);
    // both are accurate to rounding of 1e4 additions: 1e-12 relative is ample
    expect(s.mean).toBeCloseTo(ref.mean, 12);
    expect(Math.abs(s.variance - ref.variance) / ref.variance).toBeLessThan(1e-12);
    expect(s.sampleVariance).toBeCloseTo((ref.variance * x.length) / (x.length - 1), 12);
    expect(s.min).toBe(Math.min(...x));
    expect(s.max).toBe(Math.max(...x));
    expect(s.count).toBe(x.length);
  });

  it('keeps the variance of a tiny spread on a large mean (where sum-of-squares cancels)', () => {
    // x = 1e9 + {0, 1, 2, 3}: exact population variance 1.25 (Chan et al. 1983, sec. 3:
    // the one-pass textbook formula loses all digits here in double precision)
    const s = new RunningStats();
    for (let r = 0; r < 1000; r++) for (const d of [0, 1, 2, 3]) s.push(1e9 + d);
    expect(s.variance).toBeCloseTo(1.25, 6);
    expect(s.mean).toBeCloseTo(1e9 + 1.5, 4);
  });

  it('merging two halves equals pushing everything (Chan et al. 1983, eq. 2.1)', () => {
    const rng = createRng(11);
    const a = new RunningStats();
    const b = new RunningStats();
    const all = new RunningStats();
    for (let i = 0; i < 5000; i++) {
      const v = rng.normal() * 5 + (i < 2000 ? 1 : -4);
      (i < 2000 ? a : b).push(v);
      all.push(v);
    }
    a.merge(b);
    expect(a.count).toBe(all.count);
    expect(a.mean).toBeCloseTo(all.mean, 12);
    expect(a.variance).toBeCloseTo(all.variance, 10);
    expect(a.min).toBe(all.min);
    expect(a.max).toBe(all.max);
  });

  it('reports no data as NaN mean and infinite min/max; one sample has zero variance', () => {
    const s = new RunningStats();
    expect(Number.isNaN(s.mean)).toBe(true);
    expect(s.min).toBe(Infinity);
    s.push(4);
    expect(s.variance).toBe(0);
    expect(s.sampleVariance).toBe(0);
  });
});

describe('WeightedRunningStats', () => {
  it('equals the two-pass weighted mean and variance (West, Commun. ACM 22, 532 (1979))', () => {
    const rng = createRng(3);
    const x: number[] = [];
    const w: number[] = [];
    const s = new WeightedRunningStats();
    for (let i = 0; i < 3000; i++) {
      const v = rng.normal();
      const wi = rng.uniform() * 2;
      x.push(v);
      w.push(wi);
      s.push(v, wi);
    }
    const W = w.reduce((a, b) => a + b, 0);
    const mean = x.reduce((a, v, i) => a + w[i] * v, 0) / W;
    const variance = x.reduce((a, v, i) => a + w[i] * (v - mean) ** 2, 0) / W;
    expect(s.mean).toBeCloseTo(mean, 12);
    expect(s.variance).toBeCloseTo(variance, 12);
  });

  it('integer weights equal repeating the sample', () => {
    const a = new WeightedRunningStats();
    const b = new RunningStats();
    const data = [1, 5, 2, 8];
    const reps = [3, 1, 2, 4];
    data.forEach((v, i) => {
      a.push(v, reps[i]);
      for (let k = 0; k < reps[i]; k++) b.push(v);
    });
    expect(a.mean).toBeCloseTo(b.mean, 13);
    expect(a.variance).toBeCloseTo(b.variance, 12);
  });
});

describe('rippleRel', () => {
  it('is peak to peak over the mean, NaN without a positive mean', () => {
    expect(rippleRel(0.9, 1.1, 1)).toBeCloseTo(0.2, 15);
    expect(Number.isNaN(rippleRel(0, 1, 0))).toBe(true);
    expect(Number.isNaN(rippleRel(Infinity, -Infinity, 1))).toBe(true);
  });
});
