import { describe, expect, it } from 'vitest';
import { BoxcarFilter } from '../src/analysis';
import { createRng } from '../src/numerics/rng';

const bw = 10e3;

function runSine(
  k: number,
  samplesPerWindow: number,
  windows: number,
  phase = 0.3,
): ReturnType<BoxcarFilter['result']> {
  const dt = 1 / (bw * samplesPerWindow);
  const f = k * bw;
  const box = new BoxcarFilter({ dt_s: dt, bandwidth_Hz: bw });
  const n = samplesPerWindow * windows;
  for (let i = 0; i < n; i++) box.push(1 + 0.5 * Math.sin(2 * Math.PI * f * i * dt + phase));
  return box.result();
}

describe('BoxcarFilter (detection-band view, MODEL.md section 4)', () => {
  it('a sine at an integer multiple of the bandwidth averages to zero ripple', () => {
    // The moving average over T has response sin(pi f T)/(pi f T), zero at f = k/T; for N
    // samples spanning whole periods the discrete sum of the sine is exactly zero
    // (A. V. Oppenheim, R. W. Schafer, Discrete-Time Signal Processing, 3rd ed., ch. 2,
    // frequency response of the moving-average system). Left: rounding of 6400-term sums, ~1e-13.
    for (const k of [1, 2, 3, 7]) {
      const r = runSine(k, 6400, 5);
      expect(r.blockSamples).toBe(100);
      expect(r.windowBlocks).toBe(64);
      expect(r.ripple_rel).toBeLessThan(1e-9);
      expect(r.filtered.mean).toBeCloseTo(1, 10);
      // full band keeps the whole peak-to-peak, (1.5 - 0.5) / 1, to the sampling of the peak
      expect(r.ripple_full_band_rel).toBeGreaterThan(0.999);
      expect(r.ripple_full_band_rel).toBeLessThanOrEqual(1 + 1e-12);
    }
  });

  it('a sine far below the band passes almost unchanged, with the moving-average gain', () => {
    // f = bw/20: gain |sin(pi f N dt) / (N sin(pi f dt))| (Oppenheim & Schafer, as above)
    // = 0.99589; the filtered output is evaluated once per block (period / 1280 here), so
    // its peak is missed by at most 0.5 (1 - cos(pi/1280)) ~ 1.5e-6 each side: tolerance 2e-5.
    const N = 6400;
    const dt = 1 / (bw * N);
    const f = bw / 20;
    const box = new BoxcarFilter({ dt_s: dt, bandwidth_Hz: bw });
    const n = N * 41; // the fill plus exactly two signal periods (so the filtered mean is 1)
    for (let i = 0; i < n; i++) box.push(1 + 0.5 * Math.sin(2 * Math.PI * f * i * dt));
    const r = box.result();
    const gain = Math.abs(Math.sin(Math.PI * f * N * dt) / (N * Math.sin(Math.PI * f * dt)));
    // peak to peak of the filtered sine is 2 * 0.5 * gain
    expect(Math.abs(r.filtered.max - r.filtered.min - gain)).toBeLessThan(2e-5);
    // 2561 outputs span two periods plus one output: the mean is 1 to within 0.5/2561
    expect(Math.abs(r.filtered.mean - 1)).toBeLessThan(2e-4);
    expect(Math.abs(r.ripple_rel - gain)).toBeLessThan(3e-4);
  });

  it('equals a brute-force sliding mean when the window is short (B = 1)', () => {
    // second method: direct mean of the last W samples for each index after the fill
    const W = 50;
    const dt = 1 / (bw * W);
    const rng = createRng(5);
    const box = new BoxcarFilter({ dt_s: dt, bandwidth_Hz: bw });
    expect(box.blockSamples).toBe(1);
    const x: number[] = [];
    for (let i = 0; i < 2000; i++) {
      const v = 2 + rng.normal();
      x.push(v);
      box.push(v);
    }
    let lo = Infinity;
    let hi = -Infinity;
    let sum = 0;
    let cnt = 0;
    for (let i = W - 1; i < x.length; i++) {
      let s = 0;
      for (let j = i - W + 1; j <= i; j++) s += x[j];
      const m = s / W;
      lo = Math.min(lo, m);
      hi = Math.max(hi, m);
      sum += m;
      cnt++;
    }
    const r = box.result();
    expect(r.filtered.count).toBe(cnt);
    expect(r.filtered.min).toBeCloseTo(lo, 12);
    expect(r.filtered.max).toBeCloseTo(hi, 12);
    expect(r.filtered.mean).toBeCloseTo(sum / cnt, 12);
  });

  it('quantises the window to whole blocks within 1/128 and reports it', () => {
    const dt = 0.3e-9;
    const box = new BoxcarFilter({ dt_s: dt, bandwidth_Hz: bw }); // 333 333.3 samples per window
    expect(box.windowBlocks).toBeGreaterThanOrEqual(64);
    expect(Math.abs(box.window_s * bw - 1)).toBeLessThan(1 / 128);
    expect(box.window_s).toBeCloseTo(box.windowBlocks * box.blockSamples * dt, 18);
  });

  it('says enough windows only after the first fill plus three windows', () => {
    const W = 6400;
    const box = new BoxcarFilter({ dt_s: 1 / (bw * W), bandwidth_Hz: bw });
    expect(box.requiredSamples).toBe(4 * W);
    for (let i = 0; i < 4 * W - 1; i++) box.push(1);
    expect(box.enoughWindows()).toBe(false);
    box.push(1);
    expect(box.enoughWindows()).toBe(true);
    expect(box.result().windowsAfterFill).toBeCloseTo(3, 12);
  });

  it('before the first fill the filtered statistics are empty', () => {
    const box = new BoxcarFilter({ dt_s: 1e-9, bandwidth_Hz: 1e3 });
    for (let i = 0; i < 1000; i++) box.push(1);
    const r = box.result();
    expect(r.filtered.count).toBe(0);
    expect(Number.isNaN(r.ripple_rel)).toBe(true);
    expect(Number.isNaN(box.current())).toBe(true);
    expect(r.fullBand.count).toBe(1000);
  });
});
