import { describe, expect, it } from 'vitest';
import type { DriveSpec } from '../src/scenario/schema';
import {
  createDrive,
  drivePeriod,
  fractionBelowSpeed,
  peakAcceleration,
  peakDoppler_Hz,
  peakSpeed,
  strokePeakToPeak,
  VIBRATION_TONES,
} from '../src/physics/drive';

const TWO_PI = 2 * Math.PI;

/** A drive spec with the schema's defaults (src/scenario/schema.ts), overridden. */
function driveDefaults(over: Partial<DriveSpec>): DriveSpec {
  return {
    waveform: 'sine',
    amplitude: 0,
    frequency: 100e3,
    phase: 0,
    offset: 0,
    drift: 0,
    second_amplitude: 0,
    second_frequency: 1e3,
    second_phase: 0,
    ...over,
  };
}

describe('sine drive', () => {
  const spec = driveDefaults({
    waveform: 'sine',
    amplitude: 250e-9,
    frequency: 200e3,
    phase: 0.3,
    offset: 40e-9,
  });
  const d = createDrive(spec, 1);
  const T = 1 / spec.frequency;

  it('peak speed is 2 pi f A and peak acceleration (2 pi f)^2 A', () => {
    // Harmonic motion x = A sin(w t): v = A w cos, a = -A w^2 sin (Thomson, Theory of
    // Vibration with Applications, ch. 1, harmonic motion).
    expect(peakSpeed(spec)).toBeCloseTo(TWO_PI * 200e3 * 250e-9, 12);
    expect(peakAcceleration(spec)).toBeCloseTo((TWO_PI * 200e3) ** 2 * 250e-9, 3);
    // Second method: the sampled maximum of velocity(t) over a period. 20000 samples: the
    // maximum of a cosine sampled that finely is below the true one by < (pi/20000)^2 / 2.
    let vmax = 0;
    let xmin = Infinity;
    let xmax = -Infinity;
    for (let i = 0; i < 20000; i++) {
      const t = (i / 20000) * T;
      vmax = Math.max(vmax, Math.abs(d.velocity(t)));
      xmin = Math.min(xmin, d.position(t));
      xmax = Math.max(xmax, d.position(t));
    }
    expect(Math.abs(vmax / peakSpeed(spec) - 1)).toBeLessThan(1e-7);
    expect(Math.abs((xmax - xmin) / strokePeakToPeak(spec) - 1)).toBeLessThan(1e-7);
    expect(strokePeakToPeak(spec)).toBe(500e-9);
  });

  it('position is x0 + A sin(2 pi f t + phi0) and velocity is its time derivative (central differences)', () => {
    expect(d.position(0)).toBeCloseTo(40e-9 + 250e-9 * Math.sin(0.3), 20);
    // Central difference error is (w h)^2 / 6 relative: h = T / 1e4 gives ~7e-8.
    const h = T / 1e4;
    for (let i = 0; i < 50; i++) {
      const t = (i / 50) * 3 * T;
      const fd = (d.position(t + h) - d.position(t - h)) / (2 * h);
      expect(Math.abs(fd - d.velocity(t))).toBeLessThan(1e-6 * peakSpeed(spec));
    }
  });

  it('acceleration from differencing the velocity peaks at (2 pi f)^2 A', () => {
    // Same central-difference bound as above; sampling 4000 points per period.
    const h = T / 1e4;
    let amax = 0;
    for (let i = 0; i < 4000; i++) {
      const t = (i / 4000) * T;
      amax = Math.max(amax, Math.abs((d.velocity(t + h) - d.velocity(t - h)) / (2 * h)));
    }
    expect(Math.abs(amax / peakAcceleration(spec) - 1)).toBeLessThan(1e-5);
  });

  it('period is 1 / f', () => {
    expect(drivePeriod(spec)).toBe(5e-6);
  });
});

