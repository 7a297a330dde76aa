/**
 * Mode hops from the dominant-mode index stream (docs/model.md §4.3): a hop counts only
 * when a new mode stays dominant for longer than the dwell time. Shorter excursions
 * (chatter near a crossing of two mode powers) are ignored, and an excursion that returns
 * to the accepted mode within the dwell is not a hop. The caller supplies, per sample, the
 * array index (0 .. modeCount - 1) of the strongest mode.
 *
 * The accepted mode starts undefined: the first mode to hold for longer than the dwell
 * becomes the accepted one without counting a hop, so a run that starts in the middle of
 * chatter does not begin with a false hop. A hop is dated at the sample where the new
 * mode became (and then stayed) dominant, not where the dwell ran out.
 *
 * With the mode powers (pushPowers) a margin applies too (docs/model.md §4.3): once a mode
 * is accepted, another one counts as leading only while its power exceeds the accepted
 * mode's by the factor 1 + margin (0.2: 20 % in power). Two modes of nearly equal power
 * that trade the lead back and forth are then not hopping.
 */

export interface HopDetectorOptions {
  /** sample spacing, s */
  dt_s: number;
  /** a new mode must stay dominant for longer than this, s (0: every change counts) */
  dwell_s: number;
  /** number of modes (indices 0 .. modeCount - 1) */
  modeCount: number;
  /** drive frequency, Hz; null or 0 for a still mirror (no phases, no per-period rate) */
  driveFrequency_Hz: number | null;
  /** drive phase phi0 of x = x0 + A sin(2 pi f t + phi0) at t = 0, rad (default 0) */
  drivePhase_rad?: number;
  /** absolute time of the first sample pushed, s (default 0), for the drive phase */
  t0_s?: number;
  /** hop times kept (counting goes on beyond; default 10000) */
  maxStoredHops?: number;
  /** bins of the phase histogram over one drive period (default 24) */
  phaseBins?: number;
  /**
   * relative power margin a new mode must lead the accepted one by (pushPowers only;
   * default 0: the strongest mode leads)
   */
  margin?: number;
}

export interface HopResult {
  hops: number;
  /** absolute times of the first stored hops, s */
  hopTimes_s: number[];
  hopFrom: number[];
  hopTo: number[];
  /** true when more hops occurred than were stored */
  hopTimesTruncated: boolean;
  /** fraction of samples in which each mode was the dominant one (raw, before the dwell rule) */
  occupation: number[];
  /** hop counts per drive-phase bin; bin k covers phase [k, k + 1) * 2 pi / bins of sin(2 pi f t + phi0) */
  phaseHistogram: number[];
  duration_s: number;
  hopsPerSecond: number;
  /** hops per drive period; null for a still mirror */
  hopsPerPeriod: number | null;
  /** the accepted mode at the end, -1 if none held for longer than the dwell */
  finalMode: number;
}

/** Streaming mode-hop counter with a dwell rule; see the file comment. `push` is allocation-free. */
export class HopDetector {
  private readonly dt: number;
  private readonly dwellSamples: number;
  private readonly f: number;
  private readonly phase0: number;
  private readonly t0: number;
  private readonly occ: Float64Array;
  private readonly hist: Float64Array;
  private readonly times: Float64Array;
  private readonly from: Int32Array;
  private readonly to: Int32Array;
  private n = 0;
  private current = -1;
  private candidate = -1;
  private candidateStart = 0;
  private candidateRun = 0;
  private hopCount = 0;
  private readonly factor: number;

