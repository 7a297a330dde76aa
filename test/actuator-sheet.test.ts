import { describe, expect, it } from 'vitest';
import { actuatorScenario } from './fixtures/actuator';
import {
  actuatorSheet,
  actuatorUtilisation,
  mechanicalResponse,
  reachable,
  resolveActuator,
  springMassResonance_Hz,
  TRIANGLE_HARMONICS,
} from '../src/physics/actuator';

const TWO_PI = 2 * Math.PI;

/** An invented test scenario (numbers for the test only), with the drive and actuator given. */
const scenario = actuatorScenario;

describe('second-order mechanical response', () => {
  it('|H| = Q and phase -90 deg at resonance, -> 1 and 0 deg far below, ~(f0/f)^2 and -180 deg far above', () => {
    // Forced damped vibration of a single-degree-of-freedom system: the magnification
    // factor is Q at resonance with the response lagging by 90 deg, 1 at low frequency and
    // falling as (f0/f)^2 well above (Thomson, Theory of Vibration with Applications, ch. 3).
    const f0 = 400e3;
    for (const Q of [5, 20, 300]) {
      const h = mechanicalResponse(f0, f0, Q);
      expect(h.magnitude).toBeCloseTo(Q, 9);
      expect(h.phase_rad).toBeCloseTo(-Math.PI / 2, 12);
      // At f = f0 / 1000 the magnification is 1 / (1 - 1e-6) to first order: 1e-5 is loose.
      const low = mechanicalResponse(f0 / 1000, f0, Q);
      expect(Math.abs(low.magnitude - 1)).toBeLessThan(1e-5);
      expect(Math.abs(low.phase_rad)).toBeLessThan(1e-3);
      // At f = 100 f0: |H| = 1 / |1 - 1e4 + 100i/Q| ~ 1e-4, within 0.1 % of (f0/f)^2 for Q >= 5.
      const high = mechanicalResponse(100 * f0, f0, Q);
      expect(Math.abs(high.magnitude / 1e-4 - 1)).toBeLessThan(1e-3);
      expect(high.phase_rad).toBeLessThan(-Math.PI * 0.99);
      expect(Math.hypot(h.re, h.im)).toBeCloseTo(h.magnitude, 9);
    }
  });

  it('resonance of a mass on a spring is sqrt(k/m) / (2 pi)', () => {
    // Undamped natural frequency w_n = sqrt(k/m) (Thomson, Theory of Vibration with
    // Applications, ch. 2). 1e6 N/m with 1 g: w_n = 31623 rad/s, f0 = 5032.9 Hz.
    const f0 = springMassResonance_Hz(1e6, 1e-3);
    expect(f0).toBeCloseTo(5032.92, 1);
    expect((TWO_PI * f0) ** 2 * 1e-3).toBeCloseTo(1e6, 3);
    const r = resolveActuator(
      scenario({}, { stroke_per_volt: 1e-8, stiffness: 1e6, moving_mass: 1e-3 }).actuator!,
    );
    expect(r.resonance_source).toBe('stiffness and mass');
    expect(r.resonance_Hz).toBeCloseTo(f0, 9);
  });

  it('notes a resonance that disagrees with stiffness and mass, and completes a missing one', () => {
    const clash = resolveActuator(
      scenario({}, { stroke_per_volt: 1e-8, resonance: 8e3, stiffness: 1e6, moving_mass: 1e-3 }).actuator!,
    );
    expect(clash.resonance_Hz).toBe(8e3);
    expect(clash.notes.join(' ')).toMatch(/disagrees/);
    const agree = resolveActuator(
      scenario({}, { stroke_per_volt: 1e-8, resonance: 5033, stiffness: 1e6, moving_mass: 1e-3 }).actuator!,
    );
    expect(agree.notes).toEqual([]);
    // k = m (2 pi f0)^2 (Thomson ch. 2): 2 g at 400 kHz -> 1.263e10 N/m
    const fromMass = resolveActuator(
      scenario({}, { stroke_per_volt: 1e-8, resonance: 400e3, moving_mass: 2e-3 }).actuator!,
    );
    expect(fromMass.stiffness_N_m!).toBeCloseTo(2e-3 * (TWO_PI * 400e3) ** 2, -3);
  });
});

