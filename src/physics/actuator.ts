/**
 * Drive and actuator requirements (docs/model.md §5): what a drive asks of the mirror
 * (stroke, speed, acceleration, force, Doppler shift) and, with an actuator description,
 * what it asks of the amplifier (voltage through a second-order mechanical response,
 * reactive current and power) and how close it runs to the resonance. Every number is SI;
 * every limit exceeded is flagged by name.
 *
 * Mechanical model: a single-mode mass-spring-damper driven by a force proportional to the
 * voltage, so that x(f) = k_v H(f) V(f) with
 *   H(f) = 1 / (1 - (f/f0)^2 + i f / (Q f0)),   |H(0)| = 1, |H(f0)| = Q, arg H(f0) = -90 deg
 * (W. T. Thomson, Theory of Vibration with Applications, ch. 3, forced damped vibration).
 * The electrical side is a pure capacitance C: I = 2 pi f C V.
 */
import type { ActuatorSpec, DriveSpec, Scenario } from '../scenario/schema';
import { peakAcceleration, peakDoppler_Hz, peakSpeed, strokePeakToPeak } from './drive';

const TWO_PI = 2 * Math.PI;

/** Odd harmonics of the triangle carried through the response (amplitudes 8 / (pi^2 n^2)). */
export const TRIANGLE_HARMONICS: readonly number[] = [1, 3, 5, 7, 9];

/** Relative disagreement between a given resonance and sqrt(k/m) / (2 pi) that earns a note. */
const RESONANCE_CONSISTENCY = 0.05;

/** |H| above which a triangle harmonic counts as amplified by the resonance. */
const HARMONIC_AMPLIFIED = 1.25;

/** The mechanical response at one frequency. */
export interface MechanicalResponse {
  re: number;
  im: number;
  /** |H|, dimensionless (1 far below resonance, Q at resonance) */
  magnitude: number;
  /** arg H in rad (0 far below, -pi/2 at resonance, -> -pi far above) */
  phase_rad: number;
}

/**
 * Second-order mechanical response H(f) = 1 / (1 - r^2 + i r / Q), r = f / f0
 * (Thomson, Theory of Vibration with Applications, ch. 3).
 * @param frequency_Hz drive frequency f (Hz, >= 0)
 * @param resonance_Hz first resonance f0 (Hz); Infinity gives the quasi-static H = 1
 * @param qualityFactor Q (dimensionless, > 0)
 */
export function mechanicalResponse(
  frequency_Hz: number,
  resonance_Hz: number,
  qualityFactor: number,
): MechanicalResponse {
  if (!Number.isFinite(resonance_Hz)) return { re: 1, im: 0, magnitude: 1, phase_rad: 0 };
  const r = frequency_Hz / resonance_Hz;
  const dr = 1 - r * r;
  const di = r / qualityFactor;
  const d2 = dr * dr + di * di;
  // 1 / (dr + i di) = (dr - i di) / (dr^2 + di^2)
  return { re: dr / d2, im: -di / d2, magnitude: 1 / Math.sqrt(d2), phase_rad: Math.atan2(-di, dr) };
}

/**
 * Resonance of a mass on a spring, Hz: f0 = sqrt(k / m) / (2 pi)
 * (Thomson, Theory of Vibration with Applications, ch. 2, free vibration).
 * @param stiffness_N_m k (N/m); @param movingMass_kg m (kg)
 */
export function springMassResonance_Hz(stiffness_N_m: number, movingMass_kg: number): number {
  return Math.sqrt(stiffness_N_m / movingMass_kg) / TWO_PI;
}

/** The actuator's resonance, stiffness and mass, completed from what the scenario gives. */
export interface ResolvedActuator {
  stroke_per_volt_m_V: number;
  /** f0 in Hz, null when neither a resonance nor stiffness and mass are given */
  resonance_Hz: number | null;
  resonance_source: 'given' | 'stiffness and mass' | 'none';
  stiffness_N_m: number | null;
  moving_mass_kg: number | null;
  quality_factor: number;
  capacitance_F: number | null;
  notes: string[];
}

