/**
 * The return-mirror motion x(t) of docs/model.md §1: the actuator waveform (sine,
 * triangle, two tones, or off) about the rest position x0, plus a slow drift and an
 * optional small random vibration.
 *
 *   sine      x = x0 + A sin(theta),                  theta = 2 pi f t + phi0
 *   triangle  x = x0 + A tri(theta), tri = (2/pi) arcsin(sin theta): constant speed 4 A f,
 *             peak-to-peak 2A, turning points where the sine has them (theta = pi/2, 3 pi/2)
 *   two-tone  x = x0 + A sin(theta) + A2 sin(2 pi f2 t + phi2)
 *   off       x = x0
 * and for every waveform + drift * t + vibration(t).
 *
 * The drift and the vibration are not the actuator's doing (a creeping mount, a noisy
 * table), so they apply with `waveform: off` too; a caller that wants a mirror at rest
 * passes a spec with drift 0 and no vibration.
 *
 * createDrive() is built for the hot loop: all tables are preallocated Float64Arrays,
 * position(t) and velocity(t) allocate nothing. The helpers below it are pure functions
 * of the spec and describe the actuator waveform alone (drift and vibration excluded).
 */
import type { DriveSpec } from '../scenario/schema';

const TWO_PI = 2 * Math.PI;

/** Number of sines that make up the random vibration. */
export const VIBRATION_TONES = 16;

/**
 * A 32-bit integer hash (the "lowbias32" mixer published by C. Wellons, hash-prospector,
 * 2018, public domain): xor-shift / multiply rounds with good avalanche. Deterministic
 * across platforms because it uses only Math.imul and 32-bit shifts.
 */
function hash32(x: number): number {
  x = x >>> 0;
  x ^= x >>> 16;
  x = Math.imul(x, 0x7feb352d);
  x ^= x >>> 15;
  x = Math.imul(x, 0x846ca68b);
  x ^= x >>> 16;
  return x >>> 0;
}

/**
 * The k-th uniform number in [0, 1) of the stream named by seed: hash of (seed, k).
 * Counter-based, so each draw is independent of the order in which draws are made.
 * Stream layout: k = 2 j is tone j's frequency jitter, k = 2 j + 1 its phase.
 */
function uniform(seed: number, k: number): number {
  const h = hash32(hash32(seed >>> 0) ^ Math.imul(k + 1, 0x9e3779b9));
  return h / 4294967296;
}

/**
 * Fraction of the triangle's period in [0, 1): 0 at the lower turning point
 * (theta = -pi/2), 1/2 at the upper one. One function, so that position and velocity
 * cannot disagree on where the turning points are.
 */
function trianglePhase(theta: number): number {
  const p = theta / TWO_PI + 0.25;
  return p - Math.floor(p);
}

/**
 * One mirror motion, ready for the time loop. Fields are fixed at construction; the
 * vibration tables are Float64Arrays of length VIBRATION_TONES (all zero amplitude when
 * the spec has no vibration).
 */
export class Drive {
  /** 0 sine, 1 triangle, 2 two-tone, 3 off */
  readonly kind: number;
  readonly offset_m: number;
  readonly drift_m_s: number;
  readonly amplitude_m: number;
  readonly omega_rad_s: number;
  readonly phase_rad: number;
  readonly secondAmplitude_m: number;
  readonly secondOmega_rad_s: number;
  readonly secondPhase_rad: number;
  /** vibration tone amplitudes (m), angular frequencies (rad/s), phases (rad) */
  readonly vibAmplitude_m: Float64Array;
  readonly vibOmega_rad_s: Float64Array;
  readonly vibPhase_rad: Float64Array;
  readonly hasVibration: boolean;