describe('triangle drive', () => {
  const spec = driveDefaults({ waveform: 'triangle', amplitude: 1e-6, frequency: 1e3, phase: 0 });
  const d = createDrive(spec, 1);
  const sine = createDrive(driveDefaults({ waveform: 'sine', amplitude: 1e-6, frequency: 1e3, phase: 0 }), 1);
  const T = 1e-3;

  it('moves at the constant speed 4 A f between turning points', () => {
    // common practice, no source: a triangle of peak-to-peak 2A covers 4A per period.
    expect(peakSpeed(spec)).toBeCloseTo(4e-3, 15);
    const h = T / 1e5;
    for (let i = 0; i < 97; i++) {
      const t = ((i + 0.37) / 97) * T;
      const p = (t / T + 0.25) % 0.5;
      if (p < 1e-3 || p > 0.5 - 1e-3) continue; // too close to a turning point for the difference
      const fd = (d.position(t + h) - d.position(t - h)) / (2 * h);
      // Piecewise linear: the central difference is exact up to rounding (~1e-9 relative here).
      expect(Math.abs(Math.abs(fd) - 4e-3)).toBeLessThan(1e-9);
      expect(Math.abs(d.velocity(t) - fd)).toBeLessThan(1e-9);
    }
  });

  it("has the sine's peak-to-peak and turning points, and crosses x0 when the sine does", () => {
    // Phase alignment with the sine, as MODEL.md section 1 asks.
    expect(d.position(T / 4)).toBeCloseTo(1e-6, 18);
    expect(d.position((3 * T) / 4)).toBeCloseTo(-1e-6, 18);
    expect(sine.position(T / 4)).toBeCloseTo(1e-6, 18);
    expect(d.position(0)).toBeCloseTo(0, 18);
    expect(d.position(T / 2)).toBeCloseTo(0, 18);
    // speed sign agrees with the sine's between turning points
    expect(Math.sign(d.velocity(0.1 * T))).toBe(Math.sign(sine.velocity(0.1 * T)));
    expect(Math.sign(d.velocity(0.6 * T))).toBe(Math.sign(sine.velocity(0.6 * T)));
    expect(strokePeakToPeak(spec)).toBe(2e-6);
    expect(peakAcceleration(spec)).toBe(Infinity);
  });
});

describe('two-tone, off, drift and vibration', () => {
  it('two-tone position is the sum of the two sines; velocity agrees with differences', () => {
    const spec = driveDefaults({
      waveform: 'two-tone',
      amplitude: 100e-9,
      frequency: 50e3,
      phase: 0.1,
      second_amplitude: 2e-6,
      second_frequency: 300,
      second_phase: 1.2,
    });
    const d = createDrive(spec, 3);
    const t = 1.234e-4;
    expect(d.position(t)).toBeCloseTo(
      100e-9 * Math.sin(TWO_PI * 50e3 * t + 0.1) + 2e-6 * Math.sin(TWO_PI * 300 * t + 1.2),
      20,
    );
    const h = 1e-9; // (w h)^2 / 6 ~ 1.6e-8 relative for the fast tone
    const fd = (d.position(t + h) - d.position(t - h)) / (2 * h);
    expect(Math.abs(fd - d.velocity(t))).toBeLessThan(1e-6 * peakSpeed(spec));
    expect(peakSpeed(spec)).toBeCloseTo(TWO_PI * (50e3 * 100e-9 + 300 * 2e-6), 12);
    expect(strokePeakToPeak(spec)).toBeCloseTo(2 * 2.1e-6, 18);
    expect(drivePeriod(spec)).toBe(1 / 50e3);
  });

  it('off holds x0 and adds only the drift', () => {
    const d = createDrive(driveDefaults({ waveform: 'off', amplitude: 1e-6, offset: 5e-9, drift: 2e-6 }), 1);
    expect(d.position(0.5)).toBeCloseTo(5e-9 + 1e-6, 18);
    expect(d.velocity(0.5)).toBe(2e-6);
    expect(peakSpeed(driveDefaults({ waveform: 'off', amplitude: 1e-6 }))).toBe(0);
  });

  it('vibration: 16 tones below the bandwidth, rms as asked, reproducible from the seed', () => {
    const spec = driveDefaults({ waveform: 'off', vibration: { rms: 3e-9, bandwidth: 2000 } });
    const d = createDrive(spec, 42);
    expect(d.vibOmega_rad_s.length).toBe(VIBRATION_TONES);
    for (let j = 0; j < VIBRATION_TONES; j++) {
      expect(d.vibOmega_rad_s[j] / TWO_PI).toBeGreaterThan(0);
      expect(d.vibOmega_rad_s[j] / TWO_PI).toBeLessThanOrEqual(2000);
    }
    // Time rms over 20 s: cross terms of tones df apart average out as 1 / (2 pi df T);
    // with 16 tones in 2 kHz the typical spacing is ~100 Hz, so 5 % is generous.
    let s2 = 0;
    const n = 200000;
    for (let i = 0; i < n; i++) {
      const x = d.position((i / n) * 20);
      s2 += x * x;
    }
    expect(Math.abs(Math.sqrt(s2 / n) / 3e-9 - 1)).toBeLessThan(0.05);
    const same = createDrive(spec, 42);
    const other = createDrive(spec, 43);
    expect(same.position(0.0123)).toBe(d.position(0.0123));
    expect(other.position(0.0123)).not.toBe(d.position(0.0123));
    // velocity is the derivative of the vibrating position too: the central difference errs
    // by (w h)^2 / 6 < 3e-9 relative at h = 10 ns for tones up to 2 kHz.
    const h = 1e-8;
    const t = 0.3;
    const fd = (d.position(t + h) - d.position(t - h)) / (2 * h);
    expect(Math.abs(fd - d.velocity(t))).toBeLessThan(1e-6 * 3e-9 * TWO_PI * 2000 * 4);
  });
});

