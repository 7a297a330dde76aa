/**
 * Welch power spectral density of a real stream and the relative-intensity-noise (RIN)
 * spectrum of the gap power (docs/model.md §4).
 *
 * Method: P. D. Welch, "The use of fast Fourier transform for the estimation of power
 * spectra: a method based on time averaging over short, modified periodograms",
 * IEEE Trans. Audio Electroacoust. 15, 70 (1967): segments of N samples, 50 % overlap,
 * periodic Hann window w, each segment's mean removed (constant detrend) before the
 * window, periodograms averaged. One-sided density with the window's power sum
 * S2 = sum w_n^2:
 *
 *     G(f_k) = c_k |X_k|^2 / (fs S2),   c_k = 2 for 0 < k < N/2, 1 for k = 0 and k = N/2,
 *
 * so white noise of variance s^2 gives G = 2 s^2 / fs, and sum_k G(f_k) df (df = fs / N)
 * equals the windowed mean square sum (x w)^2 / S2 averaged over segments (Parseval).
 * f_k = k fs / N, k = 0..N/2. The bin spacing df is reported as the resolution; the Hann
 * window's equivalent noise bandwidth is 1.5 df (Harris, Proc. IEEE 66, 51 (1978), table I).
 *
 * Streaming: the input may be block-averaged by D samples first (`decimation`), so
 * fs = 1 / (D dt); block averaging is a mild anti-alias filter (response sinc, -3.9 dB at
 * the decimated Nyquist frequency), which the caller accepts by choosing D. Memory is one
 * ring of N samples, one work segment and the accumulated spectrum, whatever the run length.
 */
import { RealPowerTransform } from './fftAdapter';
import { hannPeriodic } from '../numerics/window';
import { OverlapRing, overlapSegments, segmentSetup } from './segments';
import type { Spectrum } from '../results/artifacts';

export interface WelchOptions {
  /** spacing of the samples pushed, s (before decimation) */
  dt_s: number;
  /** segment length N after decimation, a power of two >= 8 */
  segmentLength: number;
  /** samples averaged into one before segmenting (default 1) */
  decimation?: number;
  /** remove each segment's mean before the window (default true) */
  removeSegmentMean?: boolean;
}

export interface PsdResult {
  /** f_k = k fs / N, k = 0..N/2, Hz */
  f_Hz: number[];
  /** one-sided density, (unit of x)^2 / Hz; NaN everywhere while no segment is complete */
  psd: number[];
  /** bin spacing fs / N, Hz */
  resolution_Hz: number;
  /** equivalent noise bandwidth of one bin (Hann: 1.5 fs / N), Hz */
  enbw_Hz: number;
  segments: number;
  sampleRate_Hz: number;
}

/** RIN spectrum in the form of SpectraSet.rin. */
export type RinSpectrum = Spectrum & { unit: 'dB/Hz'; resolution_Hz: number; segments: number };

/** Values below this (relative density 1e-40 /Hz) are written as -400 dB, not -Infinity. */
const DB_FLOOR = -400;

/** Streaming Welch PSD; see the file comment. `push` is allocation-free (one FFT per N/2 samples). */
export class WelchPsd {
  readonly segmentLength: number;
  readonly decimation: number;
  readonly sampleRate_Hz: number;
  private readonly ring: OverlapRing;
  private readonly window: Float64Array;
  private readonly windowPower: number;
  private readonly seg: Float64Array;
  private readonly pow: Float64Array;
  private readonly acc: Float64Array;
  private readonly fft: RealPowerTransform;
  private readonly removeMean: boolean;
  private blockSum = 0;
  private blockCount = 0;
  private nSeg = 0;
  private sum = 0;
  private nSamples = 0;

  constructor(opts: WelchOptions) {
    const { n, d, sampleRate_Hz } = segmentSetup('WelchPsd', opts);
    this.segmentLength = n;
    this.decimation = d;
    this.sampleRate_Hz = sampleRate_Hz;
    this.ring = new OverlapRing(n, false);
    const hann = hannPeriodic(n);
    this.window = hann.w;
    this.windowPower = hann.sumSq;
    this.seg = new Float64Array(n);
    this.pow = new Float64Array((n >> 1) + 1);
    this.acc = new Float64Array((n >> 1) + 1);
    this.fft = new RealPowerTransform(n);
    this.removeMean = opts.removeSegmentMean ?? true;
  }

