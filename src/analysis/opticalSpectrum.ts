/**
 * Optical spectrum of one mode's returned field b_m (docs/model.md §4): the averaged
 * Hann-windowed periodogram |FFT(w b)|^2 of the complex envelope, over segments of N
 * samples with 50 % overlap (Welch, IEEE Trans. Audio Electroacoust. 15, 70 (1967)),
 * centred (fftshift) and given in dB relative to its own peak. It shows the Doppler
 * sidebands of the moving mirror (2 v / lambda per bounce).
 *
 * Frequencies are offsets from the mode's cold-cavity frequency nu_m, f_j = (j - N/2) fs / N,
 * j = 0..N-1 (-fs/2 .. fs/2 - df). Sign: the physical field is taken as
 * Re[b exp(+i omega_m t)] (the convention behind b = r3' a(t - tau) exp(-i omega_m tau)),
 * so a positive offset is a higher optical frequency; with the transform
 * X_k = sum b_n exp(-2 pi i k n / N), b = exp(+2 pi i f t) peaks at +f.
 * The mean is not removed: the carrier is part of the spectrum. Values below -400 dB
 * (and an all-zero field) are written as -400 dB.
 */
import { ComplexPowerTransform } from './fftAdapter';
import { hannPeriodic } from '../numerics/window';
import { OverlapRing, segmentSetup } from './segments';
import type { Spectrum } from '../results/artifacts';

export interface OpticalSpectrumOptions {
  /** spacing of the samples pushed, s (before decimation) */
  dt_s: number;
  /** segment length N after decimation, a power of two >= 8 */
  segmentLength: number;
  /** complex samples averaged into one before segmenting (default 1) */
  decimation?: number;
  /** mode number reported with the spectrum */
  mode: number;
}

export type OpticalSpectrumResult = Spectrum & { mode: number; unit: 'dB' };

const DB_FLOOR = -400;

/** Streaming averaged optical spectrum of a complex envelope; `push` is allocation-free. */
export class OpticalSpectrum {
  readonly segmentLength: number;
  readonly decimation: number;
  readonly sampleRate_Hz: number;
  readonly mode: number;
  private readonly ring: OverlapRing;
  private readonly window: Float64Array;
  private readonly re: Float64Array;
  private readonly im: Float64Array;
  private readonly pow: Float64Array;
  private readonly acc: Float64Array;
  private readonly fft: ComplexPowerTransform;
  private sumRe = 0;
  private sumIm = 0;
  private blockCount = 0;
  private nSeg = 0;

  constructor(opts: OpticalSpectrumOptions) {
    const { n, d, sampleRate_Hz } = segmentSetup('OpticalSpectrum', opts);
    this.segmentLength = n;
    this.decimation = d;
    this.sampleRate_Hz = sampleRate_Hz;
    this.mode = opts.mode;
    this.ring = new OverlapRing(n, true);
    this.window = hannPeriodic(n).w;
    this.re = new Float64Array(n);
    this.im = new Float64Array(n);
    this.pow = new Float64Array(n);
    this.acc = new Float64Array(n);
    this.fft = new ComplexPowerTransform(n);
  }

  /** Adds one complex sample re + i im of b_m (sqrt(W) in the model's normalisation). */
  push(re: number, im: number): void {
    this.sumRe += re;
    this.sumIm += im;
    if (++this.blockCount < this.decimation) return;
    const d = this.decimation;
    const full = this.ring.push(this.sumRe / d, this.sumIm / d);
    this.sumRe = 0;
    this.sumIm = 0;
    this.blockCount = 0;
    if (full) this.processSegment();
  }

  private processSegment(): void {
    const n = this.segmentLength;
    this.ring.copy(this.re, this.im);
    const w = this.window;
    for (let i = 0; i < n; i++) {
      this.re[i] *= w[i];
      this.im[i] *= w[i];
    }
    this.fft.power(this.re, this.im, this.pow);
    for (let k = 0; k < n; k++) this.acc[k] += this.pow[k];
    this.nSeg++;
  }

  get segments(): number {
    return this.nSeg;
  }

  /** Centred spectrum in dB relative to its peak; null before the first complete segment. */
  result(): OpticalSpectrumResult | null {
    if (this.nSeg === 0) return null;
    const n = this.segmentLength;
    const half = n >> 1;
    const df = this.sampleRate_Hz / n;
    let peak = 0;
    for (let k = 0; k < n; k++) if (this.acc[k] > peak) peak = this.acc[k];
    const f: number[] = new Array<number>(n);
    const values: number[] = new Array<number>(n);
    for (let j = 0; j < n; j++) {
      const k = (j + half) % n;
      f[j] = (j - half) * df;
      const rel = peak > 0 ? this.acc[k] / peak : 0;
      values[j] = rel > 0 ? Math.max(DB_FLOOR, 10 * Math.log10(rel)) : DB_FLOOR;
    }
    return { f_Hz: f, values, mode: this.mode, unit: 'dB' };
  }
}
