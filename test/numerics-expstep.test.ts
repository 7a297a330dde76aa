import { describe, expect, it } from 'vitest';
import {
  ExpStepCoefficients,
  PHI_SERIES_RADIUS,
  createRk4,
  expStepConstant,
  expStepLinear,
  phiClosed,
  phiFunctions,
  phiSeries,
  type OdeRhs,
} from '../src/numerics';

/** minimal complex helpers for independent closed forms (tests only) */
type C = [number, number];
const mul = (a: C, b: C): C => [a[0] * b[0] - a[1] * b[1], a[0] * b[1] + a[1] * b[0]];
const div = (a: C, b: C): C => {
  const d = b[0] * b[0] + b[1] * b[1];
  return [(a[0] * b[0] + a[1] * b[1]) / d, (a[1] * b[0] - a[0] * b[1]) / d];
};
const add = (a: C, b: C): C => [a[0] + b[0], a[1] + b[1]];
const sub = (a: C, b: C): C => [a[0] - b[0], a[1] - b[1]];
const cexp = (a: C): C => [Math.exp(a[0]) * Math.cos(a[1]), Math.exp(a[0]) * Math.sin(a[1])];
const cabs = (a: C): number => Math.hypot(a[0], a[1]);

/**
 * Reference phi1, phi2 by the contour-integral mean of Kassam & Trefethen, "Fourth-order
 * time-stepping for stiff PDEs", SIAM J. Sci. Comput. 26, 1214 (2005):
 * phi(x) = (1/M) sum_j phi(x + r e^{i theta_j}) by Cauchy's formula, evaluated with the plain
 * closed forms on a circle of radius 1 where they have no cancellation; the trapezoidal rule
 * converges geometrically for these entire functions, M = 64 gives full double precision.
 */
function phiContour(x: C): [C, C] {
  const M = 64;
  let p1: C = [0, 0];
  let p2: C = [0, 0];
  for (let j = 0; j < M; j++) {
    const th = (2 * Math.PI * (j + 0.5)) / M;
    const z: C = [x[0] + Math.cos(th), x[1] + Math.sin(th)];
    const ez = cexp(z);
    const f1 = div(sub(ez, [1, 0]), z);
    const f2 = div(sub(sub(ez, [1, 0]), z), mul(z, z));
    p1 = add(p1, f1);
    p2 = add(p2, f2);
  }
  return [
    [p1[0] / M, p1[1] / M],
    [p2[0] / M, p2[1] / M],
  ];
}

/** exact solution of z' = lambda z + a + b t, z(0) = z0: z = (z0 - zp(0)) e^{lambda t} + zp(t), zp = -(a + b t)/lambda - b/lambda^2 */
function exactLinearInput(lambda: C, z0: C, a: C, b: C, t: number): C {
  const zp = (s: number): C =>
    sub([0, 0], add(div(add(a, [b[0] * s, b[1] * s]), lambda), div(b, mul(lambda, lambda))));
  return add(mul(sub(z0, zp(0)), cexp([lambda[0] * t, lambda[1] * t])), zp(t));
}