describe('actuator sheet: sine drive', () => {
  const act = {
    stroke_per_volt: 10e-9,
    capacitance: 50e-9,
    resonance: 400e3,
    quality_factor: 20,
    moving_mass: 2e-3,
    max_voltage: 150,
    max_current: 10,
  };
  const s = scenario({ waveform: 'sine', amplitude: 200e-9, frequency: 100e3 }, act);
  const sheet = actuatorSheet(s);

  it('kinematics: stroke 2A, speed 2 pi f A, acceleration (2 pi f)^2 A, Doppler 2 v / lambda, force m a', () => {
    // Harmonic motion (Thomson ch. 1); Doppler on reflection 2 v / lambda (MODEL.md 4);
    // Newton's second law for the force on the moving mass. Rounding-level tolerances.
    expect(sheet.stroke_m).toBeCloseTo(400e-9, 18);
    expect(sheet.peak_speed_m_s).toBeCloseTo(TWO_PI * 100e3 * 200e-9, 12);
    expect(sheet.peak_acceleration_m_s2).toBeCloseTo((TWO_PI * 100e3) ** 2 * 200e-9, 4);
    expect(sheet.peak_doppler_Hz).toBeCloseTo((2 * TWO_PI * 100e3 * 200e-9) / 632.8e-9, 3);
    expect(sheet.actuator!.force_N!).toBeCloseTo(2e-3 * (TWO_PI * 100e3) ** 2 * 200e-9, 9);
    expect(sheet.period_s).toBe(1e-5);
  });

  it('voltage A / (k_v |H|), reactive current 2 pi f C V, reactive power 1/2 V I, margin f0 / f', () => {
    // |H| at f / f0 = 0.25, Q = 20 written out: 1 / sqrt((1 - 0.0625)^2 + (0.25/20)^2).
    const H = 1 / Math.sqrt((1 - 0.0625) ** 2 + (0.25 / 20) ** 2);
    const V = 200e-9 / (10e-9 * H);
    const a = sheet.actuator!;
    expect(a.voltage_peak_V).toBeCloseTo(V, 9);
    expect(a.voltage_peak_to_peak_V).toBeCloseTo(2 * V, 9);
    // Current into a capacitor i = C dV/dt, amplitude w C V (any circuits text; from memory).
    expect(a.current_peak_A!).toBeCloseTo(TWO_PI * 100e3 * 50e-9 * V, 9);
    // Reactive power of a sinusoid in the amplitude convention: 1/2 V I = V_rms I_rms.
    expect(a.reactive_power_var!).toBeCloseTo(0.5 * V * TWO_PI * 100e3 * 50e-9 * V, 6);
    expect(a.resonance_margin).toBeCloseTo(4, 12);
    expect(sheet.ok).toBe(true);
    expect(sheet.exceeded).toEqual([]);
  });

  it('flags every limit exceeded', () => {
    // 2 um at 300 kHz: V ~ 2e-6 / (1e-8 * 2.28) ~ 88 V > 50 V, I = 2 pi 3e5 5e-8 88 ~ 8 A > 1 A,
    // f0 / f = 1.33 < 1.5.
    const bad = actuatorSheet(
      scenario(
        { waveform: 'sine', amplitude: 2e-6, frequency: 300e3 },
        { ...act, max_voltage: 50, max_current: 1 },
      ),
    );
    expect(bad.ok).toBe(false);
    expect(bad.exceeded.sort()).toEqual([
      'actuator.max_current',
      'actuator.max_voltage',
      'actuator.min_resonance_margin',
    ]);
    const above = actuatorSheet(scenario({ waveform: 'sine', amplitude: 10e-9, frequency: 500e3 }, act));
    expect(above.exceeded).toContain('above_resonance');
    expect(above.exceeded).toContain('actuator.min_resonance_margin');
    const r = reachable(s, 2e-6, 300e3);
    expect(r.ok).toBe(false);
    expect(r.reason).toMatch(/actuator\.min_resonance_margin/);
    expect(reachable(s, 200e-9, 100e3)).toEqual({ ok: true, reason: 'within every actuator limit set' });
  });

  it('utilisation is the larger of V / V_max and I / I_max, names that rating, and leaves the resonance margin out', () => {
    // Derating of a piezo drive against the amplifier's voltage and current ratings
    // (common practice, no source); each ratio is computed here from the closed forms
    // V = A / (k_v |H|) and I = 2 pi f C V (Thomson ch. 3).
    const A = 200e-9;
    const f = 100e3;
    const V = A / (10e-9 * mechanicalResponse(f, 400e3, 20).magnitude);
    const I = TWO_PI * f * 50e-9 * V;
    for (const [maxV, maxI] of [
      [40, 1],
      [10, 5],
    ]) {
      const u = actuatorUtilisation(
        actuatorSheet(
          scenario(
            { waveform: 'sine', amplitude: A, frequency: f },
            { ...act, max_voltage: maxV, max_current: maxI },
          ),
        ),
      )!;
      expect(u.fraction).toBeCloseTo(Math.max(V / maxV, I / maxI), 12);
      expect(u.key).toBe(V / maxV > I / maxI ? 'actuator.max_voltage' : 'actuator.max_current');
    }
    // a rating exceeded shows as a fraction above 1
    const over = actuatorUtilisation(
      actuatorSheet(
        scenario(
          { waveform: 'sine', amplitude: 2e-6, frequency: 300e3 },
          { ...act, max_voltage: 40, max_current: 1 },
        ),
      ),
    )!;
    expect(over.fraction).toBeGreaterThan(1);
    // the resonance margin is checked by the sheet but is not a rating: close to the
    // resonance with a generous amplifier, u stays small
    const nearF0 = actuatorSheet(
      scenario(
        { waveform: 'sine', amplitude: 10e-9, frequency: 260e3 },
        { ...act, max_voltage: 1000, max_current: 100 },
      ),
    );
    expect(nearF0.limits.some((l) => l.key === 'actuator.min_resonance_margin')).toBe(true);
    expect(actuatorUtilisation(nearF0)!.fraction).toBeLessThan(0.01);
    // no actuator, or no rating set: no utilisation
    expect(
      actuatorUtilisation(actuatorSheet(scenario({ waveform: 'sine', amplitude: A, frequency: f }))),
    ).toBeNull();
    expect(
      actuatorUtilisation(
        actuatorSheet(
          scenario(
            { waveform: 'sine', amplitude: A, frequency: f },
            { stroke_per_volt: 10e-9, resonance: 400e3 },
          ),
        ),
      ),
    ).toBeNull();
  });

  it('without an actuator: kinematics only, every drive reachable', () => {
    const bare = actuatorSheet(scenario({ waveform: 'sine', amplitude: 200e-9, frequency: 100e3 }));
    expect(bare.actuator).toBeNull();
    expect(bare.peak_speed_m_s).toBeCloseTo(TWO_PI * 100e3 * 200e-9, 12);
    expect(reachable(scenario({}), 1, 1e6).ok).toBe(true);
  });
});

