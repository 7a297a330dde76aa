/**
 * Embedded Dormand-Prince 5(4) Runge-Kutta method with adaptive step size, FSAL and the
 * 4th-order continuous extension (dense output).
 *
 * References: J. R. Dormand, P. J. Prince, "A family of embedded Runge-Kutta formulae",
 * J. Comput. Appl. Math. 6, 19 (1980); E. Hairer, S. P. Norsett, G. Wanner, Solving
 * Ordinary Differential Equations I, 2nd ed., Springer 1993: section II.4 (error norm,
 * step-size control with safety factor and bounded factors, starting step size),
 * section II.5 Table 5.2 (coefficients), section II.6 (dense output of DOPRI5, the
 * coefficients d_i of the continuous extension as in the authors' DOPRI5 code).
 */

import type { OdeRhs } from './rk4';

/** Engine settings of dopri5; all optional. */
export interface Dopri5Options {
  /** relative tolerance (dimensionless), default 1e-6 */
  rtol?: number;
  /** absolute tolerance, in the unit of y; one number or one per component; default 1e-9 */
  atol?: number | Float64Array;
  /** first trial step (time unit of t); default: the starting-step algorithm of HNW II.4 */
  h0?: number;
  /** largest step magnitude, default |t1 - t0| */
  hMax?: number;
  /** smallest allowed step magnitude before giving up, default 0 (only the rounding limit) */
  hMin?: number;
  /** maximum number of attempted steps, default 100000 */
  maxSteps?: number;
  /** safety factor of the step-size controller (dimensionless), default 0.9 */
  safety?: number;
  /** smallest factor h_new / h, default 0.2 */
  minFactor?: number;
  /** largest factor h_new / h, default 10 */
  maxFactor?: number;
  /**
   * Called after each accepted step with a view giving the step's endpoints and its dense
   * output. The view object is reused between calls: copy what you need to keep.
   */
  onStep?: (step: Dopri5Step) => void;
}

/** Why the integration stopped. */
export type Dopri5Status = 'ok' | 'max-steps' | 'step-too-small';

/** Outcome of dopri5: the state reached and how it got there. A failure is data. */
export interface Dopri5Result {
  /** time reached (t1 when status is 'ok') */
  t: number;
  /** state at t (a fresh array owned by the caller) */
  y: Float64Array;
  status: Dopri5Status;
  /** human-readable explanation; "" when status is 'ok' */
  message: string;
  /** attempted steps (accepted + rejected) */
  nSteps: number;
  nAccepted: number;
  nRejected: number;
  /** evaluations of f */
  nFev: number;
}

/** Read-only view of one accepted step, handed to Dopri5Options.onStep. */
export interface Dopri5Step {
  /** start of the step */
  readonly tPrev: number;
  /** end of the step */
  readonly t: number;
  /** state at tPrev (do not modify; overwritten by the next step) */
  readonly yPrev: Float64Array;
  /** state at t (do not modify; overwritten by the next step) */
  readonly y: Float64Array;
  /**
   * Writes the 4th-order dense-output approximation of y(tq) into out (length n) and returns
   * out. Meant for tq in [tPrev, t]; outside it the polynomial is extrapolated.
   */
  denseAt(tq: number, out: Float64Array): Float64Array;
}

// Butcher tableau, HNW I Table 5.2 (Dormand & Prince 1980)
const C2 = 1 / 5,
  C3 = 3 / 10,
  C4 = 4 / 5,
  C5 = 8 / 9;
const A21 = 1 / 5;
const A31 = 3 / 40,
  A32 = 9 / 40;
const A41 = 44 / 45,
  A42 = -56 / 15,
  A43 = 32 / 9;
const A51 = 19372 / 6561,
  A52 = -25360 / 2187,
  A53 = 64448 / 6561,
  A54 = -212 / 729;
const A61 = 9017 / 3168,
  A62 = -355 / 33,
  A63 = 46732 / 5247,
  A64 = 49 / 176,
  A65 = -5103 / 18656;
// 5th-order weights b_i, equal to row 7 of A (FSAL)
const A71 = 35 / 384,
  A73 = 500 / 1113,
  A74 = 125 / 192,
  A75 = -2187 / 6784,
  A76 = 11 / 84;
