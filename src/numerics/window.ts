/**
 * Hann window for spectral estimation (Welch averaging) with the sums needed to normalise
 * power spectra.
 *
 * References: F. J. Harris, "On the use of windows for harmonic analysis with the discrete
 * Fourier transform", Proc. IEEE 66, 51 (1978) (Hann window, periodic "DFT-even" form,
 * equivalent noise bandwidth 1.5 bins); G. Heinzel, A. Rudiger, R. Schilling, "Spectrum and
 * spectral density estimation by the Discrete Fourier transform (DFT), including a
 * comprehensive list of window functions and some new flat-top windows", Max-Planck-
 * Institut fur Gravitationsphysik, 2002 (sums S1, S2 and the PSD/PS normalisations).
 */

/** A window with its normalisation sums. */
export interface SpectralWindow {
  /** window values w_j, j = 0..N-1 (dimensionless) */
  readonly w: Float64Array;
  /** S1 = sum_j w_j */
  readonly sum: number;
  /** S2 = sum_j w_j^2 */
  readonly sumSq: number;
  /** equivalent noise bandwidth in bins, N S2 / S1^2 (1.5 for Hann) */
  readonly enbwBins: number;
}

/**
 * Periodic ("DFT-even") Hann window of length N: w_j = 1/2 - 1/2 cos(2 pi j / N),
 * j = 0..N-1 (Harris 1978), the form whose 50 %-overlapped copies sum to a constant, as
 * Welch averaging wants. Returns w with S1 = sum w (= N/2 for N >= 2), S2 = sum w^2
 * (= 3N/8 for N >= 3; N = 2 gives w = [0, 1], S2 = 1) and ENBW = N S2 / S1^2 bins (1.5),
 * so that a one-sided power spectral density (units^2/Hz, sampling rate f_s in Hz) is
 * PSD_k = 2 |X_k|^2 / (f_s S2) and a one-sided power spectrum PS_k = 2 |X_k|^2 / S1^2
 * (Heinzel et al. 2002, "scaling the results"; X_k = DFT of w_j x_j). N = 1 would give
 * w = [0], which normalises nothing: RangeError. The sums are accumulated from the values,
 * not taken from the closed forms, so they hold for any N.
 */
export function hannPeriodic(n: number): SpectralWindow {
  if (!Number.isInteger(n) || n < 2)
    throw new RangeError(`hannPeriodic needs an integer length >= 2, got ${n}`);
  const w = new Float64Array(n);
  let s1 = 0,
    s2 = 0;
  const k = (2 * Math.PI) / n;
  for (let j = 0; j < n; j++) {
    const v = 0.5 - 0.5 * Math.cos(k * j);
    w[j] = v;
    s1 += v;
    s2 += v * v;
  }
  return { w, sum: s1, sumSq: s2, enbwBins: (n * s2) / (s1 * s1) };
}