  constructor(spec: DriveSpec, seed: number) {
    this.kind =
      spec.waveform === 'sine' ? 0 : spec.waveform === 'triangle' ? 1 : spec.waveform === 'two-tone' ? 2 : 3;
    this.offset_m = spec.offset;
    this.drift_m_s = spec.drift;
    this.amplitude_m = this.kind === 3 ? 0 : spec.amplitude;
    this.omega_rad_s = TWO_PI * spec.frequency;
    this.phase_rad = spec.phase;
    this.secondAmplitude_m = this.kind === 2 ? spec.second_amplitude : 0;
    this.secondOmega_rad_s = TWO_PI * spec.second_frequency;
    this.secondPhase_rad = spec.second_phase;
    this.vibAmplitude_m = new Float64Array(VIBRATION_TONES);
    this.vibOmega_rad_s = new Float64Array(VIBRATION_TONES);
    this.vibPhase_rad = new Float64Array(VIBRATION_TONES);
    const vib = spec.vibration;
    this.hasVibration = vib !== undefined && vib.rms > 0;
    if (vib !== undefined && vib.rms > 0) {
      // N sines of equal amplitude a at distinct frequencies have rms a sqrt(N / 2).
      const a = vib.rms * Math.sqrt(2 / VIBRATION_TONES);
      for (let j = 0; j < VIBRATION_TONES; j++) {
        // One tone per band of width bandwidth / N, placed at random inside its band:
        // spread evenly up to the bandwidth, yet no fixed comb of lines.
        const f = (vib.bandwidth * (j + uniform(seed, 2 * j))) / VIBRATION_TONES;
        this.vibAmplitude_m[j] = a;
        this.vibOmega_rad_s[j] = TWO_PI * f;
        this.vibPhase_rad[j] = TWO_PI * uniform(seed, 2 * j + 1);
      }
    }
  }

  /** Mirror displacement x(t) in m (offset, waveform, drift and vibration). t in s. */
  position(t: number): number {
    let x = this.offset_m + this.drift_m_s * t;
    const kind = this.kind;
    if (kind !== 3) {
      const theta = this.omega_rad_s * t + this.phase_rad;
      if (kind === 1) {
        const p = trianglePhase(theta);
        x += this.amplitude_m * (p < 0.5 ? 4 * p - 1 : 3 - 4 * p);
      } else {
        x += this.amplitude_m * Math.sin(theta);
        if (kind === 2)
          x += this.secondAmplitude_m * Math.sin(this.secondOmega_rad_s * t + this.secondPhase_rad);
      }
    }
    if (this.hasVibration) {
      const a = this.vibAmplitude_m;
      const w = this.vibOmega_rad_s;
      const ph = this.vibPhase_rad;
      for (let j = 0; j < VIBRATION_TONES; j++) x += a[j] * Math.sin(w[j] * t + ph[j]);
    }
    return x;
  }

  /**
   * Mirror velocity dx/dt in m/s at t (s). For the triangle, at a turning instant itself
   * the speed of the segment that starts there is returned.
   */
  velocity(t: number): number {
    let v = this.drift_m_s;
    const kind = this.kind;
    if (kind !== 3) {
      const theta = this.omega_rad_s * t + this.phase_rad;
      if (kind === 1) {
        const p = trianglePhase(theta);
        // d/dt of A (4p - 1) with dp/dt = f: 4 A f.
        const speed = (4 * this.amplitude_m * this.omega_rad_s) / TWO_PI;
        v += p < 0.5 ? speed : -speed;
      } else {
        v += this.amplitude_m * this.omega_rad_s * Math.cos(theta);
        if (kind === 2) {
          v +=
            this.secondAmplitude_m *
            this.secondOmega_rad_s *
            Math.cos(this.secondOmega_rad_s * t + this.secondPhase_rad);
        }
      }
    }
    if (this.hasVibration) {
      const a = this.vibAmplitude_m;
      const w = this.vibOmega_rad_s;
      const ph = this.vibPhase_rad;
      for (let j = 0; j < VIBRATION_TONES; j++) v += a[j] * w[j] * Math.cos(w[j] * t + ph[j]);
    }
    return v;
  }
}

/**
 * Build the mirror motion of a drive spec (SI) for the time loop.
 * @param spec the scenario's `drive` section (m, Hz, rad, m/s)
 * @param seed integer seed of the vibration phases and frequencies (the caller derives it
 *   from simulation.seed); the same seed gives the same motion on every platform.
 * @returns a Drive whose position(t) (m) and velocity(t) (m/s) allocate nothing.
 */
export function createDrive(spec: DriveSpec, seed: number): Drive {
  return new Drive(spec, seed);
}

/**
 * Peak mirror speed of the actuator waveform, m/s (drift and vibration excluded).
 *   sine: 2 pi f A;  triangle: 4 A f;  off: 0;
 *   two-tone: 2 pi f A + 2 pi f2 A2, the supremum over time when f2/f is irrational
 *   (an upper bound if the ratio is rational and the phases keep the maxima apart).
 */
