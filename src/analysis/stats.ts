/**
 * Streaming statistics of one scalar signal: count, mean, variance, min and max, updated
 * one sample at a time without storing the samples.
 *
 * Welford's update keeps the mean and the sum of squared deviations M2; unlike the
 * textbook sum-of-squares formula it does not lose the variance to cancellation when the
 * mean is large against the spread (a gap power of watts with microwatt ripple).
 * References: B. P. Welford, "Note on a method for calculating corrected sums of squares
 * and products", Technometrics 4, 419 (1962); D. E. Knuth, TAOCP vol. 2, 3rd ed.,
 * sec. 4.2.2; pairwise merge: T. F. Chan, G. H. Golub, R. J. LeVeque, "Algorithms for
 * computing the sample variance", Am. Stat. 37, 242 (1983), eq. 2.1.
 */

/** A snapshot of RunningStats. Variances are of the samples pushed (units of x squared). */
export interface StatsResult {
  count: number;
  mean: number;
  /** population variance, M2 / n (0 for n <= 1) */
  variance: number;
  /** sample variance, M2 / (n - 1) (0 for n <= 1) */
  sampleVariance: number;
  /** sqrt(variance) */
  std: number;
  min: number;
  max: number;
}

/** The extremes and the spread the running statistics share: min, max, std = sqrt(variance). */
abstract class RunningSpread {
  protected lo = Infinity;
  protected hi = -Infinity;
  abstract get variance(): number;
  /** sqrt of the population variance. */
  get std(): number {
    return Math.sqrt(this.variance);
  }
  get min(): number {
    return this.lo;
  }
  get max(): number {
    return this.hi;
  }
}

/**
 * Welford mean and variance plus min and max. `push` is allocation-free. With no sample
 * pushed, mean, variance and std are NaN and min/max are +Infinity/-Infinity (so a
 * caller can tell "no data" from a value). NaN samples are counted and poison the mean,
 * on purpose: a numerical failure must not look like data.
 */
export class RunningStats extends RunningSpread {
  private n = 0;
  private mu = 0;
  private m2 = 0;

  /** Adds one sample x (any unit). */
  push(x: number): void {
    const n = this.n + 1;
    this.n = n;
    const d = x - this.mu;
    this.mu += d / n;
    this.m2 += d * (x - this.mu);
    if (x < this.lo) this.lo = x;
    if (x > this.hi) this.hi = x;
  }

  /** Forgets every sample. */
  reset(): void {
    this.n = 0;
    this.mu = 0;
    this.m2 = 0;
    this.lo = Infinity;
    this.hi = -Infinity;
  }

  /** Adds all samples of another accumulator (Chan, Golub, LeVeque 1983, eq. 2.1). */
  merge(other: RunningStats): void {
    if (other.n === 0) return;
    if (this.n === 0) {
      this.n = other.n;
      this.mu = other.mu;
      this.m2 = other.m2;
      this.lo = other.lo;
      this.hi = other.hi;
      return;
    }
    const n = this.n + other.n;
    const d = other.mu - this.mu;
    this.mu += (d * other.n) / n;
    this.m2 += other.m2 + (d * d * this.n * other.n) / n;
    this.n = n;
    if (other.lo < this.lo) this.lo = other.lo;
    if (other.hi > this.hi) this.hi = other.hi;
  }

  get count(): number {
    return this.n;
  }
  get mean(): number {
    return this.n === 0 ? NaN : this.mu;
  }
  /** Population variance M2 / n; NaN with no sample. */
  get variance(): number {
    return this.n === 0 ? NaN : this.m2 / this.n;
  }
  /** Sample (Bessel-corrected) variance M2 / (n - 1); 0 for one sample, NaN for none. */
  get sampleVariance(): number {
    return this.n === 0 ? NaN : this.n === 1 ? 0 : this.m2 / (this.n - 1);
  }

  /** Snapshot of count, mean, variances, std, min, max. */
  result(): StatsResult {
    return {
      count: this.n,
      mean: this.mean,
      variance: this.variance,
      sampleVariance: this.sampleVariance,
      std: this.std,
      min: this.lo,
      max: this.hi,
    };
  }
}

/**
 * Weighted streaming mean and variance (weights w >= 0, e.g. variable time steps dt):
 * mean = sum w x / sum w, variance = sum w (x - mean)^2 / sum w (frequency weights,
 * no bias correction). Zero-weight samples change nothing but still count for min/max.
 * Reference: D. H. D. West, "Updating mean and variance estimates: an improved method",
 * Commun. ACM 22, 532 (1979).
 */
export class WeightedRunningStats extends RunningSpread {
  private wSum = 0;
  private mu = 0;
  private s = 0;
  private n = 0;

  /** Adds sample x with weight w (w >= 0; a negative weight is treated as 0). */
  push(x: number, w: number): void {
    this.n++;
    if (x < this.lo) this.lo = x;
    if (x > this.hi) this.hi = x;
    if (!(w > 0)) return;
    const wSum = this.wSum + w;
    const d = x - this.mu;
    const r = (d * w) / wSum;
    this.mu += r;
    this.s += this.wSum * d * r;
    this.wSum = wSum;
  }

  reset(): void {
    this.wSum = 0;
    this.mu = 0;
    this.s = 0;
    this.n = 0;
    this.lo = Infinity;
    this.hi = -Infinity;
  }

  get count(): number {
    return this.n;
  }
  get weightSum(): number {
    return this.wSum;
  }
  /** Weighted mean; NaN while the weight sum is 0. */
  get mean(): number {
    return this.wSum > 0 ? this.mu : NaN;
  }
  /** Weighted population variance; NaN while the weight sum is 0. */
  get variance(): number {
    return this.wSum > 0 ? this.s / this.wSum : NaN;
  }

  /** Snapshot; sampleVariance equals variance here (frequency weights). */
  result(): StatsResult {
    const v = this.variance;
    return {
      count: this.n,
      mean: this.mean,
      variance: v,
      sampleVariance: v,
      std: Math.sqrt(v),
      min: this.lo,
      max: this.hi,
    };
  }
}

/**
 * Relative peak-to-peak ripple (max - min) / mean (dimensionless), the one definition
 * used for both the in-band and the full-band ripple of summary.json. NaN when the mean
 * is not positive or there is no data (the caller writes null).
 */
export function rippleRel(min: number, max: number, mean: number): number {
  if (!(mean > 0) || !Number.isFinite(min) || !Number.isFinite(max)) return NaN;
  return (max - min) / mean;
}
