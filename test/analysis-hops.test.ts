import { describe, expect, it } from 'vitest';
import { HopDetector } from '../src/analysis';

function feed(det: HopDetector, runs: [mode: number, samples: number][]): void {
  for (const [m, k] of runs) for (let i = 0; i < k; i++) det.push(m);
}

// The dwell rule itself is the project's definition (MODEL.md section 4); the expected
// counts below follow from it by hand: a run of k samples lasts k dt and counts when k dt > dwell.
describe('HopDetector', () => {
  const dt = 1e-9;

  it('counts a new mode only when it stays dominant for longer than the dwell', () => {
    const det = new HopDetector({ dt_s: dt, dwell_s: 10e-9, modeCount: 3, driveFrequency_Hz: null });
    // 10 samples = exactly the dwell: not longer, no hop; 11 samples: a hop dated at its first sample
    feed(det, [
      [0, 100],
      [1, 10],
      [0, 100],
      [1, 11],
      [1, 50],
    ]);
    const r = det.result();
    expect(r.hops).toBe(1);
    expect(r.hopTimes_s[0]).toBeCloseTo(210 * dt, 18);
    expect(r.hopFrom).toEqual([0]);
    expect(r.hopTo).toEqual([1]);
    expect(r.finalMode).toBe(1);
    expect(r.hopsPerPeriod).toBeNull();
    expect(r.hopsPerSecond).toBeCloseTo(1 / (271 * dt), 0);
  });

  it('ignores chatter shorter than the dwell and a return to the previous mode', () => {
    const det = new HopDetector({ dt_s: dt, dwell_s: 5e-9, modeCount: 3, driveFrequency_Hz: null });
    feed(det, [[0, 50]]);
    for (let i = 0; i < 500; i++) det.push(i % 2); // 0/1 alternating each sample
    for (let i = 0; i < 300; i++) det.push(i % 6 < 3 ? 1 : 2); // 1 and 2 alternating in runs of 3
    feed(det, [
      [0, 4],
      [0, 20],
      [2, 6],
      [2, 30],
    ]);
    const r = det.result();
    expect(r.hops).toBe(1);
    expect(r.hopFrom).toEqual([0]);
    expect(r.hopTo).toEqual([2]);
    expect(r.hopTimes_s[0]).toBeCloseTo((50 + 500 + 300 + 24) * dt, 18);
  });

  it('counts no hop for the first mode to settle, even after initial chatter', () => {
    const det = new HopDetector({ dt_s: dt, dwell_s: 5e-9, modeCount: 2, driveFrequency_Hz: null });
    feed(det, [
      [1, 2],
      [0, 3],
      [1, 1],
      [0, 100],
    ]);
    expect(det.result().hops).toBe(0);
    expect(det.result().finalMode).toBe(0);
  });

  it('with zero dwell every change is a hop; occupation is the raw fraction', () => {
    const det = new HopDetector({ dt_s: dt, dwell_s: 0, modeCount: 3, driveFrequency_Hz: null });
    feed(det, [
      [0, 5],
      [1, 1],
      [0, 2],
      [2, 2],
    ]);
    const r = det.result();
    expect(r.hops).toBe(3);
    expect(r.occupation[0]).toBeCloseTo(0.7, 15);
    expect(r.occupation[1]).toBeCloseTo(0.1, 15);
    expect(r.occupation[2]).toBeCloseTo(0.2, 15);
  });

  it('places hops at the turning points of a sine drive in phase bins 6 and 18 of 24', () => {
    // x = A sin(2 pi f t + phi0): turning points at phase 1/4 (top) and 3/4 (bottom) of
    // the sine's argument, i.e. bins 6 and 18 of 24. The synthetic dominant mode follows the
    // sign of the velocity, so it switches right after each turning point; dt = 1.1 ns keeps
    // samples off the exact bin edges.
    const f = 1e6;
    const dt2 = 1.1e-9;
    for (const phi0 of [0, Math.PI / 3]) {
      const det = new HopDetector({
        dt_s: dt2,
        dwell_s: 50e-9,
        modeCount: 2,
        driveFrequency_Hz: f,
        drivePhase_rad: phi0,
        phaseBins: 24,
      });
      const n = Math.floor(20 / f / dt2);
      for (let i = 0; i < n; i++) {
        const v = Math.cos(2 * Math.PI * f * i * dt2 + phi0);
        det.push(v > 0 ? 0 : 1);
      }
      const r = det.result();
      // 40 turning points (phases 0.25 .. 19.75 after phi0) in 20 periods, each followed by > dwell;
      // the first mode is accepted without a hop
      expect(r.hops).toBe(40);
      const hist = r.phaseHistogram;
      expect(hist.length).toBe(24);
      expect(hist[6] + hist[18]).toBe(r.hops);
      expect(hist[6]).toBe(20);
      expect(hist[18]).toBe(20);
      // hops per period: 40 hops in n dt f = 19.999 periods
      expect(r.hopsPerPeriod as number).toBeCloseTo(40 / (n * dt2 * f), 12);
      expect(Math.abs((r.hopsPerPeriod as number) - 2)).toBeLessThan(1e-3);
      // the sign of cos is positive half the time
      expect(Math.abs(r.occupation[0] - 0.5)).toBeLessThan(2e-3);
    }
  });

  it('keeps counting beyond the stored hop times and says so', () => {
    const det = new HopDetector({
      dt_s: dt,
      dwell_s: 0,
      modeCount: 2,
      driveFrequency_Hz: null,
      maxStoredHops: 3,
    });
    for (let i = 0; i < 10; i++) det.push(i % 2);
    const r = det.result();
    expect(r.hops).toBe(9);
    expect(r.hopTimes_s.length).toBe(3);
    expect(r.hopTimesTruncated).toBe(true);
  });

  it('rejects a mode index outside the list', () => {
    const det = new HopDetector({ dt_s: dt, dwell_s: 0, modeCount: 2, driveFrequency_Hz: null });
    expect(() => det.push(2)).toThrow(/mode index 2/);
  });
});

