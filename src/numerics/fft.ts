/**
 * The one typed wrapper around the fft.js package (radix-4, power-of-two sizes; its own
 * types are `any`). Spectra are interleaved complex arrays [Re X0, Im X0, Re X1, Im X1, ...]
 * of length 2N held in plain number[] arrays, which fft.js handled faster than
 * Float64Array on the project machines (DEPENDENCIES.md); inputs may be any ArrayLike.
 *
 * Convention (the DFT definition of A. V. Oppenheim, R. W. Schafer, Discrete-Time Signal
 * Processing, 3rd ed., 2010, chapter 8, definition of the DFT):
 *   forward X_k = sum_{n=0}^{N-1} x_n e^{-2 pi i k n / N}   (unnormalised),
 *   inverse x_n = (1/N) sum_{k=0}^{N-1} X_k e^{+2 pi i k n / N}.
 */

import FFT = require('fft.js');

/** Typed view of the part of fft.js used here. */
interface FftEngine {
  readonly size: number;
  createComplexArray(): number[];
  realTransform(out: number[], data: ArrayLike<number>): void;
  completeSpectrum(spectrum: number[]): void;
  transform(out: number[], data: ArrayLike<number>): void;
  inverseTransform(out: number[], data: ArrayLike<number>): void;
}

// one planner (twiddle table) per size, built on first use; not touched in hot loops
const engines = new Map<number, FftEngine>();

/** True when n is a positive integer power of two (1, 2, 4, ...). */
export function isPow2(n: number): boolean {
  return Number.isInteger(n) && n >= 1 && n <= 2 ** 30 && (n & (n - 1)) === 0;
}

/** Smallest power of two >= n (n >= 1; nextPow2(1) = 1). RangeError for n < 1 or n > 2^30. */
export function nextPow2(n: number): number {
  if (!(n >= 1) || n > 2 ** 30) throw new RangeError(`nextPow2 needs 1 <= n <= 2^30, got ${n}`);
  let p = 1;
  while (p < n) p *= 2;
  return p;
}

function engineFor(size: number, what: string): FftEngine | null {
  if (!isPow2(size)) {
    throw new Error(
      `${what}: FFT size must be a power of two (1, 2, 4, ...), got ${size}; pad to nextPow2(${size}) = ${
        size >= 1 && size <= 2 ** 30 ? nextPow2(size) : '?'
      }`,
    );
  }
  if (size === 1) return null; // fft.js refuses size 1; the transform of one sample is itself
  let e = engines.get(size);
  if (!e) {
    e = new FFT(size) as unknown as FftEngine;
    engines.set(size, e);
  }
  return e;
}

function outputArray(out: number[] | undefined, length: number, what: string): number[] {
  if (out === undefined) return new Array<number>(length).fill(0);
  if (out.length !== length)
    throw new Error(`${what}: output array has length ${out.length}, expected ${length}`);
  return out;
}

/**
 * Full complex spectrum X_k, k = 0..N-1, of N real samples x (N a power of two), as an
 * interleaved array of length 2N (X_{N-k} = conj X_k). Uses fft.js realTransform, which
 * fills bins 0..N/2, then completeSpectrum for the mirrored half. out (optional, length 2N,
 * must not be x) is reused to avoid allocation; returns the spectrum array.
 */
export function fftReal(x: ArrayLike<number>, out?: number[]): number[] {
  const n = x.length;
  const e = engineFor(n, 'fftReal');
  const o = outputArray(out, 2 * n, 'fftReal');
  if ((o as unknown) === (x as unknown))
    throw new Error('fftReal: input and output must be different arrays');
  if (!e) {
    o[0] = x[0];
    o[1] = 0;
    return o;
  }
  e.realTransform(o, x);
  e.completeSpectrum(o);
  return o;
}

/**
 * Forward DFT of N complex samples given interleaved (length 2N, N a power of two):
 * X_k = sum_n x_n e^{-2 pi i k n / N}, unnormalised. out (optional, length 2N) must be a
 * different array from x (fft.js cannot transform in place); returns it.
 */
export function fftComplex(x: ArrayLike<number>, out?: number[]): number[] {
  return complexTransform(x, out, false);
}

/**
 * Inverse DFT of N complex bins given interleaved (length 2N, N a power of two):
 * x_n = (1/N) sum_k X_k e^{+2 pi i k n / N} (fft.js divides by N), so
 * ifftComplex(fftComplex(x)) = x. out must differ from X; returns it.
 */
export function ifftComplex(spectrum: ArrayLike<number>, out?: number[]): number[] {
  return complexTransform(spectrum, out, true);
}

function complexTransform(x: ArrayLike<number>, out: number[] | undefined, inverse: boolean): number[] {
  const what = inverse ? 'ifftComplex' : 'fftComplex';
  if (x.length % 2 !== 0)
    throw new Error(`${what}: interleaved complex input must have even length, got ${x.length}`);
  const n = x.length / 2;
  const e = engineFor(n, what);
  const o = outputArray(out, 2 * n, what);
  if ((o as unknown) === (x as unknown))
    throw new Error(`${what}: input and output must be different arrays`);
  if (!e) {
    o[0] = x[0];
    o[1] = x[1];
    return o;
  }
  if (inverse) e.inverseTransform(o, x);
  else e.transform(o, x);
  return o;
}
