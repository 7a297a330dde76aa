/**
 * Drive harmonics for marking spectra: the turning points of the mirror modulate the gap
 * power at 2 f and its multiples, the drive itself at f, so the harmonics k f mark where
 * to look. // common practice, no source
 */

/**
 * The harmonics k f_drive, k = 1, 2, ..., up to and including maxFrequency_Hz (e.g. the
 * Nyquist frequency fs / 2), at most maxCount (default 1000) of them. Empty for a still
 * mirror (f <= 0 or not finite).
 */
export function driveHarmonics(
  driveFrequency_Hz: number,
  maxFrequency_Hz: number,
  maxCount = 1000,
): number[] {
  const out: number[] = [];
  if (!(driveFrequency_Hz > 0) || !Number.isFinite(driveFrequency_Hz)) return out;
  // A relative slack keeps the harmonic that sits exactly at the limit despite rounding.
  const limit = maxFrequency_Hz * (1 + 1e-12);
  for (let k = 1; k <= maxCount; k++) {
    const h = k * driveFrequency_Hz;
    if (h > limit) break;
    out.push(h);
  }
  return out;
}

/**
 * For each target frequency, the index of the nearest point of an ascending frequency
 * axis f_Hz (one-sided or centred), or -1 when the target lies outside the axis by more
 * than half the local spacing. Binary search: O(log n) per target.
 */
export function nearestBins(f_Hz: ArrayLike<number>, targets_Hz: ArrayLike<number>): number[] {
  const n = f_Hz.length;
  const out: number[] = new Array<number>(targets_Hz.length).fill(-1);
  if (n === 0) return out;
  const halfFirst = n > 1 ? (f_Hz[1] - f_Hz[0]) / 2 : 0;
  const halfLast = n > 1 ? (f_Hz[n - 1] - f_Hz[n - 2]) / 2 : 0;
  for (let t = 0; t < targets_Hz.length; t++) {
    const x = targets_Hz[t];
    if (x < f_Hz[0] - halfFirst || x > f_Hz[n - 1] + halfLast || Number.isNaN(x)) continue;
    let lo = 0;
    let hi = n - 1;
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if (f_Hz[mid] <= x) lo = mid;
      else hi = mid;
    }
    out[t] = Math.abs(f_Hz[hi] - x) < Math.abs(x - f_Hz[lo]) ? hi : lo;
  }
  return out;
}
