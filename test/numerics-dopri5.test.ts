import { describe, expect, it } from 'vitest';
import { createRk4, dopri5, integrateFixed, type OdeRhs } from '../src/numerics';

// harmonic oscillator: y = (x, v), y(t) = (cos t, -sin t) for y(0) = (1, 0)
const oscillator: OdeRhs = (_t, y, dy) => {
  dy[0] = y[1];
  dy[1] = -y[0];
};
// Van der Pol oscillator x'' = mu (1 - x^2) x' - x with mu = 1 (B. van der Pol, "On relaxation-oscillations",
// Phil. Mag. 2, 978 (1926))
const vanDerPol: OdeRhs = (_t, y, dy) => {
  dy[0] = y[1];
  dy[1] = (1 - y[0] * y[0]) * y[1] - y[0];
};

const TOLS = [1e-4, 1e-6, 1e-8, 1e-10];

describe('Dormand-Prince 5(4) with adaptive steps', () => {
  it('harmonic oscillator over t = 10: global error within 20x the tolerance at every tolerance', () => {
    // rtol/atol bound the local error per step (Hairer-Norsett-Wanner I, section II.4); on a
    // non-contracting problem the global error accumulates about linearly over the ~10-400
    // steps, so 20 x tol at t = 10 is the allowance (common practice, no source)
    for (const tol of TOLS) {
      const r = dopri5(oscillator, 0, Float64Array.of(1, 0), 10, { rtol: tol, atol: tol });
      expect(r.status).toBe('ok');
      expect(r.t).toBe(10);
      const err = Math.hypot(r.y[0] - Math.cos(10), r.y[1] + Math.sin(10));
      expect(err).toBeLessThan(20 * tol);
    }
  });

  it('Van der Pol (mu = 1) over t = 10 against a fine RK4 reference: error within 20x the tolerance', () => {
    // reference: RK4 with h = 1e-4; its own error is ~1e-13 (it changes by < 2e-13 when h is
    // halved), far below the smallest tolerance checked here
    const ref = integrateFixed(
      createRk4(2),
      vanDerPol,
      0,
      Float64Array.of(2, 0),
      10,
      100000,
      new Float64Array(2),
    );
    const errs: number[] = [];
    for (const tol of TOLS) {
      const r = dopri5(vanDerPol, 0, Float64Array.of(2, 0), 10, { rtol: tol, atol: tol });
      expect(r.status).toBe('ok');
      const err = Math.hypot(r.y[0] - ref[0], r.y[1] - ref[1]);
      expect(err).toBeLessThan(20 * tol); // allowance as in the oscillator test
      errs.push(err);
    }
    // tightening the tolerance 100x must buy at least 10x in accuracy (tolerance
    // proportionality, Hairer-Norsett-Wanner I section II.4)
    for (let i = 1; i < errs.length; i++) expect(errs[i]).toBeLessThan(errs[i - 1] / 10);
  });

  it('dense output at interior points of every step is within 20x the tolerance of the exact oscillator', () => {
    // the continuous extension is of order 4 (Hairer-Norsett-Wanner I, section II.6), so its
    // interior error is of the size of the step error; same allowance as above
    for (const tol of [1e-6, 1e-9]) {
      let maxErr = 0;
      let calls = 0;
      let lastT = 0;
      const out = new Float64Array(2);
      const r = dopri5(oscillator, 0, Float64Array.of(1, 0), 10, {
        rtol: tol,
        atol: tol,
        onStep: (s) => {
          calls++;
          expect(s.tPrev).toBe(lastT); // steps tile [0, 10] without gaps
          lastT = s.t;
          for (const theta of [0.1, 0.3, 0.5, 0.7, 0.9]) {
            const tq = s.tPrev + theta * (s.t - s.tPrev);
            s.denseAt(tq, out);
            maxErr = Math.max(maxErr, Math.hypot(out[0] - Math.cos(tq), out[1] + Math.sin(tq)));
          }
          // at the ends the dense polynomial reproduces the step's endpoints
          s.denseAt(s.t, out);
          expect(Math.abs(out[0] - s.y[0])).toBeLessThan(1e-14);
          s.denseAt(s.tPrev, out);
          expect(Math.abs(out[1] - s.yPrev[1])).toBeLessThan(1e-14);
        },
      });
      expect(calls).toBe(r.nAccepted);
      expect(lastT).toBe(10);
      expect(maxErr).toBeLessThan(20 * tol);
    }
  });

  it('is exact for a solution that is a polynomial of degree 4, in the step and in its dense output', () => {
    // y' = 4 t^3, y(0) = 0: y = t^4. A 5th-order RK method integrates quadrature problems of
    // degree <= 4 exactly and a 4th-order continuous extension reproduces degree 4 (order
    // conditions, Hairer-Norsett-Wanner I sections II.2 and II.6); only rounding remains
    const quartic: OdeRhs = (t, _y, dy) => {
      dy[0] = 4 * t * t * t;
    };
    const out = new Float64Array(1);
    let maxErr = 0;
    const r = dopri5(quartic, 0, Float64Array.of(0), 2, {
      h0: 2,
      rtol: 1e-3,
      atol: 1e-3,
      onStep: (s) => {
        for (let q = 0; q <= 10; q++) {
          const tq = s.tPrev + (q / 10) * (s.t - s.tPrev);
          maxErr = Math.max(maxErr, Math.abs(s.denseAt(tq, out)[0] - tq ** 4));
        }
      },
    });
    expect(r.nAccepted).toBe(1);
    expect(Math.abs(r.y[0] - 16)).toBeLessThan(1e-13);
    expect(maxErr).toBeLessThan(1e-13);
  });

  it("integrates backwards when t1 < t0: y' = -y from y(1) = 1 gives y(0) = e", () => {
    // closed form y(0) = y(1) e^{1}; tolerance 1e-8 relative with rtol 1e-10 (as above)
    const decay: OdeRhs = (_t, y, dy) => {
      dy[0] = -y[0];
    };
    const r = dopri5(decay, 1, Float64Array.of(1), 0, { rtol: 1e-10, atol: 1e-12 });
    expect(r.status).toBe('ok');
    expect(r.t).toBe(0);
    expect(Math.abs(r.y[0] / Math.E - 1)).toBeLessThan(1e-8);
  });

  it('counts evaluations: 1 initial + 1 for the starting step + 6 per attempted step (FSAL)', () => {
    // DOPRI5 has 7 stages whose last equals the first of the next step (Hairer-Norsett-Wanner I, section II.5)
    const r = dopri5(vanDerPol, 0, Float64Array.of(2, 0), 10, { rtol: 1e-6, atol: 1e-6 });
    expect(r.nSteps).toBe(r.nAccepted + r.nRejected);
    expect(r.nRejected).toBeGreaterThan(0); // the limit cycle does force rejections
    expect(r.nFev).toBe(2 + 6 * r.nSteps);
  });

  it('returns status max-steps (no exception) when the step budget runs out', () => {
    const r = dopri5(oscillator, 0, Float64Array.of(1, 0), 1000, { rtol: 1e-10, atol: 1e-10, maxSteps: 20 });
    expect(r.status).toBe('max-steps');
    expect(r.nSteps).toBe(20);
    expect(r.t).toBeGreaterThan(0);
    expect(r.t).toBeLessThan(1000);
    expect(r.message).toMatch(/20 attempted steps/);
  });

  it("returns status step-too-small at a finite-time blow-up: y' = y^2, y(0) = 1 explodes at t = 1", () => {
    // closed form y = 1/(1 - t); the integrator must stop at the singularity. The computed
    // solution carries a relative error ~ rtol, which moves its own blow-up by about that
    // much, so t is checked to 1e-6 around 1
    const blowUp: OdeRhs = (_t, y, dy) => {
      dy[0] = y[0] * y[0];
    };
    const r = dopri5(blowUp, 0, Float64Array.of(1), 2, { rtol: 1e-8, atol: 1e-8, maxSteps: 1_000_000 });
    expect(r.status).toBe('step-too-small');
    expect(Math.abs(r.t - 1)).toBeLessThan(1e-6);
    expect(r.message).toMatch(/step size/);
  });

  it('a right-hand side returning NaN ends in step-too-small, not an endless loop or a throw', () => {
    const bad: OdeRhs = (t, _y, dy) => {
      dy[0] = t > 0.5 ? Number.NaN : 1;
    };
    const r = dopri5(bad, 0, Float64Array.of(0), 1);
    expect(r.status).toBe('step-too-small');
    expect(r.t).toBeLessThanOrEqual(0.5);
  });

  it('zero-length interval returns the initial state untouched; bad options throw RangeError', () => {
    const y0 = Float64Array.of(1, 0);
    const r = dopri5(oscillator, 3, y0, 3);
    expect(r.status).toBe('ok');
    expect(Array.from(r.y)).toEqual([1, 0]);
    expect(r.y).not.toBe(y0);
    expect(r.nFev).toBe(0);
    expect(() => dopri5(oscillator, 0, y0, 1, { rtol: 0, atol: 0 })).toThrow(RangeError);
    expect(() => dopri5(oscillator, 0, y0, 1, { atol: Float64Array.of(1e-6) })).toThrow(
      /length 1, expected 2/,
    );
    expect(() => dopri5(oscillator, 0, y0, 1, { minFactor: 2 })).toThrow(RangeError);
  });
});