/**
 * Complete an actuator description: f0 from `resonance`, or sqrt(k/m)/(2 pi) from
 * stiffness and moving mass; with f0 and one of k, m the other follows from k = m (2 pi f0)^2.
 * If the resonance and both k and m are given and disagree by more than 5 %, the given
 * resonance is kept and a note says so.
 */
export function resolveActuator(act: ActuatorSpec): ResolvedActuator {
  const notes: string[] = [];
  let f0: number | null = null;
  let source: ResolvedActuator['resonance_source'] = 'none';
  let k = act.stiffness ?? null;
  let m = act.moving_mass ?? null;
  if (act.resonance !== undefined) {
    f0 = act.resonance;
    source = 'given';
    if (k !== null && m !== null) {
      const fk = springMassResonance_Hz(k, m);
      const rel = Math.abs(fk - f0) / f0;
      if (rel > RESONANCE_CONSISTENCY) {
        notes.push(
          `actuator.resonance (${f0.toPrecision(4)} Hz) disagrees with sqrt(stiffness / moving_mass) / (2 pi) = ${fk.toPrecision(4)} Hz by ${(100 * rel).toFixed(1)} %; the given resonance is used`,
        );
      }
    } else if (m !== null) {
      k = m * (TWO_PI * f0) ** 2;
    } else if (k !== null) {
      m = k / (TWO_PI * f0) ** 2;
    }
  } else if (k !== null && m !== null) {
    f0 = springMassResonance_Hz(k, m);
    source = 'stiffness and mass';
  } else {
    notes.push(
      'no resonance (nor stiffness and moving mass) given: the response is taken as quasi-static (|H| = 1) and the resonance margin is not checked',
    );
  }
  return {
    stroke_per_volt_m_V: act.stroke_per_volt,
    resonance_Hz: f0,
    resonance_source: source,
    stiffness_N_m: k,
    moving_mass_kg: m,
    quality_factor: act.quality_factor,
    capacitance_F: act.capacitance ?? null,
    notes,
  };
}

/** One sinusoidal component of the motion and what it takes to drive it. */
export interface ComponentRequirement {
  /** 'tone 1', 'tone 2', or 'harmonic n' (n = 1 is the triangle's fundamental) */
  label: string;
  frequency_Hz: number;
  /** amplitude of this component of the mirror motion, m */
  amplitude_m: number;
  response_magnitude: number;
  response_phase_rad: number;
  /** voltage amplitude for this component, V: A_n / (k_v |H(f_n)|) */
  voltage_V: number;
  /** reactive current amplitude, A: 2 pi f_n C V_n (null without a capacitance) */
  current_A: number | null;
}

export interface LimitCheck {
  /** the scenario key holding the limit, e.g. 'actuator.max_voltage' */
  key: string;
  quantity: string;
  unit: string;
  value: number;
  limit: number;
  /** 'max': value must not exceed limit; 'min': value must not fall below it */
  kind: 'max' | 'min';
  ok: boolean;
}

export interface ActuatorRequirement {
  resolved: ResolvedActuator;
  components: ComponentRequirement[];
  /** peak voltage, V: the one component's amplitude, the sum for two tones, the sampled waveform peak for the triangle */
  voltage_peak_V: number;
  voltage_peak_to_peak_V: number;
  /** peak reactive current, A (same rule as the voltage); null without a capacitance */
  current_peak_A: number | null;
  /** reactive power, var: sum over components of 1/2 V_n I_n (amplitudes), i.e. V_rms I_rms */
  reactive_power_var: number | null;
  /** f0 / f_highest, dimensionless (f_highest: the higher tone; the fundamental of the triangle); null without f0 */
  resonance_margin: number | null;
  /** the highest drive tone is above the resonance */
  above_resonance: boolean;
  /** force on the moving mass, N: m times the peak acceleration; null without a mass */
  force_N: number | null;
}

