/**
 * Exponential (exponential-time-differencing) steps for the scalar complex linear ODE
 * z' = lambda z + u(t), exact when u is linear over the step, stable for any step when
 * Re(lambda) <= 0 however stiff. Complex numbers are passed as separate real and imaginary
 * numbers and results are written into out[0] (real) and out[1] (imaginary), so nothing is
 * allocated in the hot path.
 *
 * With x = lambda h and u(t0 + s) = u0 + (u1 - u0) s / h for s in [0, h], variation of
 * constants gives exactly
 *   z(t0 + h) = e^x z0 + h phi1(x) u0 + h phi2(x) (u1 - u0),
 *   phi1(x) = (e^x - 1) / x,  phi2(x) = (e^x - 1 - x) / x^2,
 * (Hochbruck & Ostermann, "Exponential integrators", Acta Numerica 19, 209 (2010),
 * section 2, exponential quadrature and the phi functions; Cox & Matthews, "Exponential
 * time differencing for stiff systems", J. Comput. Phys. 176, 430 (2002), section 2).
 * Holding u = u0 gives ETD1 (exponential Euler); taking u1 - u0 from the previous sample
 * (u_n - u_{n-1}) gives Cox & Matthews' ETD2.
 */

/** |x| below which phi2 is summed from its Taylor series instead of the closed form. */
export const PHI_SERIES_RADIUS = 0.5;

/**
 * Complex e^x - 1 without cancellation for small |x|, written into out[0..1]:
 * Re = expm1(a) cos b - 2 sin^2(b/2), Im = e^a sin b for x = a + i b.
 */
export function complexExpm1(a: number, b: number, out: Float64Array): Float64Array {
  const s = Math.sin(0.5 * b);
  out[0] = Math.expm1(a) * Math.cos(b) - 2 * s * s;
  out[1] = Math.exp(a) * Math.sin(b);
  return out;
}

/**
 * phi1(x) and phi2(x) for complex x = a + i b from their Taylor series
 * phi1 = sum_k x^k / (k+1)!, phi2 = sum_k x^k / (k+2)! (Hochbruck & Ostermann 2010, section 2),
 * summed until the terms no longer change the result (at most 200 terms). Writes
 * out[0..3] = [Re phi1, Im phi1, Re phi2, Im phi2]. Accurate for |x| up to a few; for large
 * negative real part the alternating series loses digits, so phiFunctions uses it only for
 * |x| < PHI_SERIES_RADIUS. Exported for testing and for callers that want the series.
 */
export function phiSeries(a: number, b: number, out: Float64Array): Float64Array {
  // term_k = x^k / (k+2)!, phi2 = sum term_k, phi1 = 1 + x phi2 (recurrence phi1 = 1 + x phi2)
  let tr = 0.5,
    ti = 0;
  let p2r = 0.5,
    p2i = 0;
  for (let k = 1; k < 200; k++) {
    const inv = 1 / (k + 2);
    const nr = (tr * a - ti * b) * inv;
    const ni = (tr * b + ti * a) * inv;
    tr = nr;
    ti = ni;
    const sr = p2r + tr,
      si = p2i + ti;
    if (sr === p2r && si === p2i) break;
    p2r = sr;
    p2i = si;
  }
  out[0] = 1 + (a * p2r - b * p2i);
  out[1] = a * p2i + b * p2r;
  out[2] = p2r;
  out[3] = p2i;
  return out;
}

/**
 * phi1 and phi2 from the closed forms phi1 = (e^x - 1)/x and phi2 = (phi1 - 1)/x, with
 * e^x - 1 from complexExpm1. phi1 is accurate for all x != 0; phi2 loses about
 * log10(1/|x|) digits as |x| -> 0 (cancellation in phi1 - 1), hence the series there.
 * Writes out[at..at+3] = [Re phi1, Im phi1, Re phi2, Im phi2] (at = 0 unless given, so
 * phiFunctions can place them behind e^x). x = 0 gives NaN.
 */