describe('fraction of time below a speed', () => {
  /** Sampled fraction of one long window with |v| < v_c: the second, brute-force method. */
  function sampled(spec: ReturnType<typeof driveDefaults>, vc: number, duration: number, n: number): number {
    const d = createDrive(spec, 1);
    let below = 0;
    for (let i = 0; i < n; i++) if (Math.abs(d.velocity(((i + 0.5) / n) * duration)) < vc) below++;
    return below / n;
  }

  it('sine: (2/pi) arcsin(v_c / v_peak) agrees with sampling', () => {
    // MODEL.md section 4 states the formula; 2e5 samples over one period resolve each of the
    // four crossings to 1 / 2e5, so 5e-5 bounds the sampling error.
    const spec = driveDefaults({ waveform: 'sine', amplitude: 1e-6, frequency: 1e3, phase: 0.2 });
    for (const ratio of [0.05, 0.3, 0.7, 0.99]) {
      const vc = ratio * peakSpeed(spec);
      expect(fractionBelowSpeed(spec, vc)).toBeCloseTo((2 / Math.PI) * Math.asin(ratio), 14);
      expect(Math.abs(fractionBelowSpeed(spec, vc) - sampled(spec, vc, 1e-3, 200000))).toBeLessThan(5e-5);
    }
    expect(fractionBelowSpeed(spec, 2 * peakSpeed(spec))).toBe(1);
    expect(fractionBelowSpeed(spec, 0)).toBe(0);
  });

  it('triangle: never slower than 4 A f', () => {
    const spec = driveDefaults({ waveform: 'triangle', amplitude: 1e-6, frequency: 1e3 });
    expect(fractionBelowSpeed(spec, 0.99 * 4e-3)).toBe(0);
    expect(sampled(spec, 0.99 * 4e-3, 1e-3, 10000)).toBe(0);
    expect(fractionBelowSpeed(spec, 1.01 * 4e-3)).toBe(1);
  });

  it('two-tone: phase-average quadrature agrees with time sampling at an irrational frequency ratio', () => {
    // Golden-ratio frequencies: the time average over 2000 fast periods equidistributes the
    // two phases (Weyl), discrepancy ~ log N / N; 4e6 samples resolve crossings to 1e-6.
    // Tolerance 2e-3 covers the finite window.
    const golden = (1 + Math.sqrt(5)) / 2;
    const spec = driveDefaults({
      waveform: 'two-tone',
      amplitude: 1e-6 / TWO_PI,
      frequency: 1e3,
      second_amplitude: 0.7e-6 / (TWO_PI * golden),
      second_frequency: 1e3 * golden,
      second_phase: 0.4,
    });
    // tone speeds 1e-3 and 0.7e-3 m/s
    for (const vc of [0.2e-3, 0.8e-3, 1.5e-3]) {
      const q = fractionBelowSpeed(spec, vc);
      const s = sampled(spec, vc, 2.0, 4_000_000);
      expect(Math.abs(q - s)).toBeLessThan(2e-3);
    }
    expect(fractionBelowSpeed(spec, 1.8e-3)).toBeCloseTo(1, 12);
  });
});

describe('Doppler shift', () => {
  it('peak Doppler shift is 2 v / lambda, the same as f_opt * 2 v / c', () => {
    // MODEL.md section 4 states 2|v| / lambda; the second form, reflection from a mirror
    // moving at v << c shifts the light by f 2v/c, is the non-relativistic Doppler shift
    // (from memory). Tolerance: 1e-3 Hz of ~1 MHz, rounding only.
    const spec = driveDefaults({ waveform: 'sine', amplitude: 239e-9, frequency: 200e3 });
    const lambda = 632.8e-9;
    const c = 299792458;
    const v = peakSpeed(spec);
    expect(peakDoppler_Hz(spec, lambda)).toBeCloseTo((c / lambda) * ((2 * v) / c), 3);
  });
});
