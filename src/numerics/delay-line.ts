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
 * read, where the 4-point read lost 3.6e-3 to 1.2e-2.
 */

/** Nodes of the centred interpolator the delay lines read with (even; half on each side). */
export const READ_POINTS = 8;
/** Smallest delay (samples back from the slot being written) a centred read allows. */
export const MIN_CENTRED_DELAY = READ_POINTS / 2;

/**
 * Weights of the centred n-point Lagrange read (n even) at fraction u in [0, 1) between
 * nodes 0 and 1 of the stencil -(n/2 - 1) .. n/2, into w[0..n-1].
 */
export function lagrangeCentredN(u: number, n: number, w: Float64Array): void {
  const lo = -(n / 2 - 1);
  for (let i = 0; i < n; i++) {
    const xi = lo + i;
    let p = 1;
    for (let j = 0; j < n; j++) {
      if (j === i) continue;
      const xj = lo + j;
      p *= (u - xj) / (xi - xj);
    }
    w[i] = p;
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

export class ComplexDelayLines {
  readonly re: Float64Array;
  readonly im: Float64Array;
  readonly cap: number;
  readonly mask: number;
  /** slot of the newest sample (shared by every line) */
  head = 0;
  private readonly w = new Float64Array(READ_POINTS);

  /**
   * @param lines number of delay lines
   * @param maxDelay longest delay read, samples (the buffer holds it plus the stencil)
   */
  constructor(
    readonly lines: number,
    maxDelay: number,
  ) {
    if (!(maxDelay >= 0 && maxDelay < 1e8)) throw new Error(`delay of ${maxDelay} samples cannot be stored`);
    let cap = 8;
    while (cap < maxDelay + READ_POINTS + 2) cap *= 2;
    this.cap = cap;
    this.mask = cap - 1;
    this.re = new Float64Array(lines * cap);
    this.im = new Float64Array(lines * cap);
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

  /** Index into re/im of the sample `back` whole samples before the newest of a line. */
  index(line: number, back: number): number {
    return line * this.cap + ((this.head - back) & this.mask);
  }

  /**
   * Read a line `back` samples before the head (back >= MIN_CENTRED_DELAY, fractional
   * allowed) by the centred READ_POINTS-point Lagrange interpolator, into out[o], out[o + 1].
   * The nodes run from back - READ_POINTS / 2 + 1 to back + READ_POINTS / 2 (rounded).
   */
  read(line: number, back: number, out: Float64Array, o: number): void {
    const k = Math.floor(back);
    const w = this.w;
    lagrangeCentredN(back - k, READ_POINTS, w);
    const base = line * this.cap;
    const m = this.mask;
    // node i sits at back k - (n/2 - 1) + i (newest first), so at head - k + n/2 - 1 - i
    const top = this.head - k + READ_POINTS / 2 - 1;
    let re = 0;
    let im = 0;
    for (let i = 0; i < READ_POINTS; i++) {
      const idx = base + ((top - i) & m);
      re += w[i] * this.re[idx];
      im += w[i] * this.im[idx];
    }
    out[o] = re;
    out[o + 1] = im;
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
