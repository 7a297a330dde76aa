import { describe, expect, it } from 'vitest';
import { ComplexRing, lagrange4, ringCubic, ringLinear } from '../src/numerics';

/** ring of length len whose sample of age a (a samples before the newest) is f(-a dx) */
function fillRing(len: number, newest: number, f: (t: number) => number, dx: number): Float64Array {
  const buf = new Float64Array(len);
  for (let a = 0; a < len; a++) buf[(newest - a + len) % len] = f(-a * dx);
  return buf;
}

describe('Lagrange and ring-buffer interpolation', () => {
  it('lagrange4 reproduces any cubic exactly, inside [-1, 2] and when extrapolating', () => {
    // an n-point Lagrange interpolant is exact for degree <= n-1 (Abramowitz & Stegun 25.2.13
    // and the remainder term of section 25.2); 1e-12 covers rounding of values up to ~30
    const p = (x: number): number => 1 - 2 * x + 0.5 * x * x + 0.3 * x * x * x;
    for (let u = -1.5; u <= 3; u += 0.05) {
      expect(Math.abs(lagrange4(p(-1), p(0), p(1), p(2), u) - p(u))).toBeLessThan(1e-12);
    }
    expect(lagrange4(5, 6, 7, 8, 0)).toBe(6);
    expect(lagrange4(5, 6, 7, 8, 1)).toBe(7);
  });

  it('ringCubic on a sine at 20 samples per period stays within the Lagrange remainder bound, 1e-4 from 25', () => {
    // remainder of 4-point interpolation: |f''''| max|prod(u - u_j)| dx^4 / 4! (Abramowitz &
    // Stegun section 25.2), |f''''| <= 1 for sin. With nodes -1, 0, 1, 2: max |(u+1)u(u-1)(u-2)|
    // is 9/16 on the central interval [0, 1] and 1 on the end intervals the shifted stencil
    // uses (back < 1 or back > len-2). At 20 samples/period the central bound is 2.28e-4 and
    // the sine reaches it, so "< 1e-4" needs 25 samples/period (bound 9.3e-5) away from the ends
    for (const samplesPerPeriod of [20, 25]) {
      const dx = (2 * Math.PI) / samplesPerPeriod;
      const central = ((9 / 16) * dx ** 4) / 24,
        shifted = dx ** 4 / 24;
      const len = 64,
        newest = 10;
      const f = (t: number): number => Math.sin(t + 0.3);
      const buf = fillRing(len, newest, f, dx);
      let worstCentral = 0,
        worstEnds = 0;
      for (let back = 0; back <= len - 1; back += 0.01) {
        const e = Math.abs(ringCubic(buf, len, newest, back) - f(-back * dx));
        if (back >= 1 && back <= len - 2) worstCentral = Math.max(worstCentral, e);
        else worstEnds = Math.max(worstEnds, e);
      }
      expect(worstCentral).toBeLessThanOrEqual(central);
      expect(worstEnds).toBeLessThanOrEqual(shifted);
      if (samplesPerPeriod === 25) expect(worstCentral).toBeLessThan(1e-4);
    }
  });

  it('ringCubic converges with order 4 and ringLinear with order 2 when the spacing is halved', () => {
    // remainder terms O(dx^4) and O(dx^2) (Abramowitz & Stegun section 25.2); 0.2 tolerance on the order
    const errFor = (dx: number, cubic: boolean): number => {
      const len = 400,
        newest = 123;
      const f = (t: number): number => Math.cos(3 * t) + 0.2 * t;
      const buf = fillRing(len, newest, f, dx);
      let worst = 0;
      for (let back = 0; back <= 1.0 / dx; back += 0.037) {
        const v = cubic ? ringCubic(buf, len, newest, back) : ringLinear(buf, len, newest, back);
        worst = Math.max(worst, Math.abs(v - f(-back * dx)));
      }
      return worst;
    };
    for (const [cubic, p] of [
      [true, 4],
      [false, 2],
    ] as [boolean, number][]) {
      for (const dx of [0.04, 0.02, 0.01]) {
        expect(Math.abs(Math.log2(errFor(dx, cubic) / errFor(dx / 2, cubic)) - p)).toBeLessThan(0.2);
      }
    }
  });

  it('never uses samples newer than the newest or older than the oldest (stencil shifted, wrap-around)', () => {
    // our own design claim: poison the slot that a mis-wrapped stencil would pick (the oldest
    // sample, physically next to the newest in memory) and read near both ends
    const len = 16;
    for (const newest of [0, 3, 15]) {
      const buf = fillRing(len, newest, (t) => 2 + t, 1); // linear data: cubic and linear reads are exact
      const oldest = (newest + 1) % len;
      const saved = buf[oldest];
      buf[oldest] = 1e300;
      for (const back of [0, 0.25, 0.999, 1, 2.5]) {
        expect(ringCubic(buf, len, newest, back)).toBeCloseTo(2 - back, 12);
        expect(ringLinear(buf, len, newest, back)).toBeCloseTo(2 - back, 12);
      }
      buf[oldest] = saved;
      buf[newest] = 1e300; // now poison the newest and read near the oldest end
      for (const back of [len - 1, len - 1.5, len - 3.2]) {
        expect(ringCubic(buf, len, newest, back)).toBeCloseTo(2 - back, 12);
      }
    }
  });

  it('extrapolates up to one sample past the newest, and rejects reads outside [-1, len-1]', () => {
    const len = 8,
      newest = 2;
    const buf = fillRing(len, newest, (t) => t * t * t - t, 0.5); // cubic: extrapolation exact (A&S 25.2)
    const f = (t: number): number => t * t * t - t;
    expect(ringCubic(buf, len, newest, -0.5)).toBeCloseTo(f(0.25), 12);
    expect(() => ringCubic(buf, len, newest, -1.01)).toThrow(RangeError);
    expect(() => ringCubic(buf, len, newest, len - 0.99)).toThrow(/back/);
    expect(() => ringCubic(buf, 3, 0, 0)).toThrow(/length >= 4/);
  });
});