export function phiClosed(a: number, b: number, out: Float64Array, at = 0): Float64Array {
  const d = a * a + b * b;
  const sb = Math.sin(0.5 * b);
  const mr = Math.expm1(a) * Math.cos(b) - 2 * sb * sb;
  const mi = Math.exp(a) * Math.sin(b);
  // (m / x) = m conj(x) / |x|^2
  const p1r = (mr * a + mi * b) / d;
  const p1i = (mi * a - mr * b) / d;
  const qr = p1r - 1;
  out[at] = p1r;
  out[at + 1] = p1i;
  out[at + 2] = (qr * a + p1i * b) / d;
  out[at + 3] = (p1i * a - qr * b) / d;
  return out;
}

/**
 * e^x, phi1(x) and phi2(x) for complex x = a + i b with relative error below 1e-13 for
 * every |x| <= 10 (tested from 1e-10 up; series below PHI_SERIES_RADIUS, closed form
 * above; e^x from Math.exp/cos/sin). Writes out[0..5] = [Re e^x, Im e^x, Re phi1, Im phi1, Re phi2,
 * Im phi2] and returns out. phi(0) = (1, 1, 1/2). Large positive Re x overflows to
 * Infinity as the true solution does.
 */
export function phiFunctions(a: number, b: number, out: Float64Array): Float64Array {
  const ea = Math.exp(a);
  const cb = Math.cos(b),
    sbFull = Math.sin(b);
  out[0] = ea * cb;
  out[1] = ea * sbFull;
  if (a * a + b * b < PHI_SERIES_RADIUS * PHI_SERIES_RADIUS) {
    let tr = 0.5,
      ti = 0;
    let p2r = 0.5,
      p2i = 0;
    // |x| < 0.5: 0.5^k/(k+2)! < 1e-18 by k = 14
    for (let k = 1; k <= 16; k++) {
      const inv = 1 / (k + 2);
      const nr = (tr * a - ti * b) * inv;
      ti = (tr * b + ti * a) * inv;
      tr = nr;
      p2r += tr;
      p2i += ti;
    }
    out[2] = 1 + (a * p2r - b * p2i);
    out[3] = a * p2i + b * p2r;
    out[4] = p2r;
    out[5] = p2i;
  } else {
    phiClosed(a, b, out, 2);
  }
  return out;
}

/**
 * One exact step of z' = lambda z + u(t) with u linear over the step (first-order-hold
 * input), lambda = lr + i li (1/time unit), step h (time unit):
 *   z1 = e^{lambda h} z0 + h phi1(lambda h) u0 + h phi2(lambda h) (u1 - u0).
 * u0 = u(t0), u1 = u(t0 + h). Writes z1 into out[0..1]; returns out. Computes the phi
 * functions each call; for a fixed lambda h prefer ExpStepCoefficients.
 * Reference: Hochbruck & Ostermann 2010, section 2; Cox & Matthews 2002, section 2 (ETD2).
 */
export function expStepLinear(
  zr: number,
  zi: number,
  lr: number,
  li: number,
  h: number,
  u0r: number,
  u0i: number,
  u1r: number,
  u1i: number,
  out: Float64Array,
): Float64Array {
  // phiFunctions inlined into locals: no scratch array, no module state
  const a = lr * h,
    b = li * h;
  const ea = Math.exp(a),
    cb = Math.cos(b),
    sb = Math.sin(b);
  const er = ea * cb,
    ei = ea * sb;
  let p1r: number, p1i: number, p2r: number, p2i: number;
  const d = a * a + b * b;
  if (d < PHI_SERIES_RADIUS * PHI_SERIES_RADIUS) {
    let tr = 0.5,
      ti = 0;
    p2r = 0.5;
    p2i = 0;
    for (let k = 1; k <= 16; k++) {
      const inv = 1 / (k + 2);
      const nr = (tr * a - ti * b) * inv;
      ti = (tr * b + ti * a) * inv;
      tr = nr;
      p2r += tr;
      p2i += ti;
    }
    p1r = 1 + (a * p2r - b * p2i);
    p1i = a * p2i + b * p2r;
  } else {
    const s2 = Math.sin(0.5 * b);
    const mr = Math.expm1(a) * cb - 2 * s2 * s2;
    const mi = ei;
    p1r = (mr * a + mi * b) / d;
    p1i = (mi * a - mr * b) / d;
    const qr = p1r - 1;
    p2r = (qr * a + p1i * b) / d;
    p2i = (p1i * a - qr * b) / d;
  }
  const dr = u1r - u0r,
    di = u1i - u0i;
  out[0] = er * zr - ei * zi + h * (p1r * u0r - p1i * u0i + p2r * dr - p2i * di);
  out[1] = er * zi + ei * zr + h * (p1r * u0i + p1i * u0r + p2r * di + p2i * dr);
  return out;
}