// error weights e_i = b_i - bhat_i (bhat: the embedded 4th-order weights)
const E1 = 71 / 57600,
  E3 = -71 / 16695,
  E4 = 71 / 1920,
  E5 = -17253 / 339200,
  E6 = 22 / 525,
  E7 = -1 / 40;
// continuous extension (HNW I section II.6; DOPRI5 code by Hairer & Wanner)
const D1 = -12715105075 / 11282082432,
  D3 = 87487479700 / 32700410799,
  D4 = -10690763975 / 1880347072;
const D5 = 701980252875 / 199316789632,
  D6 = -1453857185 / 822651844,
  D7 = 69997945 / 29380423;

/** Dense output of the last accepted step; reused, so onStep allocates nothing. */
class DenseStep implements Dopri5Step {
  tPrev = 0;
  t = 0;
  h = 0;
  readonly yPrev: Float64Array;
  readonly y: Float64Array;
  // y(tPrev + theta h) = r1 + theta (r2 + (1 - theta) (r3 + theta (r4 + (1 - theta) r5)))
  readonly r1: Float64Array;
  readonly r2: Float64Array;
  readonly r3: Float64Array;
  readonly r4: Float64Array;
  readonly r5: Float64Array;
  constructor(readonly n: number) {
    this.yPrev = new Float64Array(n);
    this.y = new Float64Array(n);
    this.r1 = new Float64Array(n);
    this.r2 = new Float64Array(n);
    this.r3 = new Float64Array(n);
    this.r4 = new Float64Array(n);
    this.r5 = new Float64Array(n);
  }
  denseAt(tq: number, out: Float64Array): Float64Array {
    const theta = (tq - this.tPrev) / this.h;
    const theta1 = 1 - theta;
    const { r1, r2, r3, r4, r5, n } = this;
    for (let i = 0; i < n; i++) {
      out[i] = r1[i] + theta * (r2[i] + theta1 * (r3[i] + theta * (r4[i] + theta1 * r5[i])));
    }
    return out;
  }
}

function positive(name: string, v: number): number {
  if (!(v > 0) || !Number.isFinite(v))
    throw new RangeError(`dopri5 option ${name} must be a positive finite number, got ${v}`);
  return v;
}

/**
 * Integrates y' = f(t, y) from t0 to t1 (t1 < t0 integrates backwards) with the adaptive
 * Dormand-Prince 5(4) pair and returns the state reached with status and counters.
 *
 * Error control (HNW I section II.4, "Automatic step size control"): err = sqrt(1/n sum_i (e_i / sc_i)^2) with
 * sc_i = atol_i + rtol max(|y0_i|, |y1_i|) and e_i = h sum_j E_j k_j the difference of the
 * 5th and 4th order solutions; a step is accepted when err <= 1. The next step is
 * h_new = h min(maxFactor, max(minFactor, safety err^(-1/5))) (same section), with
 * no growth on the step right after a rejection. The solution is advanced with the 5th
 * order weights (local extrapolation) and the last stage is reused as the first of the
 * next step (FSAL), so an accepted step costs 6 evaluations of f.
 *
 * Failures are returned, not thrown: 'max-steps' when maxSteps attempts did not reach t1,
 * 'step-too-small' when the step falls below hMin or the rounding limit of t (this also
 * catches a right-hand side that returns NaN or Infinity). Bad options throw RangeError.
 *
 * @param f right-hand side, writes f(t, y) into dy
 * @param t0 start time (any time unit, used consistently)
 * @param y0 initial state (not modified)
 * @param t1 end time
 */