describe('ComplexRing (delay-line storage)', () => {
  it('after wrap-around, cubic and linear reads of e^{i w t} match the closed form within the remainder bounds', () => {
    // bounds as above with |f''''| = w^4 and |f''| = w^2 per component (A&S section 25.2):
    // cubic (9/16) (w dt)^4 / 24 inside, (w dt)^4 / 24 on the end intervals; linear (w dt)^2 / 8
    const cap = 50,
      dt = 0.01,
      w = 20;
    const ring = new ComplexRing(cap);
    const nPush = 137; // wraps the ring more than twice
    for (let k = 0; k < nPush; k++) ring.push(Math.cos(w * k * dt), Math.sin(w * k * dt));
    expect(ring.size).toBe(cap);
    expect(ring.newestIndex).toBe((nPush - 1) % cap);
    const tNewest = (nPush - 1) * dt;
    const out = new Float64Array(4);
    const bLinear = (w * dt) ** 2 / 8;
    for (let d = 0; d <= cap - 1; d += 0.13) {
      const t = tNewest - d * dt;
      const bCubic = ((d >= 1 && d <= cap - 2 ? 9 / 16 : 1) * (w * dt) ** 4) / 24;
      ring.readCubic(d, out, 0);
      ring.readLinear(d, out, 2);
      expect(Math.abs(out[0] - Math.cos(w * t))).toBeLessThanOrEqual(bCubic);
      expect(Math.abs(out[1] - Math.sin(w * t))).toBeLessThanOrEqual(bCubic);
      expect(Math.abs(out[2] - Math.cos(w * t))).toBeLessThanOrEqual(bLinear);
      expect(Math.abs(out[3] - Math.sin(w * t))).toBeLessThanOrEqual(bLinear);
    }
    // integer delays return the stored samples themselves
    ring.readCubic(7, out);
    expect(out[0]).toBeCloseTo(Math.cos(w * (nPush - 8) * dt), 14);
  });

  it('a partly filled ring reads only the stored history and refuses older delays', () => {
    const ring = new ComplexRing(32);
    const out = new Float64Array(2);
    expect(() => ring.readLinear(0, out)).toThrow(/stored 0/);
    for (let k = 0; k < 5; k++) ring.push(k, -k); // linear data: reads are exact
    ring.readCubic(4, out); // the oldest stored sample; stencil must stay within 5 samples
    expect(out[0]).toBeCloseTo(0, 12);
    ring.readCubic(0.5, out);
    expect(out[0]).toBeCloseTo(3.5, 12);
    expect(out[1]).toBeCloseTo(-3.5, 12);
    expect(ring.maxDelay).toBe(4);
    expect(() => ring.readCubic(4.5, out)).toThrow(RangeError);
  });

  it('fill sets the whole history (field before t = 0); clear empties it', () => {
    const ring = new ComplexRing(10);
    ring.fill(0.5, -2);
    const out = new Float64Array(2);
    expect(Array.from(ring.readCubic(8.7, out))).toEqual([0.5, -2]);
    ring.push(1.5, -2);
    expect(ring.readLinear(0.5, out)[0]).toBeCloseTo(1, 14);
    ring.clear();
    expect(ring.size).toBe(0);
    expect(() => new ComplexRing(1)).toThrow(RangeError);
  });
});
