/**
 * Internal to the analysis room: the two power transforms the averaged spectra need,
 * built on the numerics room's fft.js wrapper (src/numerics/fft.ts; forward transform
 * unnormalised, X_k = sum_n x_n exp(-2 pi i k n / N), power-of-two sizes). Buffers are
 * plain arrays allocated once (fft.js is faster on them, DEPENDENCIES.md), so a
 * transform allocates nothing.
 */
import { fftComplex, fftReal, isPow2 } from '../numerics/fft';

/** True for 2, 4, 8, ... (the sizes the spectra accept). */
export function isPowerOfTwo(n: number): boolean {
  return n >= 2 && isPow2(n);
}

/** The size check and the once-allocated buffers of both transforms; `valuesPerSample` is 1 for real input, 2 for complex. */
abstract class PowerTransformBuffers {
  readonly size: number;
  protected readonly inBuf: number[];
  protected readonly outBuf: number[];

  constructor(size: number, valuesPerSample: number) {
    if (!isPowerOfTwo(size)) throw new RangeError(`FFT size must be a power of two >= 2, found ${size}`);
    this.size = size;
    this.inBuf = new Array<number>(valuesPerSample * size).fill(0);
    this.outBuf = new Array<number>(2 * size).fill(0);
  }
}

/** |X_k|^2 of a real segment for k = 0 .. N/2, into `out` (length >= N/2 + 1). */
export class RealPowerTransform extends PowerTransformBuffers {
  constructor(size: number) {
    super(size, 1);
  }

  /** Transforms x[0..N-1] (not modified) and writes |X_k|^2, k = 0..N/2, to out. */
  power(x: ArrayLike<number>, out: Float64Array): void {
    const n = this.size;
    const a = this.inBuf;
    for (let i = 0; i < n; i++) a[i] = x[i];
    const o = fftReal(a, this.outBuf);
    for (let k = 0; k <= n >> 1; k++) {
      const re = o[2 * k];
      const im = o[2 * k + 1];
      out[k] = re * re + im * im;
    }
  }
}

/** |X_k|^2 of a complex segment for k = 0 .. N-1 (natural order), into `out` (length >= N). */
export class ComplexPowerTransform extends PowerTransformBuffers {
  constructor(size: number) {
    super(size, 2);
  }

  /** Transforms re + i im (not modified) and writes |X_k|^2, k = 0..N-1, to out. */
  power(re: ArrayLike<number>, im: ArrayLike<number>, out: Float64Array): void {
    const n = this.size;
    const a = this.inBuf;
    for (let i = 0; i < n; i++) {
      a[2 * i] = re[i];
      a[2 * i + 1] = im[i];
    }
    const o = fftComplex(a, this.outBuf);
    for (let k = 0; k < n; k++) {
      const x = o[2 * k];
      const y = o[2 * k + 1];
      out[k] = x * x + y * y;
    }
  }
}
