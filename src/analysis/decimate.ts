/**
 * Min-max decimation of several channels on one time axis, for plotting long runs: the
 * stream is cut into a fixed number of buckets (known in advance from the total sample
 * count), and each bucket keeps, per channel, its minimum and its maximum in the order
 * they occurred, so an isolated spike of one sample survives. // common practice, no source
 *
 * Output: at most 2 points per bucket. A bucket of two or more samples gives two points
 * at the times of its first and third quarter, t0 + (s + (n - 1)/4) dt and
 * t0 + (s + 3 (n - 1)/4) dt (s its first sample, n its length), shared by all channels;
 * each channel puts its earlier extreme at the first point and the later one at the
 * second. The plotted time of an extreme is therefore off by at most half a bucket, the
 * price of one shared axis. A one-sample bucket gives one point at its exact time.
 * A bucket whose values were all NaN reports NaN.
 */
import type { TraceSeries, TraceSet } from '../results/artifacts';

export interface ChannelInfo {
  key: string;
  label: string;
  unit: string;
}

export interface MinMaxDecimatorOptions {
  channels: ChannelInfo[];
  /** samples that will be pushed in all */
  totalSamples: number;
  /** buckets wanted (fewer when totalSamples is smaller) */
  buckets: number;
  /** sample spacing, s */
  dt_s: number;
  /** time of the first sample on the output axis, s (default 0) */
  t0_s?: number;
}

/** Streaming min-max decimator; `push` is allocation-free. */
export class MinMaxDecimator {
  readonly channels: readonly ChannelInfo[];
  readonly totalSamples: number;
  readonly bucketSize: number;
  readonly bucketCount: number;
  private readonly dt: number;
  private readonly t0: number;
  private readonly nc: number;
  /** per bucket and channel: min, argmin, max, argmax */
  private readonly lo: Float64Array;
  private readonly loAt: Float64Array;
  private readonly hi: Float64Array;
  private readonly hiAt: Float64Array;
  private n = 0;

  constructor(opts: MinMaxDecimatorOptions) {
    const { totalSamples, buckets } = opts;
    if (opts.channels.length === 0) throw new RangeError('MinMaxDecimator: at least one channel is needed');
    if (!(Number.isInteger(totalSamples) && totalSamples >= 1))
      throw new RangeError(`MinMaxDecimator: totalSamples must be a positive integer, found ${totalSamples}`);
    if (!(Number.isInteger(buckets) && buckets >= 1))
      throw new RangeError(`MinMaxDecimator: buckets must be a positive integer, found ${buckets}`);
    if (!(opts.dt_s > 0)) throw new RangeError(`MinMaxDecimator: dt_s must be positive, found ${opts.dt_s}`);
    this.channels = opts.channels.slice();
    this.nc = opts.channels.length;
    this.totalSamples = totalSamples;
    this.bucketSize = Math.ceil(totalSamples / buckets);
    this.bucketCount = Math.ceil(totalSamples / this.bucketSize);
    this.dt = opts.dt_s;
    this.t0 = opts.t0_s ?? 0;
    const m = this.bucketCount * this.nc;
    this.lo = new Float64Array(m).fill(Infinity);
    this.hi = new Float64Array(m).fill(-Infinity);
    this.loAt = new Float64Array(m);
    this.hiAt = new Float64Array(m);
  }

  /** Adds one sample of every channel (values[c] for channel c). Throws past totalSamples. */
  push(values: ArrayLike<number>): void {
    const i = this.n;
    if (i >= this.totalSamples)
      throw new RangeError(`MinMaxDecimator: more than the announced ${this.totalSamples} samples`);
    this.n = i + 1;
    const base = Math.floor(i / this.bucketSize) * this.nc;
    for (let c = 0; c < this.nc; c++) this.keepExtreme(base + c, values[c], i);
  }

  /** Adds one sample of a one-channel decimator. */
  pushScalar(v: number): void {
    const i = this.n;
    if (i >= this.totalSamples)
      throw new RangeError(`MinMaxDecimator: more than the announced ${this.totalSamples} samples`);
    if (this.nc !== 1) throw new RangeError('MinMaxDecimator: pushScalar needs exactly one channel');
    this.n = i + 1;
    this.keepExtreme(Math.floor(i / this.bucketSize), v, i);
  }

  /** Sample i of value v against the extremes of slot j (bucket x channel); NaN is never one. */
  private keepExtreme(j: number, v: number, i: number): void {
    if (v < this.lo[j]) {
      this.lo[j] = v;
      this.loAt[j] = i;
    }
    if (v > this.hi[j]) {
      this.hi[j] = v;
      this.hiAt[j] = i;
    }
  }

  get samples(): number {
    return this.n;
  }

  /** The decimated traces of the samples pushed so far (buckets not yet reached are left out). */
  result(drivePeriod_s: number | null = null): TraceSet {
    const t: number[] = [];
    const cols: number[][] = this.channels.map(() => []);
    const filledBuckets = Math.ceil(this.n / this.bucketSize);
    for (let b = 0; b < filledBuckets; b++) {
      const s = b * this.bucketSize;
      const len = Math.min(this.bucketSize, this.n - s);
      if (len === 1) {
        t.push(this.t0 + s * this.dt);
        for (let c = 0; c < this.nc; c++) {
          const j = b * this.nc + c;
          cols[c].push(this.lo[j] === Infinity ? NaN : this.lo[j]);
        }
        continue;
      }
      t.push(this.t0 + (s + (len - 1) / 4) * this.dt);
      t.push(this.t0 + (s + (3 * (len - 1)) / 4) * this.dt);
      for (let c = 0; c < this.nc; c++) {
        const j = b * this.nc + c;
        const lo = this.lo[j];
        const hi = this.hi[j];
        if (lo === Infinity) {
          cols[c].push(NaN, NaN);
        } else if (this.loAt[j] <= this.hiAt[j]) {
          cols[c].push(lo, hi);
        } else {
          cols[c].push(hi, lo);
        }
      }
    }
    const series: TraceSeries[] = this.channels.map((ch, c) => ({
      key: ch.key,
      label: ch.label,
      unit: ch.unit,
      values: cols[c],
    }));
    return { t_s: t, series, drive_period_s: drivePeriod_s };
  }
}