  constructor(opts: HopDetectorOptions) {
    if (!(opts.dt_s > 0)) throw new RangeError(`HopDetector: dt_s must be positive, found ${opts.dt_s}`);
    if (!(opts.dwell_s >= 0))
      throw new RangeError(`HopDetector: dwell_s must be >= 0, found ${opts.dwell_s}`);
    if (!(Number.isInteger(opts.modeCount) && opts.modeCount >= 1))
      throw new RangeError(`HopDetector: modeCount must be a positive integer, found ${opts.modeCount}`);
    const margin = opts.margin ?? 0;
    if (!(margin >= 0)) throw new RangeError(`HopDetector: margin must be >= 0, found ${margin}`);
    this.factor = 1 + margin;
    this.dt = opts.dt_s;
    // "longer than the dwell": a run of k samples lasts k dt; it qualifies when k dt > dwell.
    this.dwellSamples = Math.floor(opts.dwell_s / opts.dt_s + 1e-9) + 1;
    this.f = opts.driveFrequency_Hz !== null && opts.driveFrequency_Hz > 0 ? opts.driveFrequency_Hz : 0;
    this.phase0 = opts.drivePhase_rad ?? 0;
    this.t0 = opts.t0_s ?? 0;
    this.occ = new Float64Array(opts.modeCount);
    this.hist = new Float64Array(opts.phaseBins ?? 24);
    const cap = opts.maxStoredHops ?? 10000;
    this.times = new Float64Array(cap);
    this.from = new Int32Array(cap);
    this.to = new Int32Array(cap);
  }

  /** Adds the dominant mode index of the next sample (an out-of-range index throws). */
  push(mode: number): void {
    if (!(mode >= 0 && mode < this.occ.length))
      throw new RangeError(`HopDetector: mode index ${mode} outside 0..${this.occ.length - 1}`);
    const i = this.n++;
    this.occ[mode]++;
    if (mode === this.current) {
      this.candidate = -1;
      return;
    }
    if (mode !== this.candidate) {
      this.candidate = mode;
      this.candidateStart = i;
      this.candidateRun = 0;
    }
    if (++this.candidateRun < this.dwellSamples) return;
    if (this.current >= 0) this.recordHop(this.current, mode, this.candidateStart);
    this.current = mode;
    this.candidate = -1;
  }

  /**
   * Adds the next sample from the mode powers powers[start .. start + modeCount - 1] (W or
   * any common scale): the strongest mode leads, unless a mode is accepted and the
   * strongest exceeds it by less than the margin, in which case the accepted mode holds.
   * Occupation counts the strongest mode, as push does.
   */
  pushPowers(powers: ArrayLike<number>, start = 0): void {
    const M = this.occ.length;
    let best = 0;
    let bestP = powers[start];
    for (let m = 1; m < M; m++) {
      const v = powers[start + m];
      if (v > bestP) {
        bestP = v;
        best = m;
      }
    }
    const cur = this.current;
    if (cur >= 0 && best !== cur && !(bestP > this.factor * powers[start + cur])) {
      // within the margin: the accepted mode holds (occupation still records the strongest)
      this.occ[best]++;
      this.n++;
      this.candidate = -1;
      return;
    }
    this.push(best);
  }

  private recordHop(from: number, to: number, sample: number): void {
    const t = this.t0 + sample * this.dt;
    const k = this.hopCount++;
    if (k < this.times.length) {
      this.times[k] = t;
      this.from[k] = from;
      this.to[k] = to;
    }
    if (this.f > 0) {
      let ph = this.f * t + this.phase0 / (2 * Math.PI);
      ph -= Math.floor(ph);
      const bins = this.hist.length;
      let b = Math.floor(ph * bins);
      if (b >= bins) b = bins - 1;
      this.hist[b]++;
    }
  }

  get hops(): number {
    return this.hopCount;
  }

  result(): HopResult {
    const stored = Math.min(this.hopCount, this.times.length);
    const duration = this.n * this.dt;
    const occupation = Array.from(this.occ, (c) => (this.n > 0 ? c / this.n : 0));
    return {
      hops: this.hopCount,
      hopTimes_s: Array.from(this.times.subarray(0, stored)),
      hopFrom: Array.from(this.from.subarray(0, stored)),
      hopTo: Array.from(this.to.subarray(0, stored)),
      hopTimesTruncated: this.hopCount > stored,
      occupation,
      phaseHistogram: Array.from(this.hist),
      duration_s: duration,
      hopsPerSecond: duration > 0 ? this.hopCount / duration : 0,
      hopsPerPeriod: this.f > 0 ? (duration > 0 ? this.hopCount / (duration * this.f) : 0) : null,
      finalMode: this.current,
    };
  }
}
