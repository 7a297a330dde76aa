/**
 * The detection-band view of the gap power (docs/model.md §4): what a detector that
 * integrates for T = 1 / bandwidth sees, i.e. the sliding (boxcar) average
 *
 *     y(t) = (1/T) * integral_{t-T}^{t} P(t') dt' ,
 *
 * whose amplitude response |sin(pi f T) / (pi f T)| vanishes at every integer multiple of
 * the bandwidth (a first-order low-pass would leak the turning-point component instead).
 *
 * Approximation, stated: a window of 1e5 samples is too long for a per-sample ring, so
 * the input is first reduced to means of B consecutive samples (B chosen so that the
 * window holds at least `minBlocks` = 64 blocks), and the boxcar slides over whole
 * blocks. Hence (1) the window is quantised to T_eff = nBlocks * B * dt (nBlocks =
 * round(T / (B dt))), reported as `window_s` and `bandwidth_Hz` = 1 / T_eff; the
 * relative difference from T is at most 1 / (2 * 64) < 0.8 %; (2) y is evaluated once per
 * block, every B dt <= T / 64, so an extreme of y between block ends can be missed by at
 * most the change of y over T / 64, i.e. by at most (max P - min P) / 64 and in practice
 * far less since y is smooth on that scale. Windows shorter than 64 samples use B = 1 (exact).
 *
 * Ripple definition (for the filtered and the full-band view alike):
 * ripple_rel = (max - min) / mean, dimensionless, peak to peak over the mean.
 * Filtered statistics count only outputs after the first window has filled; full-band
 * statistics count every sample pushed. The caller pushes only the analysed window.
 */
import { RunningStats, rippleRel, type StatsResult } from './stats';

export interface BoxcarOptions {
  /** sample spacing of the input stream, s */
  dt_s: number;
  /** detection bandwidth, Hz; the window is 1 / bandwidth */
  bandwidth_Hz: number;
  /** least number of blocks per window (default 64) */
  minBlocks?: number;
}

export interface BoxcarResult {
  /** statistics of the boxcar-filtered signal (after the first window filled) */
  filtered: StatsResult;
  /** (max - min) / mean of the filtered signal; NaN if undefined */
  ripple_rel: number;
  /** statistics of every sample pushed (full band) */
  fullBand: StatsResult;
  /** (max - min) / mean of the unfiltered signal; NaN if undefined */
  ripple_full_band_rel: number;
  /** quantised window nBlocks * B * dt, s */
  window_s: number;
  /** 1 / window_s, Hz */
  bandwidth_Hz: number;
  blockSamples: number;
  windowBlocks: number;
  /** completed windows after the first fill: filtered outputs / windowBlocks */
  windowsAfterFill: number;
  enoughWindows: boolean;
}

/** Streaming sliding-window average by block decimation; see the file comment. */
export class BoxcarFilter {
  readonly dt_s: number;
  /** samples per block, B */
  readonly blockSamples: number;
  /** blocks per window, nBlocks */
  readonly windowBlocks: number;
  /** quantised window, s */
  readonly window_s: number;

  private readonly ring: Float64Array;
  private ringPos = 0;
  private blocksFilled = 0;
  private ringSum = 0;
  private blockSum = 0;
  private blockCount = 0;
  private sinceResum = 0;
  private outputs = 0;
  private readonly filt = new RunningStats();
  private readonly raw = new RunningStats();

  constructor(opts: BoxcarOptions) {
    const { dt_s, bandwidth_Hz } = opts;
    const minBlocks = opts.minBlocks ?? 64;
    if (!(dt_s > 0) || !Number.isFinite(dt_s))
      throw new RangeError(`BoxcarFilter: dt_s must be positive, found ${dt_s}`);
    if (!(bandwidth_Hz > 0) || !Number.isFinite(bandwidth_Hz))
      throw new RangeError(`BoxcarFilter: bandwidth_Hz must be positive, found ${bandwidth_Hz}`);
    if (!(minBlocks >= 1)) throw new RangeError(`BoxcarFilter: minBlocks must be >= 1, found ${minBlocks}`);
    const windowSamples = 1 / (bandwidth_Hz * dt_s);
    const B = Math.max(1, Math.floor(windowSamples / minBlocks));
    const nBlocks = Math.max(1, Math.round(windowSamples / B));
    this.dt_s = dt_s;
    this.blockSamples = B;
    this.windowBlocks = nBlocks;
    this.window_s = nBlocks * B * dt_s;
    this.ring = new Float64Array(nBlocks);
  }

  /** Samples needed for the first fill plus three more windows (docs/model.md §4). */
  get requiredSamples(): number {
    return 4 * this.windowBlocks * this.blockSamples;
  }

  /** Adds one sample (same unit as the stream, e.g. W). Allocation-free. */
  push(x: number): void {
    this.raw.push(x);
    this.blockSum += x;
    if (++this.blockCount < this.blockSamples) return;
    const mean = this.blockSum / this.blockSamples;
    this.blockSum = 0;
    this.blockCount = 0;
    const ring = this.ring;
    const pos = this.ringPos;
    this.ringSum += mean - ring[pos];
    ring[pos] = mean;
    this.ringPos = pos + 1 === ring.length ? 0 : pos + 1;
    // A running sum drifts by rounding over 1e7 updates; re-add the ring once per lap.
    if (++this.sinceResum === ring.length) {
      this.sinceResum = 0;
      let s = 0;
      for (let i = 0; i < ring.length; i++) s += ring[i];
      this.ringSum = s;
    }
    if (this.blocksFilled < ring.length) {
      this.blocksFilled++;
      if (this.blocksFilled < ring.length) return;
    }
    this.outputs++;
    this.filt.push(this.ringSum / ring.length);
  }

  /** Whole windows seen after the first one filled (fractional). */
  windowsAfterFill(): number {
    // The first output closes the first window; windows after it are counted from there.
    return Math.max(0, this.outputs - 1) / this.windowBlocks;
  }

  /** True once at least three windows followed the first fill (docs/model.md §4). */
  enoughWindows(): boolean {
    return this.windowsAfterFill() >= 3;
  }

  /** The current filtered value (mean of the last window), NaN before the first fill. */
  current(): number {
    return this.blocksFilled < this.ring.length ? NaN : this.ringSum / this.ring.length;
  }

  /** Statistics and ripples so far. */
  result(): BoxcarResult {
    const f = this.filt.result();
    const r = this.raw.result();
    const windowsAfterFill = this.windowsAfterFill();
    return {
      filtered: f,
      ripple_rel: rippleRel(f.min, f.max, f.mean),
      fullBand: r,
      ripple_full_band_rel: rippleRel(r.min, r.max, r.mean),
      window_s: this.window_s,
      bandwidth_Hz: 1 / this.window_s,
      blockSamples: this.blockSamples,
      windowBlocks: this.windowBlocks,
      windowsAfterFill,
      enoughWindows: windowsAfterFill >= 3,
    };
  }
}