describe('phi functions for exponential integrators', () => {
  it('phi(0) = (e^0, phi1, phi2) = (1, 1, 1/2) exactly', () => {
    // series definitions phi1 = sum x^k/(k+1)!, phi2 = sum x^k/(k+2)! (Hochbruck & Ostermann 2010, section 2)
    expect(Array.from(phiFunctions(0, 0, new Float64Array(6)))).toEqual([1, 0, 1, 0, 0.5, 0]);
  });

  it('agree with the Kassam-Trefethen contour mean for |x| from 1e-10 to 10 in all directions', () => {
    // tolerance 1e-13 relative: the reference is accurate to ~1e-15, the evaluated values to a
    // few ulp; 1e-13 leaves room for the rounding of the closed form at |x| = 10
    const out = new Float64Array(6);
    let worst = 0;
    for (let e = -10; e <= 1; e += 0.25) {
      const r = 10 ** e;
      for (let k = 0; k < 12; k++) {
        const ang = (2 * Math.PI * k) / 12 + 0.1;
        const x: C = [r * Math.cos(ang), r * Math.sin(ang)];
        const [p1, p2] = phiContour(x);
        phiFunctions(x[0], x[1], out);
        worst = Math.max(
          worst,
          cabs(sub([out[2], out[3]], p1)) / cabs(p1),
          cabs(sub([out[4], out[5]], p2)) / cabs(p2),
        );
        const ex = cexp(x);
        expect(cabs(sub([out[0], out[1]], ex))).toBeLessThanOrEqual(1e-15 * cabs(ex));
      }
    }
    expect(worst).toBeLessThan(1e-13);
  });

  it('series and closed form agree where both are accurate (0.1 <= |x| <= 2) and meet at the switch radius', () => {
    // the closed form loses ~log10(1/|x|) digits in phi2 and the series is fine up to |x| ~ 2,
    // so in this band both hold ~1e-15; 1e-14 relative is the allowance
    const a = new Float64Array(4),
      b = new Float64Array(4),
      c = new Float64Array(6);
    for (const r of [0.1, 0.3, PHI_SERIES_RADIUS * (1 - 1e-12), PHI_SERIES_RADIUS, 1, 2]) {
      for (let k = 0; k < 8; k++) {
        const ang = (2 * Math.PI * k) / 8 + 0.2;
        const xr = r * Math.cos(ang),
          xi = r * Math.sin(ang);
        phiSeries(xr, xi, a);
        phiClosed(xr, xi, b);
        phiFunctions(xr, xi, c);
        for (let q = 0; q < 2; q++) {
          const sa: C = [a[2 * q], a[2 * q + 1]],
            sb: C = [b[2 * q], b[2 * q + 1]],
            sc: C = [c[2 + 2 * q], c[3 + 2 * q]];
          expect(cabs(sub(sa, sb)) / cabs(sb)).toBeLessThan(1e-14);
          expect(cabs(sub(sc, sb)) / cabs(sb)).toBeLessThan(1e-14);
        }
      }
    }
  });

  it('closed-form phi2 does lose digits near 0, which is why the series is used there', () => {
    // documents the cancellation in (phi1 - 1)/x (Kassam & Trefethen 2005, who motivate the contour mean by it)
    const b = new Float64Array(4),
      s = new Float64Array(4);
    phiClosed(1e-9, 0, b);
    phiSeries(1e-9, 0, s);
    expect(Math.abs(b[2] - s[2])).toBeGreaterThan(1e-10);
    expect(Math.abs(s[2] - (0.5 + 1e-9 / 6))).toBeLessThan(1e-16);
  });
});

