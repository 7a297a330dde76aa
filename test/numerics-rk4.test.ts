import { describe, expect, it } from 'vitest';
import {
  createEuler,
  createHeun,
  createRk4,
  integrateFixed,
  type FixedStepper,
  type OdeRhs,
} from '../src/numerics';

// y' = -y, y(0) = 1: y(t) = e^{-t}
const decay: OdeRhs = (_t, y, dy) => {
  dy[0] = -y[0];
};
// harmonic oscillator x'' = -x as y = (x, v): y(t) = (cos t, -sin t) for y(0) = (1, 0)
const oscillator: OdeRhs = (_t, y, dy) => {
  dy[0] = y[1];
  dy[1] = -y[0];
};

function errorDecay(stepper: FixedStepper, nSteps: number): number {
  const y = integrateFixed(stepper, decay, 0, Float64Array.of(1), 1, nSteps, new Float64Array(1));
  return Math.abs(y[0] - Math.exp(-1));
}

function errorOscillator(stepper: FixedStepper, nSteps: number): number {
  const T = 2;
  const y = integrateFixed(stepper, oscillator, 0, Float64Array.of(1, 0), T, nSteps, new Float64Array(2));
  return Math.hypot(y[0] - Math.cos(T), y[1] + Math.sin(T));
}

/** log2 of successive error ratios over step halvings */
function observedOrders(err: (n: number) => number, n0: number, levels: number): number[] {
  const e: number[] = [];
  for (let l = 0; l <= levels; l++) e.push(err(n0 * 2 ** l));
  const p: number[] = [];
  for (let l = 0; l < levels; l++) p.push(Math.log2(e[l] / e[l + 1]));
  return p;
}

describe('fixed-step Runge-Kutta steppers', () => {
  it("RK4 on y' = -y has the global error t e^{-t} h^4/120 predicted by its stability function", () => {
    // for y' = lambda y one RK4 step multiplies by R(z) = 1 + z + z^2/2 + z^3/6 + z^4/24,
    // z = lambda h, and e^z - R(z) = z^5/120 + O(z^6) (Hairer & Wanner, Solving ODEs II, section IV.2,
    // stability function of RK4); N = t/h steps give |y_N - y(t)| ~ t e^{-t} h^4/120.
    // h = 0.01, t = 1: 3.07e-11; 5 % allows the O(h^5) remainder
    const predicted = (Math.exp(-1) * 1e-8) / 120;
    const e = errorDecay(createRk4(1), 100);
    expect(Math.abs(e / predicted - 1)).toBeLessThan(0.05);
  });

  it('RK4 on the harmonic oscillator tracks (cos t, -sin t) with the predicted phase error t h^4/120', () => {
    // same expansion with z = i h: |e^{ih} - R(ih)| = h^5/120 + O(h^7) per step, |y| = 1;
    // t = 2, h = 0.02: 2.67e-9, 5 % tolerance as above
    const predicted = (2 * 0.02 ** 4) / 120;
    const e = errorOscillator(createRk4(2), 100);
    expect(Math.abs(e / predicted - 1)).toBeLessThan(0.05);
  });

  it('halving the step over 4 levels shows observed orders 4 (RK4), 2 (Heun), 1 (Euler) within 0.2', () => {
    // global error O(h^p) of a p-th order one-step method (Hairer-Norsett-Wanner I, section II.3, convergence of one-step methods);
    // 0.2 allows the next term of the error expansion at the coarsest level
    const cases: [FixedStepper, FixedStepper, number][] = [
      [createRk4(1), createRk4(2), 4],
      [createHeun(1), createHeun(2), 2],
      [createEuler(1), createEuler(2), 1],
    ];
    for (const [s1, s2, p] of cases) {
      for (const q of observedOrders((n) => errorDecay(s1, n), 10, 4))
        expect(Math.abs(q - p)).toBeLessThan(0.2);
      for (const q of observedOrders((n) => errorOscillator(s2, n), 20, 4))
        expect(Math.abs(q - p)).toBeLessThan(0.2);
      expect(s1.order).toBe(p);
    }
  });

  it('a step may write into its own input array (out === y) with the same result', () => {
    // the update is elementwise after all stages; aliasing must not change it (our own API claim)
    const rk = createRk4(2);
    const y = Float64Array.of(0.3, -0.7);
    const separate = new Float64Array(2);
    rk.step(oscillator, 0.1, y, 0.05, separate);
    rk.step(oscillator, 0.1, y, 0.05, y);
    expect(Array.from(y)).toEqual(Array.from(separate));
  });

  it("time-dependent right-hand side: y' = cos t integrates to sin t with RK4 (Simpson weights)", () => {
    // for y' = g(t) RK4 reduces to Simpson's rule, error h^4/2880 max|g''''| per unit time
    // (Abramowitz & Stegun 25.4.5); h = 0.1 over [0, 3] gives < 1e-7
    const f: OdeRhs = (t, _y, dy) => {
      dy[0] = Math.cos(t);
    };
    const y = integrateFixed(createRk4(1), f, 0, Float64Array.of(0), 3, 30, new Float64Array(1));
    expect(Math.abs(y[0] - Math.sin(3))).toBeLessThan(1e-7);
  });

  it('rejects a non-positive dimension and a short array', () => {
    expect(() => createRk4(0)).toThrow(RangeError);
    expect(() => createRk4(2).step(oscillator, 0, new Float64Array(1), 0.1, new Float64Array(2))).toThrow(
      /dimension 2/,
    );
  });
});