describe('actuator sheet: two-tone and triangle', () => {
  const act = { stroke_per_volt: 10e-9, capacitance: 50e-9, resonance: 400e3, quality_factor: 20 };

  it('two tones: voltages and currents of the tones add', () => {
    const sheet = actuatorSheet(
      scenario(
        {
          waveform: 'two-tone',
          amplitude: 100e-9,
          frequency: 100e3,
          second_amplitude: 1e-6,
          second_frequency: 1e3,
        },
        act,
      ),
    );
    const a = sheet.actuator!;
    const v1 = 100e-9 / (10e-9 * mechanicalResponse(100e3, 400e3, 20).magnitude);
    const v2 = 1e-6 / (10e-9 * mechanicalResponse(1e3, 400e3, 20).magnitude);
    expect(a.voltage_peak_V).toBeCloseTo(v1 + v2, 9);
    expect(a.current_peak_A!).toBeCloseTo(TWO_PI * 50e-9 * (100e3 * v1 + 1e3 * v2), 9);
    expect(a.resonance_margin).toBeCloseTo(4, 12);
  });

  it('triangle far below resonance: voltage peak is the truncated Fourier series of the triangle, A (8/pi^2) sum 1/n^2', () => {
    // Fourier series of the triangle wave: (8/pi^2) sum_{n odd} (-1)^((n-1)/2) sin(n t) / n^2
    // (Kreyszig, Advanced Engineering Mathematics, 10th ed., ch. 11, Fourier series); with |H| = 1 all
    // terms add at the turning point. f0 = 1000 f keeps |H(9f)| within 1e-4 of 1, hence 1e-3.
    const sheet = actuatorSheet(
      scenario({ waveform: 'triangle', amplitude: 1e-6, frequency: 1e3 }, { ...act, resonance: 1e6 }),
    );
    let sum = 0;
    for (const n of TRIANGLE_HARMONICS) sum += 1 / (n * n);
    const expected = (1e-6 / 10e-9) * (8 / Math.PI ** 2) * sum;
    expect(Math.abs(sheet.actuator!.voltage_peak_V / expected - 1)).toBeLessThan(1e-3);
    expect(sheet.actuator!.components.map((c) => c.frequency_Hz)).toEqual(
      TRIANGLE_HARMONICS.map((n) => n * 1e3),
    );
    expect(sheet.peak_speed_m_s).toBeCloseTo(4e-3, 15);
  });

  it('triangle with a harmonic near resonance: that harmonic needs Q times less voltage, and a note says the motion is not a triangle', () => {
    // f = f0 / 3: harmonic 3 sits on the resonance, |H| = Q (Thomson ch. 3).
    const sheet = actuatorSheet(
      scenario({ waveform: 'triangle', amplitude: 1e-6, frequency: 400e3 / 3 }, act),
    );
    const h3 = sheet.actuator!.components.find((c) => c.label === 'harmonic 3')!;
    expect(h3.response_magnitude).toBeCloseTo(20, 9);
    expect(h3.voltage_V).toBeCloseTo((1e-6 * 8) / (Math.PI ** 2 * 9) / (10e-9 * 20), 9);
    expect(sheet.notes.join(' ')).toMatch(/harmonic 3.*amplified.*not give a triangle/);
  });
});

describe('common drives for a red laser', () => {
  // common practice, no source: for 632.8 nm a peak mirror speed of a few tens of cm/s is
  // enough to decouple; at a couple of hundred kHz that is tens to a few hundred nm of
  // amplitude, at tens of Hz a fraction of a millimetre. The sheet must put such drives at
  // tens of cm/s and at Doppler shifts 2 v / lambda of several hundred kHz to a few MHz.
  const cases: [number, number][] = [
    [100e-9, 200e3],
    [300e-9, 200e3],
    [0.5e-3, 50],
    [0.3e-3, 80],
  ];
  for (const [A, f] of cases) {
    it(`${A} m at ${f} Hz moves at tens of cm/s`, () => {
      const sheet = actuatorSheet(scenario({ waveform: 'sine', amplitude: A, frequency: f }));
      expect(sheet.peak_speed_m_s).toBeGreaterThan(0.1);
      expect(sheet.peak_speed_m_s).toBeLessThan(0.5);
      expect(sheet.peak_doppler_Hz).toBeGreaterThan(0.3e6);
      expect(sheet.peak_doppler_Hz).toBeLessThan(1.6e6);
    });
  }
});
