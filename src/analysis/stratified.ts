/**
 * Rest offsets by stratified random sampling (docs/model.md §4.2): the span (half a
 * wavelength) cut into N equal slices, one seeded uniform draw in each. The mean over the
 * offsets is then an unbiased estimate of the mean over all rest positions, and unlike
 * evenly spaced offsets it cannot alias with the bounce structure of a high-finesse gap.
 *
 * Refinement doubles the strata and keeps every point already drawn: each old slice is
 * cut in two halves; the old point lies in one of them and is, given that, uniform in it;
 * one new uniform draw goes into the other half. The result is again one uniform point
 * per slice of 2N slices, so lanes already stepped keep their work.
 */

/** A source of uniform doubles in [0, 1). */
export interface UniformSource {
  uniform(): number;
}

/** One uniform draw in each of `slices` equal slices of [0, span), in slice order. */
export function stratifiedDraw(slices: number, span: number, rng: UniformSource): number[] {
  if (!Number.isInteger(slices) || slices < 1)
    throw new RangeError(`slices must be a positive integer, got ${slices}`);
  const w = span / slices;
  return Array.from({ length: slices }, (_, i) => (i + rng.uniform()) * w);
}

/**
 * The new points that turn a stratified sample of N slices of [0, span) into one of 2N
 * slices: for each old point (in the order given) one uniform draw in the half of its
 * slice it does not occupy. `points` must hold one point per slice of N.
 */
export function refineStrata(points: number[], span: number, rng: UniformSource): number[] {
  const n = points.length;
  const half = span / (2 * n);
  const occupied = new Set<number>();
  for (const x of points) occupied.add(Math.min(n - 1, Math.max(0, Math.floor(x / (2 * half)))));
  if (occupied.size !== n) throw new RangeError('refineStrata: the points are not one per slice');
  return points.map((x) => {
    const k = Math.min(2 * n - 1, Math.max(0, Math.floor(x / half)));
    const other = k % 2 === 0 ? k + 1 : k - 1;
    return (other + rng.uniform()) * half;
  });
}

/**
 * Mean of samples and its standard error s / sqrt(n) (s the sample standard deviation,
 * n - 1 in the denominator), as for independent draws from one population; the error is
 * null for fewer than two samples.
 */
export function meanAndStderr(samples: number[]): { mean: number; stderr: number | null } {
  const n = samples.length;
  if (n === 0) return { mean: NaN, stderr: null };
  const mean = samples.reduce((a, b) => a + b, 0) / n;
  if (n < 2) return { mean, stderr: null };
  const ss = samples.reduce((a, x) => a + (x - mean) ** 2, 0);
  return { mean, stderr: Math.sqrt(ss / (n - 1) / n) };
}

/**
 * Mean of one value per stratum of a periodic span, given in stratum order, and its
 * standard error from second-order differences of neighbouring strata (docs/model.md §4.2):
 *
 *   v = sum_i (y_{i-1} - 2 y_i + y_{i+1})^2 / (6 n^2),   indices modulo n (the span is periodic).
 *
 * With one draw per stratum the variance within a stratum cannot be estimated from that
 * stratum alone; differences of neighbours can (Cochran, Sampling Techniques, 3rd ed.,
 * 1977, sec. 5A.12 and 8.11; Wolter, Introduction to Variance Estimation, 2nd ed., 2007,
 * ch. 8, difference estimators for systematic samples). Write y_i = mu(x_i) + e_i with the
 * draw x_i uniform in slice i and e_i independent noise. Where mu is linear across three
 * neighbouring slices the second difference cancels the trend and keeps the draws'
 * scatter: its variance is sigma_{i-1}^2 + 4 sigma_i^2 + sigma_{i+1}^2, about 6 sigma^2,
 * so v estimates sum_h sigma_h^2 / n^2, the variance of the stratified mean, without bias.
 * Curvature of mu over three slices adds a non-negative term (a sharp resonance narrower
 * than a slice adds much): the error is then overstated, never understated on average.
 * First differences would overstate a smooth curve's part sevenfold in variance (their
 * expectation carries the whole slope between neighbours), s / sqrt(n) by the full spread
 * of the means (of order n^2). Null for fewer than two strata; two strata (no curvature
 * to see) use s / sqrt(n).
 */
export function stratifiedMeanAndStderr(inStratumOrder: number[]): { mean: number; stderr: number | null } {
  const y = inStratumOrder;
  const n = y.length;
  if (n < 3) return meanAndStderr(y);
  const mean = y.reduce((a, b) => a + b, 0) / n;
  let sum = 0;
  for (let i = 0; i < n; i++) sum += (y[(i + n - 1) % n] - 2 * y[i] + y[(i + 1) % n]) ** 2;
  return { mean, stderr: Math.sqrt(sum / (6 * n * n)) };
}
