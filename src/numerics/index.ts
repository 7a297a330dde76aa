/** Numerics room: steppers, interpolation, FFT, random numbers, windows. Knows nothing of lasers. */
export { createRk4, createEuler, createHeun, integrateFixed } from './rk4';
export type { OdeRhs, FixedStepper } from './rk4';
export { dopri5 } from './dopri5';
export type { Dopri5Options, Dopri5Result, Dopri5Status, Dopri5Step } from './dopri5';
export {
  PHI_SERIES_RADIUS,
  complexExpm1,
  phiSeries,
  phiClosed,
  phiFunctions,
  expStepLinear,
  expStepConstant,
  ExpStepCoefficients,
} from './expstep';
export { lagrange4, ringCubic, ringLinear, ComplexRing } from './interp';
export { Rng, createRng } from './rng';
export { isPow2, nextPow2, fftReal, fftComplex, ifftComplex } from './fft';
export { hannPeriodic } from './window';
export type { SpectralWindow } from './window';
