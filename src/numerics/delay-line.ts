/**
 * A bank of complex delay lines advancing in lockstep (one per lane), with reads at a
 * whole or fractional number of samples back.
 *
 * Fractional reads use the 4-point Lagrange interpolator on its central interval only:
 * nodes one and two samples on each side of the read point. Read off-centre the same
 * interpolator amplifies the upper part of the band (up to 1.14 in amplitude) and a
 * feedback loop through it diverges; centred, its amplitude response is
 * H(w) = (9/8) cos(w/2) - (1/8) cos(3w/2) at half a sample (w = 2 pi nu dt), never above 1
 * (Laakso, Valimaki, Karjalainen and Laine, "Splitting the unit delay", IEEE Signal
 * Processing Magazine 13(1), 1996, section on Lagrange interpolation).
 */

/** Smallest fractional delay (samples back from the newest stored sample) a centred read allows. */
export const MIN_CENTRED_DELAY = 1;

/** Weights of the centred 4-point Lagrange read at fraction u in [0, 1) between nodes 0 and 1
 * of the stencil (-1, 0, 1, 2), into w[0..3]. */
export function lagrangeCentred(u: number, w: Float64Array): void {
  const a = u + 1;
  const b = u;
  const c = u - 1;
  const d = u - 2;
  w[0] = (-b * c * d) / 6;
  w[1] = (a * c * d) / 2;
  w[2] = (-a * b * d) / 2;
  w[3] = (a * b * c) / 6;
}

/** Amplitude |H| of the centred 4-point Lagrange read at fraction u for w = 2 pi nu dt. */
export function lagrangeCentredGain(u: number, w: number): number {
  const k = new Float64Array(4);
  lagrangeCentred(u, k);
  // nodes at -1, 0, 1, 2 samples relative to the read's integer part; a delay of t samples
  // has response e^{-i w t}
  let re = 0;
  let im = 0;
  for (let i = 0; i < 4; i++) {
    const t = i - 1 - u;
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
  private readonly w = new Float64Array(4);

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
    while (cap < maxDelay + 4) cap *= 2;
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
   * Read a line `back` samples before the newest (back >= 1, fractional allowed) by the
   * centred 4-point Lagrange interpolator, into out[o], out[o + 1].
   */
  read(line: number, back: number, out: Float64Array, o: number): void {
    const k = Math.floor(back);
    const u = back - k;
    const w = this.w;
    lagrangeCentred(u, w);
    // stencil at back k - 1, k, k + 1, k + 2 (newest first), read point between k and k + 1
    const base = line * this.cap;
    const h = this.head - k;
    const m = this.mask;
    const i0 = base + ((h + 1) & m);
    const i1 = base + (h & m);
    const i2 = base + ((h - 1) & m);
    const i3 = base + ((h - 2) & m);
    out[o] = w[0] * this.re[i0] + w[1] * this.re[i1] + w[2] * this.re[i2] + w[3] * this.re[i3];
    out[o + 1] = w[0] * this.im[i0] + w[1] * this.im[i1] + w[2] * this.im[i2] + w[3] * this.im[i3];
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
