/**
 * Internal to the analysis room: the bounded-memory segmenter behind the averaged
 * spectra. It keeps the last N (block-averaged) samples in a ring and says when a new
 * segment with 50 % overlap (hop N/2, Welch 1967) is complete. Memory: one ring of N.
 * Also the one check of the spectra's segment length, decimation and step.
 */
import { isPowerOfTwo } from './fftAdapter';

/** Ring of the last N samples of one or two channels, with a 50 %-overlap segment clock. */
export class OverlapRing {
  readonly size: number;
  readonly hop: number;
  private readonly a: Float64Array;
  private readonly b: Float64Array | null;
  private pos = 0;
  private count = 0;
  private untilNext: number;

  constructor(size: number, twoChannels: boolean) {
    this.size = size;
    this.hop = size >> 1;
    this.a = new Float64Array(size);
    this.b = twoChannels ? new Float64Array(size) : null;
    this.untilNext = size;
  }

  /** Stores one sample (second channel ignored for one-channel rings); true when a segment is complete. */
  push(x: number, y: number): boolean {
    const p = this.pos;
    this.a[p] = x;
    if (this.b !== null) this.b[p] = y;
    this.pos = p + 1 === this.size ? 0 : p + 1;
    this.count++;
    if (--this.untilNext > 0) return false;
    this.untilNext = this.hop;
    return true;
  }

  /** Copies the last N samples, oldest first, into outA (and outB). */
  copy(outA: Float64Array, outB?: Float64Array): void {
    const n = this.size;
    let j = this.pos;
    for (let i = 0; i < n; i++) {
      outA[i] = this.a[j];
      if (outB !== undefined && this.b !== null) outB[i] = this.b[j];
      if (++j === n) j = 0;
    }
  }

  get samples(): number {
    return this.count;
  }
}

/** Number of 50 %-overlap segments of length n in `total` samples: floor((total - n) / (n/2)) + 1, 0 if total < n. */
export function overlapSegments(total: number, n: number): number {
  if (total < n) return 0;
  return Math.floor((total - n) / (n >> 1)) + 1;
}

/**
 * Segment length N, decimation D and the decimated sample rate 1 / (D dt), Hz, of an
 * averaged spectrum, checked in one place so that every spectrum refuses the same input;
 * `owner` names the spectrum in the RangeError.
 */
export function segmentSetup(
  owner: string,
  o: { dt_s: number; segmentLength: number; decimation?: number },
): { n: number; d: number; sampleRate_Hz: number } {
  const n = o.segmentLength;
  const d = o.decimation ?? 1;
  if (!isPowerOfTwo(n) || n < 8)
    throw new RangeError(`${owner}: segmentLength must be a power of two >= 8, found ${n}`);
  if (!(Number.isInteger(d) && d >= 1))
    throw new RangeError(`${owner}: decimation must be a positive integer, found ${d}`);
  if (!(o.dt_s > 0)) throw new RangeError(`${owner}: dt_s must be positive, found ${o.dt_s}`);
  return { n, d, sampleRate_Hz: 1 / (d * o.dt_s) };
}