export interface ActuatorSheet {
  name: string;
  waveform: DriveSpec['waveform'];
  amplitude_m: number;
  frequency_Hz: number;
  second_amplitude_m: number | null;
  second_frequency_Hz: number | null;
  wavelength_m: number;
  stroke_m: number;
  peak_speed_m_s: number;
  /** for the triangle: the value with harmonics up to TRIANGLE_HARMONICS' last (the ideal is unbounded) */
  peak_acceleration_m_s2: number;
  peak_doppler_Hz: number;
  period_s: number;
  /** null when the scenario has no actuator section */
  actuator: ActuatorRequirement | null;
  limits: LimitCheck[];
  /** keys of the limits exceeded, plus 'above_resonance' when a tone is above f0 */
  exceeded: string[];
  ok: boolean;
  notes: string[];
}

/** The sinusoidal components (frequency, amplitude, phase offset at t = 0) of the actuator waveform. */
function components(drive: DriveSpec): { label: string; f: number; a: number; phase: number; n: number }[] {
  switch (drive.waveform) {
    case 'off':
      return [];
    case 'sine':
      return [{ label: 'tone 1', f: drive.frequency, a: drive.amplitude, phase: 0, n: 1 }];
    case 'two-tone':
      return [
        { label: 'tone 1', f: drive.frequency, a: drive.amplitude, phase: 0, n: 1 },
        { label: 'tone 2', f: drive.second_frequency, a: drive.second_amplitude, phase: 0, n: 1 },
      ];
    case 'triangle':
      // (2/pi) arcsin(sin theta) = (8/pi^2) sum_{n odd} (-1)^((n-1)/2) sin(n theta) / n^2
      return TRIANGLE_HARMONICS.map((n) => ({
        label: `harmonic ${n}`,
        f: n * drive.frequency,
        a: (drive.amplitude * 8) / (Math.PI * Math.PI * n * n),
        phase: ((n - 1) / 2) % 2 === 0 ? 0 : Math.PI,
        n,
      }));
  }
}

/**
 * Peak |sum_n c_n sin(n theta + phi_n)| of a waveform of harmonics of one fundamental, by
 * sampling 2048 points per period (enough for harmonics up to 9: the sampled maximum of a
 * smooth periodic function then errs by < 1e-4 relative).
 */
function harmonicPeak(amp: number[], harm: number[], phase: number[]): number {
  const n = 2048;
  let peak = 0;
  for (let i = 0; i < n; i++) {
    const th = (TWO_PI * i) / n;
    let s = 0;
    for (let j = 0; j < amp.length; j++) s += amp[j] * Math.sin(harm[j] * th + phase[j]);
    if (Math.abs(s) > peak) peak = Math.abs(s);
  }
  return peak;
}

/**
 * What a drive asks of an actuator (docs/model.md §5).
 * Voltage per component V_n = A_n / (k_v |H(f_n)|); current I_n = 2 pi f_n C V_n; reactive
 * power sum 1/2 V_n I_n (amplitude convention: 1/2 V I = V_rms I_rms, in var; a pure
 * capacitance dissipates none of it, the amplifier must still source it). Two tones: peak
 * voltage and current are the sums of the amplitudes (reached when the tones line up).
 * Triangle: the voltage that produces the harmonics 1..9 of the ideal triangle, i.e. the
 * pre-compensated waveform, its peak found by sampling one period.
 * @param drive the drive section (SI); @param act the actuator section (SI)
 */