/**
 * One exponential-Euler (ETD1) step of z' = lambda z + u with u held at u0 over the step:
 *   z1 = e^{lambda h} z0 + h phi1(lambda h) u0 (Cox & Matthews 2002, section 2, ETD1),
 * exact for constant u. Writes z1 into out[0..1]; returns out.
 */
export function expStepConstant(
  zr: number,
  zi: number,
  lr: number,
  li: number,
  h: number,
  ur: number,
  ui: number,
  out: Float64Array,
): Float64Array {
  return expStepLinear(zr, zi, lr, li, h, ur, ui, ur, ui, out);
}

/**
 * Precomputed coefficients e^{lambda h}, h phi1(lambda h), h phi2(lambda h) for repeated
 * exponential steps with the same lambda and h (the usual case in a fixed-step engine),
 * so a step costs a few multiplications. All numbers in the time unit of h.
 */
export class ExpStepCoefficients {
  /** e^{lambda h} */
  er = 1;
  ei = 0;
  /** h phi1(lambda h) */
  p1r = 0;
  p1i = 0;
  /** h phi2(lambda h) */
  p2r = 0;
  p2i = 0;
  private readonly phi = new Float64Array(6);

  /** lambda = lr + i li (1/time unit), step h (time unit). */
  constructor(lr = 0, li = 0, h = 0) {
    this.set(lr, li, h);
  }

  /** Recomputes the coefficients for a new lambda = lr + i li and step h. */
  set(lr: number, li: number, h: number): this {
    const c = phiFunctions(lr * h, li * h, this.phi);
    this.er = c[0];
    this.ei = c[1];
    this.p1r = h * c[2];
    this.p1i = h * c[3];
    this.p2r = h * c[4];
    this.p2i = h * c[5];
    return this;
  }

  /**
   * z1 = e^{lambda h} z0 + h phi1 u0 + h phi2 (u1 - u0) for input linear from u0 to u1
   * across the step; writes out[offset], out[offset + 1] (default offset 0) and returns out.
   */
  stepLinear(
    zr: number,
    zi: number,
    u0r: number,
    u0i: number,
    u1r: number,
    u1i: number,
    out: Float64Array,
    offset = 0,
  ): Float64Array {
    const dr = u1r - u0r,
      di = u1i - u0i;
    out[offset] =
      this.er * zr - this.ei * zi + this.p1r * u0r - this.p1i * u0i + this.p2r * dr - this.p2i * di;
    out[offset + 1] =
      this.er * zi + this.ei * zr + this.p1r * u0i + this.p1i * u0r + this.p2r * di + this.p2i * dr;
    return out;
  }

  /** ETD1: z1 = e^{lambda h} z0 + h phi1 u; writes out[offset..offset+1] and returns out. */
  stepConstant(zr: number, zi: number, ur: number, ui: number, out: Float64Array, offset = 0): Float64Array {
    out[offset] = this.er * zr - this.ei * zi + this.p1r * ur - this.p1i * ui;
    out[offset + 1] = this.er * zi + this.ei * zr + this.p1r * ui + this.p1i * ur;
    return out;
  }
}
