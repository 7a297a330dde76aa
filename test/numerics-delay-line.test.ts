/**
 * The delay lines of the round-trip and modal engines (src/numerics/delay-line.ts): the
 * centred Lagrange reads against polynomials and sinusoids, their amplitude response, the
 * modal engine's 4-point read that never reaches past the newest sample, and the stored
 * energy of a line.
 */
import { describe, expect, it } from 'vitest';
import {
  ComplexDelayLines,
  lagrange4Newest,
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

describe("the modal engine's 4-point read and the stored energy", () => {
  const cubic = (x: number) => 0.4 + 1.1 * x - 0.3 * x * x + 0.02 * x ** 3;

  it('reproduces a cubic exactly (Abramowitz and Stegun 25.2.13), centred where it can be', () => {
    const w = new Float64Array(4);
    for (const back of [0.5, 0.99, 1, 1.25, 2.5, 7.9]) {
      const start = lagrange4Newest(back, w);
      // centred stencil floor(back) - 1 .. floor(back) + 2, moved to start at the newest sample
      // when it would reach past it
      expect(start).toBe(Math.max(Math.floor(back) - 1, 0));
      let got = 0;
      for (let i = 0; i < 4; i++) got += w[i] * cubic(start + i);
      // round-off of four products of numbers below 20
      expect(Math.abs(got - cubic(back))).toBeLessThan(1e-12);
    }
  });

  it('reads a cubic signal back from the ring, and a write for the next sample is unseen until advance()', () => {
    const d = new ComplexDelayLines(3, 10, 4);
    // sample n (written at step n) holds cubic(n) in line 2; after the last write, back b
    // is the value at n_last - b
    const last = 30;
    for (let n = 0; n <= last; n++) {
      d.advance();
      d.set(2, cubic(n / 4), -cubic(n / 4));
    }
    const out = new Float64Array(2);
    d.read(2, 3.4, out, 0);
    // a cubic in n is reproduced to round-off (Abramowitz and Stegun 25.2.13)
    expect(Math.abs(out[0] - cubic((last - 3.4) / 4))).toBeLessThan(1e-12);
    expect(Math.abs(out[1] + cubic((last - 3.4) / 4))).toBeLessThan(1e-12);
    d.setNext(2, 1e6, 1e6);
    d.read(2, 0, out, 0);
    // back 0 is the newest sample itself: its weight is exactly 1 (u = 0 on node 0)
    expect(out[0]).toBe(cubic(last / 4));
    d.advance();
    d.read(2, 0, out, 0);
    expect(out[0]).toBe(1e6);
  });

  it('stores the trapezoid integral of |x|^2 over the delay, exact for a linearly varying power', () => {
    const d = new ComplexDelayLines(2, 40, 4);
    // |x|^2 = 1 + n / 10 at sample n: the trapezoid rule is exact for a linear integrand
    // (Abramowitz and Stegun 25.4.2 with no second-derivative error term)
    const last = 50;
    for (let n = 0; n <= last; n++) {
      d.advance();
      d.set(1, Math.sqrt(1 + n / 10), 0);
    }
    const back = 12.6;
    const power = (n: number) => 1 + n / 10;
    const exact = 0.5 * (power(last) + power(last - back)) * back;
    // round-off of a dozen additions of numbers near 6
    expect(Math.abs(d.addStored(1, back, 0) - exact)).toBeLessThan(1e-12);
    // the running sum adds: two lines' energies in one call chain
    expect(Math.abs(d.addStored(1, back, 2.5) - (exact + 2.5))).toBeLessThan(1e-12);
    expect(d.addStored(0, back, 0)).toBe(0);
  });
});
