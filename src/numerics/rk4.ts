/**
 * Fixed-step explicit Runge-Kutta steppers (Euler, Heun, classical RK4) for y' = f(t, y)
 * over Float64Array, each with a workspace allocated once so that a step allocates nothing.
 *
 * Reference: E. Hairer, S. P. Norsett, G. Wanner, Solving Ordinary Differential Equations I,
 * 2nd ed., Springer 1993, section II.1 (Table 1.2: Euler, Heun's second-order method
 * "RK2", and the classical fourth-order method "RK4").
 */

/**
 * Right-hand side of y' = f(t, y): writes f(t, y) into dy (length n). It must not keep
 * references to y or dy (the stepper reuses them) and must not write into y.
 */
export type OdeRhs = (t: number, y: Float64Array, dy: Float64Array) => void;

/** A fixed-step one-step method with its own preallocated workspace. */
export interface FixedStepper {
  /** dimension of the system */
  readonly n: number;
  /** classical order of convergence p (global error O(h^p)) */
  readonly order: number;
  /** short name, for result provenance ("euler", "heun", "rk4") */
  readonly name: string;
  /**
   * Advances y(t) by one step of size h (same time unit as t) and writes y(t + h) into out.
   * out may be the same array as y (the update is written element by element only after
   * every stage has been evaluated). f is called order-many times (1, 2 or 4).
   */
  step(f: OdeRhs, t: number, y: Float64Array, h: number, out: Float64Array): void;
}

function checkDimension(n: number): void {
  if (!Number.isInteger(n) || n < 1) {
    throw new RangeError(`stepper dimension must be a positive integer, got ${n}`);
  }
}

function checkLengths(n: number, y: Float64Array, out: Float64Array): void {
  if (y.length < n || out.length < n) {
    throw new RangeError(`stepper of dimension ${n} given arrays of length ${y.length} and ${out.length}`);
  }
}

class EulerStepper implements FixedStepper {
  readonly order = 1;
  readonly name = 'euler';
  private readonly k1: Float64Array;
  constructor(readonly n: number) {
    this.k1 = new Float64Array(n);
  }
  step(f: OdeRhs, t: number, y: Float64Array, h: number, out: Float64Array): void {
    const n = this.n;
    checkLengths(n, y, out);
    const k1 = this.k1;
    f(t, y, k1);
    for (let i = 0; i < n; i++) out[i] = y[i] + h * k1[i];
  }
}

class HeunStepper implements FixedStepper {
  readonly order = 2;
  readonly name = 'heun';
  private readonly k1: Float64Array;
  private readonly k2: Float64Array;
  private readonly tmp: Float64Array;
  constructor(readonly n: number) {
    this.k1 = new Float64Array(n);
    this.k2 = new Float64Array(n);
    this.tmp = new Float64Array(n);
  }
  step(f: OdeRhs, t: number, y: Float64Array, h: number, out: Float64Array): void {
    const n = this.n;
    checkLengths(n, y, out);
    const { k1, k2, tmp } = this;
    f(t, y, k1);
    for (let i = 0; i < n; i++) tmp[i] = y[i] + h * k1[i];
    f(t + h, tmp, k2);
    const h2 = 0.5 * h;
    for (let i = 0; i < n; i++) out[i] = y[i] + h2 * (k1[i] + k2[i]);
  }
}

class Rk4Stepper implements FixedStepper {
  readonly order = 4;
  readonly name = 'rk4';
  private readonly k1: Float64Array;
  private readonly k2: Float64Array;
  private readonly k3: Float64Array;
  private readonly k4: Float64Array;
  private readonly tmp: Float64Array;
  constructor(readonly n: number) {
    this.k1 = new Float64Array(n);
    this.k2 = new Float64Array(n);
    this.k3 = new Float64Array(n);
    this.k4 = new Float64Array(n);
    this.tmp = new Float64Array(n);
  }
  step(f: OdeRhs, t: number, y: Float64Array, h: number, out: Float64Array): void {
    const n = this.n;
    checkLengths(n, y, out);
    const { k1, k2, k3, k4, tmp } = this;
    const h2 = 0.5 * h;
    f(t, y, k1);
    for (let i = 0; i < n; i++) tmp[i] = y[i] + h2 * k1[i];
    f(t + h2, tmp, k2);
    for (let i = 0; i < n; i++) tmp[i] = y[i] + h2 * k2[i];
    f(t + h2, tmp, k3);
    for (let i = 0; i < n; i++) tmp[i] = y[i] + h * k3[i];
    f(t + h, tmp, k4);
    const h6 = h / 6;
    for (let i = 0; i < n; i++) out[i] = y[i] + h6 * (k1[i] + 2 * (k2[i] + k3[i]) + k4[i]);
  }
}

/**
 * Classical fourth-order Runge-Kutta stepper for a system of dimension n:
 * y1 = y0 + h/6 (k1 + 2 k2 + 2 k3 + k4), k1 = f(t, y0), k2 = f(t + h/2, y0 + h/2 k1),
 * k3 = f(t + h/2, y0 + h/2 k2), k4 = f(t + h, y0 + h k3) (Hairer-Norsett-Wanner I, Table 1.2).
 * Global error O(h^4); 4 evaluations of f per step; no allocation per step.
 */
export function createRk4(n: number): FixedStepper {
  checkDimension(n);
  return new Rk4Stepper(n);
}

/**
 * Explicit (forward) Euler stepper: y1 = y0 + h f(t, y0). Global error O(h); kept for
 * convergence comparisons, not for production runs.
 */
export function createEuler(n: number): FixedStepper {
  checkDimension(n);
  return new EulerStepper(n);
}

/**
 * Heun's second-order method (explicit trapezoidal rule, "RK2"):
 * y1 = y0 + h/2 (f(t, y0) + f(t + h, y0 + h f(t, y0))). Global error O(h^2).
 */
export function createHeun(n: number): FixedStepper {
  checkDimension(n);
  return new HeunStepper(n);
}

/**
 * Integrates y' = f(t, y) from t0 to t1 with nSteps equal steps of the given stepper and
 * writes y(t1) into out (which may be y0's array only if the caller no longer needs y0).
 * Returns out. h = (t1 - t0) / nSteps; t1 < t0 integrates backwards.
 */
export function integrateFixed(
  stepper: FixedStepper,
  f: OdeRhs,
  t0: number,
  y0: Float64Array,
  t1: number,
  nSteps: number,
  out: Float64Array,
): Float64Array {
  if (!Number.isInteger(nSteps) || nSteps < 1) {
    throw new RangeError(`integrateFixed needs a positive integer number of steps, got ${nSteps}`);
  }
  const h = (t1 - t0) / nSteps;
  if (out !== y0) out.set(y0.subarray(0, stepper.n));
  for (let k = 0; k < nSteps; k++) {
    // t from the step index, not by accumulation, so rounding does not drift
    stepper.step(f, t0 + k * h, out, h, out);
  }
  return out;
}
