/**
 * Interpolation of uniformly sampled data at a fractional position, for ring buffers
 * (delay lines): linear and 4-point cubic Lagrange, with the cubic stencil shifted so that
 * it never reaches past the newest or oldest stored sample.
 *
 * Positions in a ring are given as "back": how many sample intervals (fractional,
 * dimensionless) before the newest sample the value is wanted. back = 0 is the newest
 * sample, back = 1 the one before it.
 *
 * Reference: M. Abramowitz, I. A. Stegun, Handbook of Mathematical Functions, 1964,
 * eq. 25.2.13 (four-point Lagrange interpolation); the error of an n-point Lagrange
 * interpolant is f^(n)(xi)/n! prod (x - x_j) (same section 25.2).
 */

/**
 * Cubic through (-1, y0), (0, y1), (1, y2), (2, y3) evaluated at u (dimensionless, in units
 * of the sample spacing, relative to y1):
 *   p(u) = -u(u-1)(u-2)/6 y0 + (u+1)(u-1)(u-2)/2 y1 - (u+1)u(u-2)/2 y2 + (u+1)u(u-1)/6 y3
 * (Abramowitz & Stegun 25.2.13). Interpolates for u in [-1, 2] (most accurate in [0, 1]);
 * outside it extrapolates. Exact for polynomials of degree <= 3.
 */
export function lagrange4(y0: number, y1: number, y2: number, y3: number, u: number): number {
  const up1 = u + 1,
    um1 = u - 1,
    um2 = u - 2;
  return (-u * um1 * um2 * y0 + y3 * up1 * u * um1) / 6 + (up1 * um1 * um2 * y1 - up1 * u * um2 * y2) / 2;
}

/** Index in a ring of length len of the sample `age` positions before newestIndex (0 <= age < len). */
function ringIndex(newestIndex: number, age: number, len: number): number {
  const i = newestIndex - age;
  return i < 0 ? i + len : i;
}

/**
 * Cubic Lagrange value `back` samples before the newest one, using only the `available`
 * newest samples (ages 0 .. available-1). Internal: arguments are trusted.
 */
function cubicFromRing(
  buf: Float64Array,
  len: number,
  newestIndex: number,
  back: number,
  available: number,
): number {
  // oldest stencil age: centred stencil ages k+2..k-1 around floor(back) = k, shifted to
  // keep ages within [0, available-1]
  let a0 = Math.floor(back) + 2;
  if (a0 < 3) a0 = 3;
  else if (a0 > available - 1) a0 = available - 1;
  const u = a0 - 1 - back;
  return lagrange4(
    buf[ringIndex(newestIndex, a0, len)],
    buf[ringIndex(newestIndex, a0 - 1, len)],
    buf[ringIndex(newestIndex, a0 - 2, len)],
    buf[ringIndex(newestIndex, a0 - 3, len)],
    u,
  );
}

function linearFromRing(
  buf: Float64Array,
  len: number,
  newestIndex: number,
  back: number,
  available: number,
): number {
  let k = Math.floor(back);
  if (k < 0) k = 0;
  else if (k > available - 2) k = available - 2;
  const yNew = buf[ringIndex(newestIndex, k, len)];
  const yOld = buf[ringIndex(newestIndex, k + 1, len)];
  return yNew + (back - k) * (yOld - yNew);
}

function checkRing(name: string, len: number, newestIndex: number, back: number, minLen: number): void {
  if (!(len >= minLen) || newestIndex < 0 || newestIndex >= len || !(back >= -1 && back <= len - 1)) {
    throw new RangeError(
      `${name}: need ring length >= ${minLen}, 0 <= newestIndex < length and -1 <= back <= length-1;` +
        ` got length ${len}, newestIndex ${newestIndex}, back ${back}`,
    );
  }
}

/**
 * Value `back` samples (fractional) before the newest sample of a full ring buffer, by
 * 4-point cubic Lagrange interpolation (lagrange4) on the samples around it. The stencil
 * is shifted so it never uses a sample newer than the newest or older than the oldest:
 * for back in [0, 1) it uses the 4 newest samples (u in (1, 2]); near the oldest end the 4
 * oldest. back in [-1, 0) extrapolates up to one sample beyond the newest with the 4
 * newest samples. Error <= max|f''''| dx^4 / 24 times max|(u+1)u(u-1)(u-2)|, which is 9/16
 * for the centred stencil and 1 on the two end intervals (back < 1, back > len-2) where the
 * stencil is shifted (Abramowitz & Stegun section 25.2).
 *
 * @param buf ring storage; sample at index newestIndex is the newest, newestIndex-1 (mod len)
 *   the one before, and so on; all len entries are taken as valid
 * @param len ring length (>= 4), usually buf.length
 * @param newestIndex index of the newest sample, 0 <= newestIndex < len
 * @param back samples before the newest, -1 <= back <= len-1 (RangeError otherwise)
 */