export function actuatorRequirement(
  drive: DriveSpec,
  act: ActuatorSpec,
): { requirement: ActuatorRequirement; notes: string[] } {
  const resolved = resolveActuator(act);
  const notes: string[] = [];
  const f0 = resolved.resonance_Hz ?? Infinity;
  const Q = resolved.quality_factor;
  const kv = resolved.stroke_per_volt_m_V;
  const C = resolved.capacitance_F;
  const comps = components(drive);
  const out: ComponentRequirement[] = comps.map((c) => {
    const h = mechanicalResponse(c.f, f0, Q);
    const v = c.a / (kv * h.magnitude);
    return {
      label: c.label,
      frequency_Hz: c.f,
      amplitude_m: c.a,
      response_magnitude: h.magnitude,
      response_phase_rad: h.phase_rad,
      voltage_V: v,
      current_A: C === null ? null : TWO_PI * c.f * C * v,
    };
  });

  let vPeak = 0;
  let iPeak: number | null = C === null ? null : 0;
  if (drive.waveform === 'triangle') {
    // V_n = X_n / (k_v H_n): the voltage component leads the motion by -arg H_n.
    const harm = comps.map((c) => c.n);
    const vPhase = comps.map((c, j) => c.phase - out[j].response_phase_rad);
    vPeak = harmonicPeak(
      out.map((o) => o.voltage_V),
      harm,
      vPhase,
    );
    if (C !== null) {
      // i = C dV/dt: each component scaled by n omega and advanced by 90 deg.
      const w = TWO_PI * drive.frequency;
      iPeak = harmonicPeak(
        out.map((o, j) => C * harm[j] * w * o.voltage_V),
        harm,
        vPhase.map((p) => p + Math.PI / 2),
      );
    }
    if (resolved.resonance_Hz !== null) {
      const amplified = out.filter((o) => o.response_magnitude > HARMONIC_AMPLIFIED);
      if (amplified.length > 0) {
        notes.push(
          `triangle: ${amplified.map((o) => `${o.label} (${o.frequency_Hz.toPrecision(4)} Hz, |H| = ${o.response_magnitude.toPrecision(3)})`).join(', ')} near the resonance is amplified; a plain triangle voltage would not give a triangle motion, the voltage here is the pre-compensated one`,
        );
      }
      const above = out.filter((o) => o.label !== 'harmonic 1' && o.frequency_Hz > resolved.resonance_Hz!);
      if (above.length > 0) {
        notes.push(
          `triangle: ${above.map((o) => o.label).join(', ')} above the resonance (attenuated, phase near -180 deg); the turning points will be rounded unless driven harder`,
        );
      }
    }
    notes.push(
      `triangle: harmonics ${TRIANGLE_HARMONICS.join(', ')} carried (the series to 9 reaches ${(100 * harmonicSumFraction()).toFixed(1)} % of the peak)`,
    );
  } else {
    for (const o of out) {
      vPeak += o.voltage_V;
      if (iPeak !== null && o.current_A !== null) iPeak += o.current_A;
    }
    if (drive.waveform === 'two-tone')
      notes.push(
        'two-tone: peak voltage and current are the sums of the two tones (reached when their maxima coincide)',
      );
  }
  const reactive = C === null ? null : out.reduce((s, o) => s + 0.5 * o.voltage_V * (o.current_A ?? 0), 0);

  // The resonance margin is set by the highest tone the motion is meant to follow.
  const fTop =
    drive.waveform === 'off'
      ? 0
      : drive.waveform === 'two-tone'
        ? Math.max(drive.frequency, drive.second_frequency)
        : drive.frequency;
  const margin = resolved.resonance_Hz === null || fTop === 0 ? null : resolved.resonance_Hz / fTop;
  const above = resolved.resonance_Hz !== null && fTop > resolved.resonance_Hz;
  const acc = sheetAcceleration(drive);
  return {
    requirement: {
      resolved,
      components: out,
      voltage_peak_V: vPeak,
      voltage_peak_to_peak_V: 2 * vPeak,
      current_peak_A: iPeak,
      reactive_power_var: reactive,
      resonance_margin: margin,
      above_resonance: above,
      force_N: resolved.moving_mass_kg === null ? null : resolved.moving_mass_kg * acc,
    },
    notes: [...resolved.notes, ...notes],
  };
}

