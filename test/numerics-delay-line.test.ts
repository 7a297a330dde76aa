/**
 * The delay lines of the round-trip engine (src/numerics/delay-line.ts): the centred
 * 4-point Lagrange read against polynomials and sinusoids, and its amplitude response.
 */
import { describe, expect, it } from 'vitest';
import { ComplexDelayLines, lagrangeCentred, lagrangeCentredGain } from '../src/numerics/delay-line';

describe('centred 4-point Lagrange read', () => {
  it('reproduces every cubic exactly (Abramowitz and Stegun 25.2.13, four-point formula)', () => {
    const w = new Float64Array(4);
    const cubic = (x: number) => 0.3 - 1.2 * x + 0.7 * x * x - 0.05 * x * x * x;
    for (const u of [0, 0.1, 0.5, 0.93]) {
      lagrangeCentred(u, w);
      const got = w[0] * cubic(-1) + w[1] * cubic(0) + w[2] * cubic(1) + w[3] * cubic(2);
      // round-off of a handful of products
      expect(Math.abs(got - cubic(u))).toBeLessThan(1e-14);
    }
  });

  it('never amplifies on its central interval: |H| <= 1 at every fraction and frequency, = 1 at whole delays', () => {
    // centred Lagrange interpolators are passive on the central interval (Laakso et al.,
    // "Splitting the unit delay", IEEE SP Magazine 13(1), 1996, sec. on Lagrange)
    for (let u = 0; u <= 1; u += 0.05) {
      for (let wdt = 0; wdt <= Math.PI; wdt += Math.PI / 40) {
        expect(lagrangeCentredGain(u, wdt)).toBeLessThanOrEqual(1 + 1e-12);
      }
    }
    expect(Math.abs(lagrangeCentredGain(0, 2) - 1)).toBeLessThan(1e-12);
    // half a sample: H(w) = (9/8) cos(w/2) - (1/8) cos(3w/2), the closed form of the weights (-1, 9, 9, -1)/16
    for (const wdt of [0.3, 1, 2]) {
      const closed = (9 / 8) * Math.cos(wdt / 2) - (1 / 8) * Math.cos((3 * wdt) / 2);
      expect(Math.abs(lagrangeCentredGain(0.5, wdt) - Math.abs(closed))).toBeLessThan(1e-12);
    }
  });

  it('reads a slow complex sinusoid back at a fractional delay to the interpolator error (w^4 / 43 at most)', () => {
    const d = new ComplexDelayLines(2, 20);
    const f = 0.02; // cycles per sample
    for (let n = 0; n < 40; n++) {
      d.advance();
      d.set(1, Math.cos(2 * Math.PI * f * n), Math.sin(2 * Math.PI * f * n));
    }
    const out = new Float64Array(2);
    const back = 7.3;
    d.read(1, back, out, 0);
    const t = 39 - back;
    const w = 2 * Math.PI * f;
    // error bound from the expansion H = 1 - (3/128) w^4 + ... at the worst fraction
    expect(Math.hypot(out[0] - Math.cos(w * t), out[1] - Math.sin(w * t))).toBeLessThan(w ** 4 / 40);
    // lane 0 was never written: lines are independent
    d.read(0, back, out, 0);
    expect(out[0]).toBe(0);
  });
});
