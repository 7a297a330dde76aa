/**
 * A bank of complex delay lines advancing in lockstep (one per lane), with reads at a
 * whole or fractional number of samples back.
 *
 * Fractional reads use a Lagrange interpolator on its central interval only: as many
 * nodes on each side of the read point. Read off-centre a Lagrange interpolator amplifies
 * the upper part of the band (the 4-point one up to 1.14 in amplitude) and a feedback loop
 * through it diverges; centred, its amplitude response never exceeds 1 (Laakso, Valimaki,
 * Karjalainen and Laine, "Splitting the unit delay", IEEE Signal Processing Magazine 13(1),
 * 1996, section on Lagrange interpolation). What it loses, 1 - |H|^2 per read, grows as
 * w^n (w = 2 pi nu dt): inside a high-finesse gap that loss adds to the mirrors' every
 * round trip, so the round-trip engine reads with 8 points (docs/model.md §3.5): at
 * w = 0.72 (a mode 940 MHz from the carrier at 122 ps steps) it loses 4e-5 to 1.4e-4 per
 * read, where the 4-point read lost 3.6e-3 to 1.2e-2. The modal engine's lines each hold
 * one mode's slowly varying envelope and read with 4 points (docs/model.md §3.3), whose
 * weights are the closed-form cubic of Abramowitz and Stegun 25.2.13.
 */

/** Nodes of the centred interpolator the delay lines read with (even; half on each side). */
export const READ_POINTS = 8;
/** Smallest delay (samples back from the slot being written) a centred read allows. */
export const MIN_CENTRED_DELAY = READ_POINTS / 2;

/** 1 / prod_{j != i} (x_i - x_j) for the centred n-point stencil, by n. */
const LAGRANGE_DENOMINATORS = new Map<number, Float64Array>();

function lagrangeDenominators(n: number): Float64Array {
  let d = LAGRANGE_DENOMINATORS.get(n);
  if (d === undefined) {
    d = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      // prod_{j != i} (i - j) = (-1)^(n - 1 - i) i! (n - 1 - i)!
      let p = 1;
      for (let j = 0; j < n; j++) if (j !== i) p *= i - j;
      d[i] = 1 / p;
    }
    LAGRANGE_DENOMINATORS.set(n, d);
  }
  return d;
}

/** The denominators of the round-trip engine's read, looked up once. */
const READ_DENOMINATORS = lagrangeDenominators(READ_POINTS);

/** Scratch of lagrangeCentredN: prod_{j < i} (u - x_j). */
let lagrangePrefix = new Float64Array(READ_POINTS + 1);

/**
 * Weights of the centred n-point Lagrange read (n even) at fraction u in [0, 1) between
 * nodes 0 and 1 of the stencil -(n/2 - 1) .. n/2, into w[0..n-1]:
 * w_i = prod_{j != i} (u - x_j) / prod_{j != i} (x_i - x_j), the numerator as a prefix
 * product times a suffix product (about 4n multiplications, no division per read).
 */
export function lagrangeCentredN(u: number, n: number, w: Float64Array): void {
  const lo = -(n / 2 - 1);
  const den = n === READ_POINTS ? READ_DENOMINATORS : lagrangeDenominators(n);
  if (lagrangePrefix.length < n + 1) lagrangePrefix = new Float64Array(n + 1);
  const pre = lagrangePrefix;
  pre[0] = 1;
  for (let i = 0; i < n; i++) pre[i + 1] = pre[i] * (u - (lo + i));
  let suf = 1;
  for (let i = n - 1; i >= 0; i--) {
    w[i] = pre[i] * suf * den[i];
    suf *= u - (lo + i);
  }
}

/** Amplitude |H| of the centred n-point Lagrange read (default 4) at fraction u for w = 2 pi nu dt. */
export function lagrangeCentredGain(u: number, w: number, n = 4): number {
  const k = new Float64Array(n);
  lagrangeCentredN(u, n, k);
  // nodes at -(n/2 - 1) .. n/2 samples relative to the read's integer part; a delay of t
  // samples has response e^{-i w t}
  let re = 0;
  let im = 0;
  for (let i = 0; i < n; i++) {
    const t = i - (n / 2 - 1) - u;
    re += k[i] * Math.cos(w * t);
    im -= k[i] * Math.sin(w * t);
  }
  return Math.hypot(re, im);
}

/**
 * Weights of the 4-point Lagrange read `back` samples before the newest into w[0..3], for
 * the nodes start .. start + 3 samples back; returns start. The stencil is centred on the
 * read (start = floor(back) - 1) unless that would reach past the newest sample, then it
 * starts at the newest (start = 0). Closed-form cubic, Abramowitz and Stegun 25.2.13.
 */
export function lagrange4Newest(back: number, w: Float64Array): number {
  let start = Math.floor(back) - 1;
  if (start < 0) start = 0;
  const u = back - start;
  w[0] = (-(u - 1) * (u - 2) * (u - 3)) / 6;
  w[1] = (u * (u - 2) * (u - 3)) / 2;
  w[2] = (-u * (u - 1) * (u - 3)) / 2;
  w[3] = (u * (u - 1) * (u - 2)) / 6;
  return start;
}

/**
 * A bank of complex delay lines advancing in lockstep, one ring per line in one pair of
 * typed arrays (line-major), with interpolated reads and the stored energy of a line.
 */