/** (8/pi^2) sum over TRIANGLE_HARMONICS of 1/n^2: the truncated series' peak over the ideal one. */
function harmonicSumFraction(): number {
  let s = 0;
  for (const n of TRIANGLE_HARMONICS) s += 1 / (n * n);
  return (8 / (Math.PI * Math.PI)) * s;
}

/**
 * Peak acceleration shown on the sheet, m/s^2: drive.ts' value, except for the triangle,
 * whose ideal value is unbounded: there the series to harmonic 9, whose terms all add at the
 * turning point, (2 pi f)^2 A (8/pi^2) * (number of harmonics).
 */
function sheetAcceleration(drive: DriveSpec): number {
  if (drive.waveform !== 'triangle') return peakAcceleration(drive);
  return (
    (TWO_PI * drive.frequency) ** 2 * drive.amplitude * (8 / (Math.PI * Math.PI)) * TRIANGLE_HARMONICS.length
  );
}

/**
 * The limit checks of a requirement against the actuator's limits: max_voltage (peak
 * voltage), max_current (peak current), min_resonance_margin (f0 / f). A limit the
 * scenario does not set, or a value that cannot be computed (current without capacitance),
 * is not checked.
 */
function limitChecks(req: ActuatorRequirement, act: ActuatorSpec, notes: string[]): LimitCheck[] {
  const checks: LimitCheck[] = [];
  if (act.max_voltage !== undefined) {
    checks.push({
      key: 'actuator.max_voltage',
      quantity: 'peak voltage',
      unit: 'V',
      value: req.voltage_peak_V,
      limit: act.max_voltage,
      kind: 'max',
      ok: req.voltage_peak_V <= act.max_voltage,
    });
  }
  if (act.max_current !== undefined) {
    if (req.current_peak_A === null) {
      notes.push('actuator.max_current is set but actuator.capacitance is not: the current is not checked');
    } else {
      checks.push({
        key: 'actuator.max_current',
        quantity: 'peak current',
        unit: 'A',
        value: req.current_peak_A,
        limit: act.max_current,
        kind: 'max',
        ok: req.current_peak_A <= act.max_current,
      });
    }
  }
  if (req.resonance_margin !== null) {
    checks.push({
      key: 'actuator.min_resonance_margin',
      quantity: 'resonance / drive frequency',
      unit: '',
      value: req.resonance_margin,
      limit: act.min_resonance_margin,
      kind: 'min',
      ok: req.resonance_margin >= act.min_resonance_margin,
    });
  }
  return checks;
}

/**
 * The drive and actuator requirement sheet of a scenario (docs/model.md §5; the
 * `dithercav actuator` command). Kinematics: stroke 2A, peak speed 2 pi f A (4 A f for the
 * triangle), peak acceleration (2 pi f)^2 A, peak Doppler shift 2 v / lambda, period 1/f.
 * With an actuator: voltage, current, reactive power, resonance margin, force m a, and a
 * LimitCheck per limit set; `exceeded` lists the keys of the limits broken plus
 * 'above_resonance'. All numbers SI.
 */