// The margin is the project's definition (docs/model.md §4.3, a new mode must lead by 20 %
// in power; common practice, no source); the counts below follow from it by hand.
describe('HopDetector with a power margin', () => {
  const dt = 1e-9;
  /** two modes whose powers cross: mode 1 at 1 + d sin(2 pi k / period) against mode 0 at 1 */
  function trade(det: HopDetector, d: number, periods: number, period = 400): void {
    const P = new Float64Array(2);
    for (let k = 0; k < periods * period; k++) {
      P[0] = 1;
      P[1] = 1 + d * Math.sin((2 * Math.PI * k) / period);
      det.pushPowers(P);
    }
  }

  it('two modes of nearly equal power trading the lead are not hopping', () => {
    // +-10 % swings: each mode leads the other by at most 10 %, below the 20 % margin
    const withMargin = new HopDetector({
      dt_s: dt,
      dwell_s: 5e-9,
      modeCount: 2,
      driveFrequency_Hz: null,
      margin: 0.2,
    });
    trade(withMargin, 0.1, 10);
    expect(withMargin.result().hops).toBe(0);
    // without the margin the same stream counts a hop at every crossing after the first
    // acceptance: 2 per period, 10 periods, less the half period before mode 1 first leads
    const noMargin = new HopDetector({ dt_s: dt, dwell_s: 5e-9, modeCount: 2, driveFrequency_Hz: null });
    trade(noMargin, 0.1, 10);
    expect(noMargin.result().hops).toBe(19);
  });

  it('a mode that leads by more than the margin for longer than the dwell is a hop', () => {
    // +-50 % swings: mode 1 exceeds 1.2 x mode 0 for part of each positive half period
    // (sin > 0.4, 37 % of the period = 148 samples > the 5-sample dwell), and mode 0 exceeds
    // 1.2 x mode 1 where 1 + 0.5 sin < 1 / 1.2 (sin < -1/3, 39 % of the period): two hops per period
    const det = new HopDetector({
      dt_s: dt,
      dwell_s: 5e-9,
      modeCount: 2,
      driveFrequency_Hz: null,
      margin: 0.2,
    });
    trade(det, 0.5, 10);
    // before any mode is accepted the strongest leads: mode 1 (rising from sample 1) is
    // accepted without a hop, then 2 hops per period: 1 in the first period, 19 in all
    expect(det.result().hops).toBe(19);
  });
});