export function peakSpeed(spec: DriveSpec): number {
  switch (spec.waveform) {
    case 'sine':
      return TWO_PI * spec.frequency * spec.amplitude;
    case 'triangle':
      return 4 * spec.amplitude * spec.frequency;
    case 'two-tone':
      return TWO_PI * (spec.frequency * spec.amplitude + spec.second_frequency * spec.second_amplitude);
    case 'off':
      return 0;
  }
}

/**
 * Peak mirror acceleration of the actuator waveform, m/s^2.
 *   sine: (2 pi f)^2 A;  two-tone: (2 pi f)^2 A + (2 pi f2)^2 A2 (supremum, as for peakSpeed);
 *   off: 0;  triangle: Infinity (the ideal triangle reverses instantly; a real actuator
 *   rounds the turning points, see actuator.ts for the value with the first harmonics).
 */
export function peakAcceleration(spec: DriveSpec): number {
  switch (spec.waveform) {
    case 'sine':
      return (TWO_PI * spec.frequency) ** 2 * spec.amplitude;
    case 'triangle':
      return spec.amplitude > 0 ? Infinity : 0;
    case 'two-tone':
      return (
        (TWO_PI * spec.frequency) ** 2 * spec.amplitude +
        (TWO_PI * spec.second_frequency) ** 2 * spec.second_amplitude
      );
    case 'off':
      return 0;
  }
}

/**
 * Peak-to-peak stroke of the actuator waveform, m: 2A for sine and triangle, 2(A + A2)
 * for two tones (supremum, as for peakSpeed), 0 when off.
 */
export function strokePeakToPeak(spec: DriveSpec): number {
  switch (spec.waveform) {
    case 'sine':
    case 'triangle':
      return 2 * spec.amplitude;
    case 'two-tone':
      return 2 * (spec.amplitude + spec.second_amplitude);
    case 'off':
      return 0;
  }
}

/**
 * Peak Doppler shift of the light returned by the moving mirror, Hz: 2 v_peak / lambda
 * (reflection doubles the path change; docs/model.md §4).
 * @param wavelength vacuum wavelength in m (the medium of the gap taken as vacuum)
 */
export function peakDoppler_Hz(spec: DriveSpec, wavelength: number): number {
  return (2 * peakSpeed(spec)) / wavelength;
}

/**
 * Fraction of time (0..1, dimensionless) the mirror spends slower than v_c (m/s).
 *   sine: (2/pi) arcsin(v_c / v_peak) (docs/model.md §4), 1 when v_c >= v_peak;
 *   triangle: 0 when v_c <= 4 A f, else 1 (the turning instants have zero duration);
 *   off: 1 for v_c > 0;
 *   two-tone: the average over the two tone phases (theta1, theta2), which equals the time
 *     average when f2/f is irrational (Weyl equidistribution). For each of 4096 midpoint
 *     values of the slower tone's phase the fraction of the other phase with
 *     |a cos(theta1) + c| < v_c is exact, (acos(lo) - acos(hi)) / pi, so the quadrature
 *     has no step error from the discontinuous indicator in theta1.
 * v_c <= 0 gives 0.
 */
export function fractionBelowSpeed(spec: DriveSpec, v_c: number): number {
  if (!(v_c > 0)) return 0;
  switch (spec.waveform) {
    case 'off':
      return 1;
    case 'sine': {
      const vp = peakSpeed(spec);
      return v_c >= vp ? 1 : (2 / Math.PI) * Math.asin(v_c / vp);
    }
    case 'triangle':
      return v_c > peakSpeed(spec) ? 1 : 0;
    case 'two-tone': {
      const v1 = TWO_PI * spec.frequency * spec.amplitude;
      const v2 = TWO_PI * spec.second_frequency * spec.second_amplitude;
      const a = Math.max(v1, v2);
      const b = Math.min(v1, v2);
      if (a === 0) return 1;
      const n = 4096;
      let sum = 0;
      for (let i = 0; i < n; i++) {
        const c = b * Math.cos((TWO_PI * (i + 0.5)) / n);
        const lo = Math.max(-1, Math.min(1, (-v_c - c) / a));
        const hi = Math.max(-1, Math.min(1, (v_c - c) / a));
        sum += (Math.acos(lo) - Math.acos(hi)) / Math.PI;
      }
      return sum / n;
    }
  }
}

/**
 * Drive period, s: 1 / f. For two tones this is the period of the first tone (the motion
 * itself repeats only if f2 / f is rational); for `off` it is the nominal period of the
 * configured frequency, so that analysis windows counted in periods stay defined.
 */
export function drivePeriod(spec: DriveSpec): number {
  return 1 / spec.frequency;
}