export function actuatorSheet(scenario: Scenario): ActuatorSheet {
  const drive = scenario.drive;
  const notes: string[] = [];
  let req: ActuatorRequirement | null = null;
  let limits: LimitCheck[] = [];
  if (scenario.actuator !== undefined) {
    const r = actuatorRequirement(drive, scenario.actuator);
    req = r.requirement;
    notes.push(...r.notes);
    limits = limitChecks(req, scenario.actuator, notes);
  } else {
    notes.push(
      'no actuator section: kinematics only (add actuator: to get voltage, current and resonance margin)',
    );
  }
  if (drive.waveform === 'triangle' && drive.amplitude > 0) {
    notes.push(
      `triangle: the ideal waveform has unbounded acceleration at the turning points; the acceleration shown is that of harmonics ${TRIANGLE_HARMONICS.join(', ')}`,
    );
  }
  if (drive.waveform === 'two-tone')
    notes.push(
      'two-tone: stroke, speed and acceleration are the sums over the two tones (their supremum over time)',
    );
  const exceeded = limits.filter((l) => !l.ok).map((l) => l.key);
  if (req !== null && req.above_resonance) exceeded.push('above_resonance');
  return {
    name: scenario.name,
    waveform: drive.waveform,
    amplitude_m: drive.waveform === 'off' ? 0 : drive.amplitude,
    frequency_Hz: drive.frequency,
    second_amplitude_m: drive.waveform === 'two-tone' ? drive.second_amplitude : null,
    second_frequency_Hz: drive.waveform === 'two-tone' ? drive.second_frequency : null,
    wavelength_m: scenario.laser.wavelength,
    stroke_m: strokePeakToPeak(drive),
    peak_speed_m_s: peakSpeed(drive),
    peak_acceleration_m_s2: sheetAcceleration(drive),
    peak_doppler_Hz: peakDoppler_Hz(drive, scenario.laser.wavelength),
    period_s: 1 / drive.frequency,
    actuator: req,
    limits,
    exceeded,
    ok: exceeded.length === 0,
    notes,
  };
}

/**
 * Whether the scenario's actuator can deliver a drive of this amplitude (m) and frequency
 * (Hz), the rest of the drive as in the scenario: no limit of actuatorSheet exceeded.
 * Without an actuator section every drive is reachable (ok: true, and the reason says why).
 * @returns ok and a sentence naming the limits broken (or why it is fine)
 */
export function reachable(
  scenario: Scenario,
  amplitude_m: number,
  frequency_Hz: number,
): { ok: boolean; reason: string } {
  if (scenario.actuator === undefined)
    return { ok: true, reason: 'no actuator described: every drive is taken as reachable' };
  const s: Scenario = {
    ...scenario,
    drive: { ...scenario.drive, amplitude: amplitude_m, frequency: frequency_Hz },
  };
  const sheet = actuatorSheet(s);
  if (sheet.ok) return { ok: true, reason: 'within every actuator limit set' };
  const broken = sheet.limits
    .filter((l) => !l.ok)
    .map(
      (l) =>
        `${l.quantity} ${l.value.toPrecision(3)}${l.unit === '' ? '' : ` ${l.unit}`} ${l.kind === 'max' ? 'above' : 'below'} ${l.key} ${l.limit.toPrecision(3)}`,
    );
  if (sheet.actuator?.above_resonance) broken.push('drive frequency above the resonance');
  return { ok: false, reason: broken.join('; ') };
}

/** How much of the drive amplifier's ratings a drive uses, and which rating binds. */
export interface ActuatorUtilisation {
  /**
   * Dimensionless: the larger of V / max_voltage and I / max_current over the ratings the
   * scenario sets; 1 is a rating reached exactly.
   */
  fraction: number;
  /** the scenario key of the rating that gives `fraction`, e.g. 'actuator.max_voltage' */
  key: string;
}

/**
 * The drive's use of the amplifier's ratings as one number: u = max(V / V_max, I / I_max)
 * over the ratings set, so 1 - u is the headroom left on the rating nearest to being
 * reached. Peak voltage and peak current against an amplifier's ratings are the usual
 * derating figures of a capacitive (piezo) load (common practice, no source). The
 * resonance margin is not a rating: it is a yes/no constraint (ActuatorSheet.limits) and
 * does not enter u, so that a bigger amplifier never pulls the choice towards a harder drive.
 * @returns null when the sheet checks neither rating (no actuator, or neither set)
 */
export function actuatorUtilisation(sheet: Pick<ActuatorSheet, 'limits'>): ActuatorUtilisation | null {
  let best: ActuatorUtilisation | null = null;
  for (const l of sheet.limits) {
    if (l.kind !== 'max') continue;
    const fraction = l.value / l.limit;
    if (best === null || fraction > best.fraction) best = { fraction, key: l.key };
  }
  return best;
}