describe("exponential steps for z' = lambda z + u(t)", () => {
  it('ETD1 is exact for constant input: matches (z0 + u/lambda) e^{lambda t} - u/lambda over 50 steps', () => {
    // closed form of the linear ODE with constant forcing (variation of constants); the
    // check value is computed from it directly, not from phi1. 1e-13 relative for 50 steps of rounding
    const lambda: C = [-3, 40];
    const u: C = [0.7, -1.1];
    const h = 0.01;
    const out = Float64Array.of(0.2, 0.5);
    const coef = new ExpStepCoefficients(lambda[0], lambda[1], h);
    const out2 = Float64Array.of(0.2, 0.5);
    for (let n = 0; n < 50; n++) {
      expStepConstant(out[0], out[1], lambda[0], lambda[1], h, u[0], u[1], out);
      coef.stepConstant(out2[0], out2[1], u[0], u[1], out2);
    }
    const ul = div(u, lambda);
    const exact = sub(mul(add([0.2, 0.5], ul), cexp([lambda[0] * 0.5, lambda[1] * 0.5])), ul);
    expect(cabs(sub([out[0], out[1]], exact)) / cabs(exact)).toBeLessThan(1e-13);
    expect(cabs(sub([out2[0], out2[1]], exact)) / cabs(exact)).toBeLessThan(1e-13);
  });

  it('the first-order-hold step is exact for linear input u = a + b t', () => {
    // particular solution zp = -(a + b t)/lambda - b/lambda^2 plus the homogeneous one; covers
    // a mildly stiff and an oscillatory lambda and |lambda h| below the series radius
    const a: C = [1, 0.5],
      b: C = [-20, 7];
    for (const lambda of [
      [-50, 300],
      [-1e-3, 2],
      [0.5, -1],
    ] as C[]) {
      const h = 0.01;
      const z = Float64Array.of(1, -1);
      const coef = new ExpStepCoefficients(lambda[0], lambda[1], h);
      const z2 = Float64Array.of(1, -1);
      for (let n = 0; n < 100; n++) {
        const t0 = n * h,
          t1 = (n + 1) * h;
        const u0r = a[0] + b[0] * t0,
          u0i = a[1] + b[1] * t0,
          u1r = a[0] + b[0] * t1,
          u1i = a[1] + b[1] * t1;
        expStepLinear(z[0], z[1], lambda[0], lambda[1], h, u0r, u0i, u1r, u1i, z);
        coef.stepLinear(z2[0], z2[1], u0r, u0i, u1r, u1i, z2);
      }
      const exact = exactLinearInput(lambda, [1, -1], a, b, 1);
      expect(cabs(sub([z[0], z[1]], exact)) / cabs(exact)).toBeLessThan(1e-12); // 100 steps of rounding
      expect(cabs(sub([z2[0], z2[1]], exact)) / cabs(exact)).toBeLessThan(1e-12);
    }
  });

  it('with smooth non-linear input the first-order-hold step converges with order 2', () => {
    // interpolating u linearly over each step is exponential quadrature of order 2
    // (Hochbruck & Ostermann 2010, section 2); u = e^{i w t}, exact z = (z0 - c) e^{lambda t} + c e^{i w t},
    // c = 1/(i w - lambda). Halving h 4 times: observed order within 0.2 of 2
    const lambda: C = [-5, 20],
      w = 13;
    const c = div([1, 0], sub([0, w], lambda));
    const T = 1;
    const exact = add(
      mul(sub([0, 0], c), cexp([lambda[0] * T, lambda[1] * T])),
      mul(c, [Math.cos(w * T), Math.sin(w * T)]),
    );
    const errs: number[] = [];
    for (let l = 0; l <= 4; l++) {
      const n = 20 * 2 ** l,
        h = T / n;
      const coef = new ExpStepCoefficients(lambda[0], lambda[1], h);
      const z = new Float64Array(2);
      for (let k = 0; k < n; k++) {
        coef.stepLinear(
          z[0],
          z[1],
          Math.cos(w * k * h),
          Math.sin(w * k * h),
          Math.cos(w * (k + 1) * h),
          Math.sin(w * (k + 1) * h),
          z,
        );
      }
      errs.push(cabs(sub([z[0], z[1]], exact)));
    }
    for (let l = 0; l < 4; l++) expect(Math.abs(Math.log2(errs[l] / errs[l + 1]) - 2)).toBeLessThan(0.2);
  });

  it('stiff lambda = -1e6 + 1e3 i with h = 1e-3: the exponential step stays at the exact steady state, RK4 explodes', () => {
    // |R_RK4(lambda h)| ~ (1e3)^4/24 ~ 4e10 per step, far outside RK4's stability region
    // (Hairer & Wanner, Solving ODEs II, section IV.2); the exponential step has
    // |e^{lambda h}| = e^{-1000} and is exact for constant input
    const lambda: C = [-1e6, 1e3],
      u: C = [2, 1],
      h = 1e-3;
    const zss = sub([0, 0], div(u, lambda)); // steady state -u/lambda
    const coef = new ExpStepCoefficients(lambda[0], lambda[1], h);
    const z = Float64Array.of(1, 0);
    for (let n = 0; n < 100; n++) coef.stepConstant(z[0], z[1], u[0], u[1], z);
    expect(cabs(sub([z[0], z[1]], zss)) / cabs(zss)).toBeLessThan(1e-14);

    const rhs: OdeRhs = (_t, y, dy) => {
      dy[0] = lambda[0] * y[0] - lambda[1] * y[1] + u[0];
      dy[1] = lambda[0] * y[1] + lambda[1] * y[0] + u[1];
    };
    const rk = createRk4(2);
    const y = Float64Array.of(1, 0);
    for (let n = 0; n < 100; n++) rk.step(rhs, n * h, y, h, y);
    expect(!Number.isFinite(y[0]) || Math.hypot(y[0], y[1]) > 1e100).toBe(true);
  });
});