  /** Adds one raw sample (before decimation). */
  push(x: number): void {
    this.blockSum += x;
    if (++this.blockCount < this.decimation) return;
    const v = this.blockSum / this.decimation;
    this.blockSum = 0;
    this.blockCount = 0;
    this.sum += v;
    this.nSamples++;
    if (this.ring.push(v, 0)) this.processSegment();
  }

  private processSegment(): void {
    const n = this.segmentLength;
    const seg = this.seg;
    this.ring.copy(seg);
    let m = 0;
    if (this.removeMean) {
      for (let i = 0; i < n; i++) m += seg[i];
      m /= n;
    }
    const w = this.window;
    for (let i = 0; i < n; i++) seg[i] = (seg[i] - m) * w[i];
    this.fft.power(seg, this.pow);
    const acc = this.acc;
    const p = this.pow;
    for (let k = 0; k < acc.length; k++) acc[k] += p[k];
    this.nSeg++;
  }

  get segments(): number {
    return this.nSeg;
  }

  /** Mean of all decimated samples pushed so far (NaN if none). */
  get mean(): number {
    return this.nSamples > 0 ? this.sum / this.nSamples : NaN;
  }

  /** The averaged one-sided PSD; see the file comment for the normalisation. */
  result(): PsdResult {
    const n = this.segmentLength;
    const fs = this.sampleRate_Hz;
    const half = n >> 1;
    const scale = this.nSeg > 0 ? 1 / (this.nSeg * fs * this.windowPower) : NaN;
    const f: number[] = new Array<number>(half + 1);
    const psd: number[] = new Array<number>(half + 1);
    for (let k = 0; k <= half; k++) {
      f[k] = (k * fs) / n;
      psd[k] = this.acc[k] * scale * (k === 0 || k === half ? 1 : 2);
    }
    return {
      f_Hz: f,
      psd,
      resolution_Hz: fs / n,
      enbw_Hz: (1.5 * fs) / n,
      segments: this.nSeg,
      sampleRate_Hz: fs,
    };
  }

  /**
   * RIN spectrum 10 log10(G_P(f) / mean^2) in dB/Hz, the PSD of (P - mean) / mean.
   * `mean` defaults to the mean of the samples pushed (the caller may pass the run's mean).
   * The DC bin is left out (meaningless after the mean is removed). Null when no segment
   * is complete or the mean is not positive.
   */
  rin(mean: number = this.mean): RinSpectrum | null {
    if (this.nSeg === 0 || !(mean > 0)) return null;
    const r = this.result();
    const m2 = mean * mean;
    const values = new Array<number>(r.psd.length - 1);
    for (let k = 1; k < r.psd.length; k++) {
      const rel = r.psd[k] / m2;
      values[k - 1] = rel > 0 ? Math.max(DB_FLOOR, 10 * Math.log10(rel)) : DB_FLOOR;
    }
    return {
      f_Hz: r.f_Hz.slice(1),
      values,
      unit: 'dB/Hz',
      resolution_Hz: r.resolution_Hz,
      segments: r.segments,
    };
  }
}

/**
 * The segment length for a stream of `totalSamples` (after decimation): the largest power
 * of two N <= maxLength giving at least minSegments 50 %-overlap segments; if even
 * minLength gives fewer, minLength when it fits once, else null (too short for a spectrum).
 * Defaults: minSegments 8, minLength 16, maxLength 65536.
 */
export function chooseSegmentLength(
  totalSamples: number,
  opts: { minSegments?: number; minLength?: number; maxLength?: number } = {},
): number | null {
  const minSeg = opts.minSegments ?? 8;
  const minLen = opts.minLength ?? 16;
  const maxLen = opts.maxLength ?? 65536;
  let best: number | null = null;
  for (let n = minLen; n <= maxLen; n *= 2) {
    if (overlapSegments(totalSamples, n) >= minSeg) best = n;
  }
  if (best === null && totalSamples >= minLen) best = minLen;
  return best;
}

export { overlapSegments };
