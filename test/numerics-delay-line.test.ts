/**
 * The delay lines of the round-trip engine (src/numerics/delay-line.ts): the centred
 * 4-point Lagrange read against polynomials and sinusoids, and its amplitude response.
 */
import { describe, expect, it } from 'vitest';
import {
  ComplexDelayLines,
  lagrangeCentredN,
  lagrangeCentredGain,
  READ_POINTS,
} from '../src/numerics/delay-line';

describe('centred 4-point Lagrange read', () => {
  it('the n-point read reproduces every polynomial of degree n - 1 exactly (Abramowitz and Stegun 25.2.2)', () => {
    for (const n of [4, 8]) {
      const w = new Float64Array(n);
      const poly = (x: number) => 0.3 - 1.2 * x + 0.7 * x * x - 0.05 * x ** 3 + (n > 4 ? 0.01 * x ** 7 : 0);
      for (const u of [0, 0.1, 0.5, 0.93]) {
        lagrangeCentredN(u, n, w);
        let got = 0;
        for (let i = 0; i < n; i++) got += w[i] * poly(-(n / 2 - 1) + i);
        // round-off of a few dozen products of numbers up to 4^7
        expect(Math.abs(got - poly(u))).toBeLessThan(1e-11);
      }
    }
  });

  it('never amplifies on its central interval: |H| <= 1 at every fraction and frequency, = 1 at whole delays', () => {
    // centred Lagrange interpolators are passive on the central interval (Laakso et al.,
    // "Splitting the unit delay", IEEE SP Magazine 13(1), 1996, sec. on Lagrange)
    for (const n of [4, 8]) {
      for (let u = 0; u <= 1; u += 0.05) {
        for (let wdt = 0; wdt <= Math.PI; wdt += Math.PI / 40) {
          expect(lagrangeCentredGain(u, wdt, n)).toBeLessThanOrEqual(1 + 1e-12);
        }
      }
    }
    // the 8-point read loses far less than the 4-point one at a mode 940 MHz from the carrier
    // at 122 ps steps (w = 0.72): the loss per read falls as w^n (docs/model.md §3.5)
    const loss = (n: number) => 1 - lagrangeCentredGain(0.3, 0.72, n) ** 2;
    expect(loss(8)).toBeLessThan(loss(4) / 50);
    expect(Math.abs(lagrangeCentredGain(0, 2) - 1)).toBeLessThan(1e-12);
    // half a sample: H(w) = (9/8) cos(w/2) - (1/8) cos(3w/2), the closed form of the weights (-1, 9, 9, -1)/16
    for (const wdt of [0.3, 1, 2]) {
      const closed = (9 / 8) * Math.cos(wdt / 2) - (1 / 8) * Math.cos((3 * wdt) / 2);
      expect(Math.abs(lagrangeCentredGain(0.5, wdt) - Math.abs(closed))).toBeLessThan(1e-12);
    }
  });

  it('reads a slow complex sinusoid back at a fractional delay to the interpolator error', () => {
    expect(READ_POINTS).toBe(8);
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
    // the 8-point read's error, |1 - H| ~ w^8 / 1000 at the worst fraction (Laakso et al. 1996)
    expect(Math.hypot(out[0] - Math.cos(w * t), out[1] - Math.sin(w * t))).toBeLessThan(w ** 8 / 100 + 1e-13);
    // lane 0 was never written: lines are independent
    d.read(0, back, out, 0);
    expect(out[0]).toBe(0);
  });
});
