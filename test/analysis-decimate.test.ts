import { describe, expect, it } from 'vitest';
import { MinMaxDecimator } from '../src/analysis';

// Min-max decimation is a plotting convention (common practice, no source); the checks
// compare with the raw samples, which are the independent expectation here.
const ch = (key: string) => ({ key, label: key, unit: 'W' });

describe('MinMaxDecimator', () => {
  it('keeps an isolated one-sample spike and dip, in order of occurrence', () => {
    const n = 100000;
    const dec = new MinMaxDecimator({ channels: [ch('p')], totalSamples: n, buckets: 100, dt_s: 1e-9 });
    for (let i = 0; i < n; i++)
      dec.pushScalar(i === 54321 ? 50 : i === 54400 ? -7 : 1 + 1e-3 * Math.sin(i * 1e-3));
    const r = dec.result();
    expect(r.t_s.length).toBeLessThanOrEqual(200);
    const v = r.series[0].values;
    expect(Math.max(...v)).toBe(50);
    expect(Math.min(...v)).toBe(-7);
    // bucket 54 holds both; the spike came first, so it is the earlier of the two points
    expect(v[2 * 54]).toBe(50);
    expect(v[2 * 54 + 1]).toBe(-7);
    // shared time axis at the first and third quarter of each bucket
    expect(r.t_s[2 * 54]).toBeCloseTo((54000 + 999 / 4) * 1e-9, 18);
    expect(r.t_s[2 * 54 + 1]).toBeCloseTo((54000 + (3 * 999) / 4) * 1e-9, 18);
  });

  it('gives each channel its own extremes on one time axis, and the raw envelope', () => {
    const n = 1003;
    const dec = new MinMaxDecimator({
      channels: [ch('a'), ch('b')],
      totalSamples: n,
      buckets: 10,
      dt_s: 1,
      t0_s: 5,
    });
    expect(dec.bucketSize).toBe(101);
    expect(dec.bucketCount).toBe(10);
    const a: number[] = [];
    const b: number[] = [];
    const row = new Float64Array(2);
    for (let i = 0; i < n; i++) {
      row[0] = Math.sin(i * 0.05);
      row[1] = -i;
      a.push(row[0]);
      b.push(row[1]);
      dec.push(row);
    }
    const r = dec.result(2.5);
    expect(r.drive_period_s).toBe(2.5);
    expect(r.series.map((s) => s.key)).toEqual(['a', 'b']);
    for (let k = 0; k < 10; k++) {
      const seg = a.slice(k * 101, (k + 1) * 101);
      const got = [r.series[0].values[2 * k], r.series[0].values[2 * k + 1]];
      expect(Math.min(...got)).toBe(Math.min(...seg));
      expect(Math.max(...got)).toBe(Math.max(...seg));
      // b falls monotonically: max first, then min
      expect(r.series[1].values[2 * k]).toBe(-k * 101);
      expect(r.series[1].values[2 * k + 1]).toBe(-Math.min(n - 1, k * 101 + 100));
    }
    expect(r.t_s[0]).toBe(5 + 25);
  });

  it('a one-sample last bucket gives one point at its exact time; NaN-only buckets give NaN', () => {
    const dec = new MinMaxDecimator({ channels: [ch('p')], totalSamples: 9, buckets: 4, dt_s: 2 });
    expect(dec.bucketSize).toBe(3);
    for (const v of [1, 2, 3, NaN, NaN, NaN, 4, 5, 6]) dec.pushScalar(v);
    const r = dec.result();
    expect(r.series[0].values.slice(2, 4).every(Number.isNaN)).toBe(true);
    const dec2 = new MinMaxDecimator({ channels: [ch('p')], totalSamples: 7, buckets: 3, dt_s: 2 });
    for (let i = 0; i < 7; i++) dec2.pushScalar(i);
    const r2 = dec2.result();
    expect(r2.t_s.length).toBe(5);
    expect(r2.t_s[4]).toBe(12);
    expect(r2.series[0].values[4]).toBe(6);
  });

  it('refuses more samples than announced', () => {
    const dec = new MinMaxDecimator({ channels: [ch('p')], totalSamples: 2, buckets: 1, dt_s: 1 });
    dec.pushScalar(1);
    dec.pushScalar(2);
    expect(() => dec.pushScalar(3)).toThrow(/announced 2/);
  });
});