export function ringCubic(buf: Float64Array, len: number, newestIndex: number, back: number): number {
  checkRing('ringCubic', len, newestIndex, back, 4);
  return cubicFromRing(buf, len, newestIndex, back, len);
}

/**
 * Value `back` samples (fractional) before the newest sample of a full ring buffer by
 * linear interpolation between the two neighbouring samples (back in [-1, 0) extrapolates
 * from the two newest). Error O(dx^2). Arguments as for ringCubic (len >= 2).
 */
export function ringLinear(buf: Float64Array, len: number, newestIndex: number, back: number): number {
  checkRing('ringLinear', len, newestIndex, back, 2);
  return linearFromRing(buf, len, newestIndex, back, len);
}

/**
 * Fixed-capacity ring buffer of complex samples (two Float64Array: re, im), uniformly
 * spaced in time, with interpolated reads at a fractional delay counted in samples
 * (dimensionless; multiply by the sample interval for seconds). This is the storage of a
 * delay line: push one sample per time step, read the delayed field. Reads and pushes
 * allocate nothing.
 */
export class ComplexRing {
  readonly capacity: number;
  readonly re: Float64Array;
  readonly im: Float64Array;
  private newest = -1;
  private stored = 0;

  /** capacity: number of samples kept (>= 4 for cubic reads). */
  constructor(capacity: number) {
    if (!Number.isInteger(capacity) || capacity < 2) {
      throw new RangeError(`ComplexRing capacity must be an integer >= 2, got ${capacity}`);
    }
    this.capacity = capacity;
    this.re = new Float64Array(capacity);
    this.im = new Float64Array(capacity);
  }

  /** number of samples stored so far (at most capacity) */
  get size(): number {
    return this.stored;
  }

  /** index in re/im of the newest sample (-1 when empty) */
  get newestIndex(): number {
    return this.newest;
  }

  /** Appends a sample, overwriting the oldest when full. */
  push(re: number, im: number): void {
    let i = this.newest + 1;
    if (i === this.capacity) i = 0;
    this.re[i] = re;
    this.im[i] = im;
    this.newest = i;
    if (this.stored < this.capacity) this.stored++;
  }

  /** Fills the whole history with one value (e.g. the field before t = 0); size = capacity. */
  fill(re: number, im: number): void {
    this.re.fill(re);
    this.im.fill(im);
    this.newest = this.capacity - 1;
    this.stored = this.capacity;
  }

  /** Empties the ring. */
  clear(): void {
    this.re.fill(0);
    this.im.fill(0);
    this.newest = -1;
    this.stored = 0;
  }

  /** Largest delay (in samples) that can be read: size - 1. */
  get maxDelay(): number {
    return this.stored - 1;
  }

  /**
   * Writes the sample `delay` samples before the newest, by 4-point cubic Lagrange
   * interpolation with the stencil kept inside the stored history (see ringCubic), into
   * out[offset] (real) and out[offset + 1] (imaginary); returns out. Needs size >= 4 and
   * -1 <= delay <= size - 1 (delay in [-1, 0) extrapolates); RangeError otherwise.
   */
  readCubic(delay: number, out: Float64Array, offset = 0): Float64Array {
    this.check(delay, 4);
    out[offset] = cubicFromRing(this.re, this.capacity, this.newest, delay, this.stored);
    out[offset + 1] = cubicFromRing(this.im, this.capacity, this.newest, delay, this.stored);
    return out;
  }

  /** As readCubic, by linear interpolation (size >= 2). */
  readLinear(delay: number, out: Float64Array, offset = 0): Float64Array {
    this.check(delay, 2);
    out[offset] = linearFromRing(this.re, this.capacity, this.newest, delay, this.stored);
    out[offset + 1] = linearFromRing(this.im, this.capacity, this.newest, delay, this.stored);
    return out;
  }

  private check(delay: number, minSize: number): void {
    if (this.stored < minSize || !(delay >= -1 && delay <= this.stored - 1)) {
      throw new RangeError(
        `ComplexRing read at delay ${delay} samples needs ${minSize} <= stored samples and` +
          ` -1 <= delay <= stored-1; stored ${this.stored} of capacity ${this.capacity}`,
      );
    }
  }
}
