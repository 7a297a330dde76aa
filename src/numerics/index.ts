/** Numerics room: delay lines, FFT, random numbers, windows. Knows nothing of lasers. */
export {
  ComplexDelayLines,
  lagrange4Newest,
  lagrangeCentredN,
  lagrangeCentredGain,
  READ_POINTS,
} from './delay-line';
export { Rng, createRng } from './rng';
export { isPow2, nextPow2, fftReal, fftComplex, ifftComplex } from './fft';
export { hannPeriodic } from './window';
export type { SpectralWindow } from './window';