export function dopri5(
  f: OdeRhs,
  t0: number,
  y0: Float64Array,
  t1: number,
  options: Dopri5Options = {},
): Dopri5Result {
  const n = y0.length;
  if (n < 1) throw new RangeError('dopri5 needs a state of dimension >= 1');
  if (!Number.isFinite(t0) || !Number.isFinite(t1))
    throw new RangeError(`dopri5 needs finite t0, t1, got ${t0}, ${t1}`);
  const rtol = options.rtol ?? 1e-6;
  const atolOpt = options.atol ?? 1e-9;
  if (!(rtol >= 0)) throw new RangeError(`dopri5 option rtol must be >= 0, got ${rtol}`);
  const atol = new Float64Array(n);
  if (typeof atolOpt === 'number') {
    if (!(atolOpt >= 0)) throw new RangeError(`dopri5 option atol must be >= 0, got ${atolOpt}`);
    atol.fill(atolOpt);
  } else {
    if (atolOpt.length !== n)
      throw new RangeError(`dopri5 option atol has length ${atolOpt.length}, expected ${n}`);
    atol.set(atolOpt);
  }
  for (let i = 0; i < n; i++) {
    if (!(atol[i] > 0) && !(rtol > 0))
      throw new RangeError('dopri5 needs rtol > 0 or atol > 0 for every component');
  }
  const span = Math.abs(t1 - t0);
  const hMax = options.hMax === undefined ? span : positive('hMax', options.hMax);
  const hMin = options.hMin ?? 0;
  if (!(hMin >= 0)) throw new RangeError(`dopri5 option hMin must be >= 0, got ${hMin}`);
  const maxSteps = options.maxSteps ?? 100000;
  if (!Number.isInteger(maxSteps) || maxSteps < 1)
    throw new RangeError(`dopri5 option maxSteps must be a positive integer, got ${maxSteps}`);
  const safety = positive('safety', options.safety ?? 0.9);
  const minFactor = positive('minFactor', options.minFactor ?? 0.2);
  const maxFactor = positive('maxFactor', options.maxFactor ?? 10);
  if (minFactor > 1 || maxFactor < 1)
    throw new RangeError(`dopri5 needs minFactor <= 1 <= maxFactor, got ${minFactor}, ${maxFactor}`);
  const onStep = options.onStep;

  const y = new Float64Array(y0);
  const result: Dopri5Result = {
    t: t0,
    y,
    status: 'ok',
    message: '',
    nSteps: 0,
    nAccepted: 0,
    nRejected: 0,
    nFev: 0,
  };
  if (span === 0) return result;
  const dir = t1 > t0 ? 1 : -1;

  const k1 = new Float64Array(n),
    k2 = new Float64Array(n),
    k3 = new Float64Array(n);
  const k4 = new Float64Array(n),
    k5 = new Float64Array(n),
    k6 = new Float64Array(n);
  const k7 = new Float64Array(n),
    ytmp = new Float64Array(n),
    ynew = new Float64Array(n);
  const dense = onStep ? new DenseStep(n) : null;

  f(t0, y, k1);
  result.nFev++;

  let h: number;
  if (options.h0 !== undefined) {
    h = Math.min(positive('h0', options.h0), hMax);
  } else {
    // starting step size, HNW I section II.4 ("Starting step size", steps a-f), order 5
    let d0 = 0,
      d1 = 0;
    for (let i = 0; i < n; i++) {
      const sc = atol[i] + rtol * Math.abs(y[i]);
      d0 += (y[i] / sc) ** 2;
      d1 += (k1[i] / sc) ** 2;
    }
    d0 = Math.sqrt(d0 / n);
    d1 = Math.sqrt(d1 / n);
    let hTry = d0 < 1e-5 || d1 < 1e-5 ? 1e-6 : 0.01 * (d0 / d1);
    hTry = Math.min(hTry, hMax);
    for (let i = 0; i < n; i++) ytmp[i] = y[i] + dir * hTry * k1[i];
    f(t0 + dir * hTry, ytmp, k2);
    result.nFev++;
    let d2 = 0;
    for (let i = 0; i < n; i++) {
      const sc = atol[i] + rtol * Math.abs(y[i]);
      d2 += ((k2[i] - k1[i]) / sc) ** 2;
    }
    d2 = Math.sqrt(d2 / n) / hTry;
    const dMax = Math.max(d1, d2);
    const h1 = dMax <= 1e-15 ? Math.max(1e-6, hTry * 1e-3) : Math.pow(0.01 / dMax, 1 / 5);
    h = Math.min(100 * hTry, h1, hMax);
    if (!Number.isFinite(h) || !(h > 0)) h = Math.min(1e-6, hMax);
  }

  let t = t0;
  let rejectedLast = false;
  for (;;) {
    if (result.nSteps >= maxSteps) {
      result.status = 'max-steps';
      result.message = `dopri5 stopped after ${maxSteps} attempted steps at t = ${t} before reaching t1 = ${t1}`;
      break;
    }
    const roundingLimit = 10 * Number.EPSILON * Math.max(Math.abs(t), Math.abs(t1));
    if (h < hMin || h <= roundingLimit) {
      result.status = 'step-too-small';
      result.message =
        `dopri5 step size ${h} at t = ${t} fell below ${Math.max(hMin, roundingLimit)}` +
        ' (stiff problem, singularity, or a non-finite right-hand side)';
      break;
    }
    let last = false;
    if ((t + dir * h - t1) * dir >= 0) {
      h = Math.abs(t1 - t);
      last = true;
    }
    const hs = dir * h;

    for (let i = 0; i < n; i++) ytmp[i] = y[i] + hs * A21 * k1[i];
    f(t + C2 * hs, ytmp, k2);
    for (let i = 0; i < n; i++) ytmp[i] = y[i] + hs * (A31 * k1[i] + A32 * k2[i]);
    f(t + C3 * hs, ytmp, k3);
    for (let i = 0; i < n; i++) ytmp[i] = y[i] + hs * (A41 * k1[i] + A42 * k2[i] + A43 * k3[i]);
    f(t + C4 * hs, ytmp, k4);
    for (let i = 0; i < n; i++) ytmp[i] = y[i] + hs * (A51 * k1[i] + A52 * k2[i] + A53 * k3[i] + A54 * k4[i]);
    f(t + C5 * hs, ytmp, k5);
    for (let i = 0; i < n; i++) {
      ytmp[i] = y[i] + hs * (A61 * k1[i] + A62 * k2[i] + A63 * k3[i] + A64 * k4[i] + A65 * k5[i]);
    }
    const tNew = last ? t1 : t + hs;
    f(t + hs, ytmp, k6);
    for (let i = 0; i < n; i++) {
      ynew[i] = y[i] + hs * (A71 * k1[i] + A73 * k3[i] + A74 * k4[i] + A75 * k5[i] + A76 * k6[i]);
    }
    f(t + hs, ynew, k7);
    result.nFev += 6;
    result.nSteps++;

    let err = 0;
    for (let i = 0; i < n; i++) {
      const e = hs * (E1 * k1[i] + E3 * k3[i] + E4 * k4[i] + E5 * k5[i] + E6 * k6[i] + E7 * k7[i]);
      const sc = atol[i] + rtol * Math.max(Math.abs(y[i]), Math.abs(ynew[i]));
      err += (e / sc) ** 2;
    }
    err = Math.sqrt(err / n);

    if (err <= 1) {
      result.nAccepted++;
      if (dense) {
        dense.tPrev = t;
        dense.t = tNew;
        dense.h = hs;
        for (let i = 0; i < n; i++) {
          const dy = ynew[i] - y[i];
          const bspl = hs * k1[i] - dy;
          dense.yPrev[i] = y[i];
          dense.y[i] = ynew[i];
          dense.r1[i] = y[i];
          dense.r2[i] = dy;
          dense.r3[i] = bspl;
          dense.r4[i] = dy - hs * k7[i] - bspl;
          dense.r5[i] = hs * (D1 * k1[i] + D3 * k3[i] + D4 * k4[i] + D5 * k5[i] + D6 * k6[i] + D7 * k7[i]);
        }
      }
      y.set(ynew);
      k1.set(k7);
      t = tNew;
      result.t = t;
      if (dense && onStep) onStep(dense);
      if (last) break;
      let fac = err === 0 ? maxFactor : safety * Math.pow(err, -0.2);
      fac = Math.min(rejectedLast ? 1 : maxFactor, Math.max(minFactor, fac));
      h = Math.min(h * fac, hMax);
      rejectedLast = false;
    } else {
      result.nRejected++;
      // NaN error (non-finite f) shrinks by minFactor until the step-too-small exit
      const fac = Number.isFinite(err)
        ? Math.max(minFactor, Math.min(1, safety * Math.pow(err, -0.2)))
        : minFactor;
      h *= fac;
      rejectedLast = true;
    }
  }
  return result;
}