export class ComplexDelayLines {
  readonly re: Float64Array;
  readonly im: Float64Array;
  readonly cap: number;
  readonly mask: number;
  /** slot of the newest sample (shared by every line) */
  head = 0;
  private readonly w: Float64Array;
  /** unmasked slot of node 0 of the last prepared read (node i at top - i) */
  private top = 0;

  /**
   * @param lines number of delay lines
   * @param maxDelay longest delay read, samples (the buffer holds it plus the stencil)
   * @param points nodes of the interpolated read: READ_POINTS (centred, back >=
   *   MIN_CENTRED_DELAY) or 4 (closed-form cubic, never past the newest sample)
   */
  constructor(
    readonly lines: number,
    maxDelay: number,
    readonly points: number = READ_POINTS,
  ) {
    if (!(maxDelay >= 0 && maxDelay < 1e8)) throw new Error(`delay of ${maxDelay} samples cannot be stored`);
    if (points !== READ_POINTS && points !== 4)
      throw new Error(`no ${points}-point read (${READ_POINTS} or 4)`);
    let cap = 8;
    while (cap < maxDelay + points + 2) cap *= 2;
    this.cap = cap;
    this.mask = cap - 1;
    this.re = new Float64Array(lines * cap);
    this.im = new Float64Array(lines * cap);
    this.w = new Float64Array(points);
  }

  /** Move the head on by one sample (every line at once); the new slot is then written with set(). */
  advance(): void {
    this.head = (this.head + 1) & this.mask;
  }

  /** Write the newest sample of a line. */
  set(line: number, re: number, im: number): void {
    const i = line * this.cap + this.head;
    this.re[i] = re;
    this.im[i] = im;
  }

  /** Write the sample the next advance() makes the newest (reads until then see the present head). */
  setNext(line: number, re: number, im: number): void {
    const i = line * this.cap + ((this.head + 1) & this.mask);
    this.re[i] = re;
    this.im[i] = im;
  }

  /** Index into re/im of the sample `back` whole samples before the newest of a line. */
  index(line: number, back: number): number {
    return line * this.cap + ((this.head - back) & this.mask);
  }

  /**
   * Set up the weights of a read `back` samples before the head (fractional allowed) for
   * readPrepared() on any number of lines. READ_POINTS nodes run from back - READ_POINTS / 2 + 1
   * to back + READ_POINTS / 2 (rounded); 4 nodes as lagrange4Newest() places them.
   */
  prepare(back: number): void {
    const w = this.w;
    if (this.points === 4) {
      this.top = this.head - lagrange4Newest(back, w);
      return;
    }
    const k = Math.floor(back);
    lagrangeCentredN(back - k, READ_POINTS, w);
    // node i sits at back k - (n/2 - 1) + i (newest first), so at head - k + n/2 - 1 - i
    this.top = this.head - k + READ_POINTS / 2 - 1;
  }

  /** Read a line at the delay of the last prepare(), into out[o], out[o + 1]. */
  readPrepared(line: number, out: Float64Array, o: number): void {
    const w = this.w;
    const n = this.points;
    const base = line * this.cap;
    const m = this.mask;
    const top = this.top;
    let re = 0;
    let im = 0;
    for (let i = 0; i < n; i++) {
      const idx = base + ((top - i) & m);
      re += w[i] * this.re[idx];
      im += w[i] * this.im[idx];
    }
    out[o] = re;
    out[o + 1] = im;
  }

  /** Read a line `back` samples before the head (see prepare()) into out[o], out[o + 1]. */
  read(line: number, back: number, out: Float64Array, o: number): void {
    this.prepare(back);
    this.readPrepared(line, out, o);
  }

  /**
   * Stored energy of a line over the last `back` samples, in sample units: the trapezoid
   * integral of |x|^2 from the newest sample back to `back` (the fractional end linearly
   * interpolated), added to `sum` (so several lines add in one running sum), which is returned.
   */
  addStored(line: number, back: number, sum: number): number {
    const whole = Math.floor(back);
    const frac = back - whole;
    const base = line * this.cap;
    const m = this.mask;
    let s = sum;
    let prev = 0;
    for (let k = 0; k <= whole; k++) {
      const i = base + ((this.head - k) & m);
      const v = this.re[i] * this.re[i] + this.im[i] * this.im[i];
      if (k > 0) s += 0.5 * (v + prev);
      prev = v;
    }
    if (frac > 0) {
      const i = base + ((this.head - whole - 1) & m);
      const next = this.re[i] * this.re[i] + this.im[i] * this.im[i];
      const vEnd = prev + (next - prev) * frac;
      s += 0.5 * (prev + vEnd) * frac;
    }
    return s;
  }

  /** Fill every slot of a line with one value. */
  fill(line: number, re: number, im: number): void {
    this.re.fill(re, line * this.cap, (line + 1) * this.cap);
    this.im.fill(im, line * this.cap, (line + 1) * this.cap);
  }

  /** Copy line `from` of `src` (same capacity) into line `to`, aligned at the newest sample. */
  copyLine(src: ComplexDelayLines, from: number, to: number): void {
    if (src.cap !== this.cap) throw new Error('copyLine: delay lines differ in capacity');
    for (let k = 0; k < this.cap; k++) {
      const is = from * src.cap + ((src.head - k) & src.mask);
      const id = to * this.cap + ((this.head - k) & this.mask);
      this.re[id] = src.re[is];
      this.im[id] = src.im[is];
    }
  }
}
