/**
 * Waveform comparison (issue 7 item 3): which drive waveform decouples better for the
 * same actuator and the same amplifier. Each of sine, triangle and two-tone is given the
 * mirror amplitude(s) that the SAME PEAK VOLTAGE produces through the actuator's
 * second-order mechanical response (docs/model.md §5), then run with runScenario; the
 * free-running and static references are computed once and shared, since they do not
 * depend on the drive's waveform or amplitude (referenceKey).
 *
 * The common voltage V is the peak voltage the scenario's drive amplitude A and frequency f
 * need as a sine: V = A / (k_v |H(f)|), H the second-order response of actuator.ts
 * (W. T. Thomson, Theory of Vibration with Applications, ch. 3).
 *
 *   sine       A_sine = k_v |H(f)| V  (= A)
 *   triangle   a triangle VOLTAGE of peak V. Its harmonics n = 1, 3, 5 ... have amplitudes
 *              (8 / pi^2) V / n^2 and each reaches the mirror through H(n f). The engine
 *              runs an ideal triangle motion whose fundamental matches the one the actuator
 *              delivers, (8 / pi^2) A_tri = k_v |H(f)| (8 / pi^2) V, i.e. A_tri = k_v |H(f)| V;
 *              the ratios |H(n f)| / |H(f)| of the higher harmonics say how far the real
 *              motion departs from that ideal (1 far below the resonance: no departure).
 *   two-tone   the voltage split equally, V/2 per tone (the peaks add to V when the tones
 *              line up): A_1 = k_v |H(f)| V/2, A_2 = k_v |H(f_2)| V/2, with f_2 the scenario's
 *              drive.second_frequency when the scenario sets it, else 3 f (a tone that
 *              speeds the mirror through the slow turning points of the first; the
 *              caller says which through `secondFrequencyGiven`).
 *
 * Without an actuator section there is no voltage: the waveforms get the same peak-to-peak
 * stroke 2A instead (sine and triangle amplitude A, two tones A/2 each), and the result says so.
 */
import type { Scenario, DriveSpec } from '../scenario/schema';
import { InputError, type InputProblem } from '../scenario/errors';
import { withOverrides } from '../scenario/validate';
import { scenarioSha256 } from '../scenario/canonical';
import { formatSI } from '../scenario/units';
import {
  actuatorRequirement,
  mechanicalResponse,
  resolveActuator,
  TRIANGLE_HARMONICS,
} from '../physics/actuator';
import { createDrive } from '../physics/drive';
import { RESULT_VERSION } from '../results/summary';
import type {
  CompareComponent,
  ComparisonPlan,
  ComparisonRow,
  WaveformComparison,
  WaveformPlan,
} from '../results/compare';
import { TOOL_VERSION } from '../version';
import { computeReferences, runScenario, EngineChoice, References } from './run';

const TWO_PI = 2 * Math.PI;

/** Second tone's frequency over the first when the scenario sets none. */
export const DEFAULT_SECOND_TONE_RATIO = 3;

/** |H(n f)| / |H(f)| farther than this from 1 makes a triangle harmonic worth a note. */
const HARMONIC_DEPARTURE = 0.1;

/** Samples per common period for the time fraction of commensurate two tones. */
const TIME_SAMPLES = 200_000;

export interface CompareOptions {
  /** true when the scenario itself sets drive.second_frequency (default: its waveform is two-tone) */
  secondFrequencyGiven?: boolean;
  engine?: EngineChoice;
  seed?: number;
  onProgress?: (fraction: number, label: string) => void;
}

/** The drive amplitude and frequency the comparison starts from, or an InputError. */
function baseDrive(s: Scenario): DriveSpec {
  const d = s.drive;
  const problems: InputProblem[] = [];
  if (d.waveform === 'off')
    problems.push({
      path: 'drive.waveform',
      message:
        "expected a moving drive to compare waveforms against (sine, triangle or two-tone), found 'off'",
    });
  if (!(d.amplitude > 0))
    problems.push({
      path: 'drive.amplitude',
      message:
        'expected an amplitude above 0: the comparison takes the peak voltage (or the stroke) of a sine of this amplitude',
    });
  if (s.external === undefined)
    problems.push({
      path: 'external',
      message: 'expected an external section: without an external cavity there is nothing to decouple',
    });
  if (problems.length > 0) throw new InputError(null, problems);
  return d;
}

/**
 * The drive each waveform gets at equal peak voltage (equal stroke without an actuator),
 * before any run: amplitudes A_n = k_v |H(f_n)| V_n with V_n the waveform's voltage parts
 * (see the file comment), the triangle's harmonic content through H, the peak current
 * C dV/dt of each voltage waveform. Pure: no simulation.
 * @param s validated scenario (SI) with a moving drive and an external section
 * @param opts.secondFrequencyGiven whether drive.second_frequency is the user's (else 3 f)
 * @throws InputError for drive.waveform off, drive.amplitude 0 or no external section
 */
export function planComparison(
  s: Scenario,
  opts: Pick<CompareOptions, 'secondFrequencyGiven'> = {},
): ComparisonPlan {
  const d = baseDrive(s);
  const f = d.frequency;
  const given = opts.secondFrequencyGiven ?? d.waveform === 'two-tone';
  const f2 = given ? d.second_frequency : DEFAULT_SECOND_TONE_RATIO * f;
  const notes: string[] = [];
  const act = s.actuator;
  const waveforms: WaveformPlan[] = [];
  if (d.waveform !== 'sine')
    notes.push(
      `the scenario's waveform is ${d.waveform}; the comparison starts from a sine of its drive.amplitude and drive.frequency`,
    );
  notes.push(
    given
      ? `two-tone: second tone at drive.second_frequency = ${formatSI(f2, 'Hz', 4)}`
      : `two-tone: the scenario sets no second frequency, so the second tone is at ${DEFAULT_SECOND_TONE_RATIO} x drive.frequency = ${formatSI(f2, 'Hz', 4)}`,
  );

  if (act === undefined) {
    const A = d.amplitude;
    notes.push(
      'no actuator section: there is no voltage to hold equal, so the waveforms get the same peak-to-peak stroke instead (sine and triangle amplitude A, two tones A/2 each)',
    );
    const flat = (label: string, freq: number, a: number): CompareComponent => ({
      label,
      frequency_Hz: freq,
      voltage_V: null,
      response_magnitude: 1,
      response_phase_rad: 0,
      amplitude_m: a,
    });
    waveforms.push({
      waveform: 'sine',
      amplitude_m: A,
      second_amplitude_m: null,
      second_frequency_Hz: null,
      components: [flat('tone 1', f, A)],
      current_peak_A: null,
      current_exceeded: null,
      filtered_peak_m: null,
      notes: [],
    });
    waveforms.push({
      waveform: 'triangle',
      amplitude_m: A,
      second_amplitude_m: null,
      second_frequency_Hz: null,
      components: TRIANGLE_HARMONICS.map((n) =>
        flat(`harmonic ${n}`, n * f, (8 * A) / (Math.PI * Math.PI * n * n)),
      ),
      current_peak_A: null,
      current_exceeded: null,
      filtered_peak_m: null,
      notes: ['ideal triangle motion (no actuator to filter its harmonics)'],
    });
    waveforms.push({
      waveform: 'two-tone',
      amplitude_m: A / 2,
      second_amplitude_m: A / 2,
      second_frequency_Hz: f2,
      components: [flat('tone 1', f, A / 2), flat('tone 2', f2, A / 2)],
      current_peak_A: null,
      current_exceeded: null,
      filtered_peak_m: null,
      notes: [],
    });
    return {
      basis: 'equal stroke',
      voltage_peak_V: null,
      max_voltage_V: null,
      stroke_m: 2 * A,
      frequency_Hz: f,
      second_frequency_Hz: f2,
      second_frequency_source: given ? 'drive.second_frequency' : '3 x drive.frequency',
      waveforms,
      notes,
    };
  }

  const resolved = resolveActuator(act);
  const f0 = resolved.resonance_Hz ?? Infinity;
  const Q = resolved.quality_factor;
  const kv = resolved.stroke_per_volt_m_V;
  const C = resolved.capacitance_F;
  const sineDrive: DriveSpec = { ...d, waveform: 'sine' };
  const V = actuatorRequirement(sineDrive, act).requirement.voltage_peak_V;
  notes.push(...resolved.notes);
  const part = (label: string, freq: number, volts: number): CompareComponent => {
    const h = mechanicalResponse(freq, f0, Q);
    return {
      label,
      frequency_Hz: freq,
      voltage_V: volts,
      response_magnitude: h.magnitude,
      response_phase_rad: h.phase_rad,
      amplitude_m: kv * h.magnitude * volts,
    };
  };
  const currentCheck = (i: number | null): boolean | null =>
    i === null || act.max_current === undefined ? null : i > act.max_current;

  // sine: the one tone carries V
  const sine = part('tone 1', f, V);
  const iSine = C === null ? null : TWO_PI * f * C * V;
  waveforms.push({
    waveform: 'sine',
    amplitude_m: sine.amplitude_m,
    second_amplitude_m: null,
    second_frequency_Hz: null,
    components: [sine],
    current_peak_A: iSine,
    current_exceeded: currentCheck(iSine),
    filtered_peak_m: null,
    notes: [],
  });

  // triangle voltage of peak V: harmonic n has (8/pi^2) V / n^2, each filtered by H(n f)
  const harm = TRIANGLE_HARMONICS.map((n) =>
    part(`harmonic ${n}`, n * f, (8 * V) / (Math.PI * Math.PI * n * n)),
  );
  const h1 = harm[0];
  const aTri = kv * h1.response_magnitude * V;
  const triNotes: string[] = [];
  const departures = harm.slice(1).map((c) => ({
    c,
    ratio: c.response_magnitude / h1.response_magnitude,
    lag_rad: c.response_phase_rad - h1.response_phase_rad,
  }));
  triNotes.push(
    `harmonic content through the actuator, |H(n f)| / |H(f)|: ${departures.map((x) => `${x.c.label.replace('harmonic ', 'n = ')}: ${x.ratio.toPrecision(3)}`).join(', ')}; the engine runs the ideal triangle of the same fundamental`,
  );
  const filtered = filteredTrianglePeak(harm, f);
  triNotes.push(
    `the motion the plain triangle voltage gives (harmonics to ${TRIANGLE_HARMONICS[TRIANGLE_HARMONICS.length - 1]} through H) peaks at ${formatSI(filtered, 'm', 3)}, against ${formatSI(aTri, 'm', 3)} for the ideal triangle the engine runs`,
  );
  const up = departures.filter((x) => x.ratio > 1 + HARMONIC_DEPARTURE).map((x) => x.c.label);
  const down = departures.filter((x) => x.ratio < 1 - HARMONIC_DEPARTURE).map((x) => x.c.label);
  if (up.length + down.length > 0) {
    const what = [
      up.length > 0 ? `amplifies ${up.join(', ')}` : '',
      down.length > 0 ? `attenuates ${down.join(', ')}` : '',
    ]
      .filter((x) => x !== '')
      .join(' and ');
    triNotes.push(
      `relative to the fundamental the actuator ${what} by more than ${100 * HARMONIC_DEPARTURE} %: the real motion is not a triangle (${down.length > 0 ? 'rounded' : 'sharpened'} turning points${up.length > 0 ? ', ringing' : ''}), so the triangle row, run as an ideal triangle, overstates how constant its speed is`,
    );
  }
  const exact = actuatorRequirement({ ...d, waveform: 'triangle', amplitude: aTri }, act).requirement
    .voltage_peak_V;
  triNotes.push(
    `an exact triangle motion of this amplitude needs a pre-compensated voltage of ${formatSI(exact, 'V', 4)} peak (vs ${formatSI(V, 'V', 4)} for the plain triangle voltage)`,
  );
  // i = C dV/dt: a triangle voltage rises by 2V in half a period, so |i| = 4 f C V
  const iTri = C === null ? null : 4 * f * C * V;
  waveforms.push({
    waveform: 'triangle',
    amplitude_m: aTri,
    second_amplitude_m: null,
    second_frequency_Hz: null,
    components: harm,
    current_peak_A: iTri,
    current_exceeded: currentCheck(iTri),
    filtered_peak_m: filtered,
    notes: triNotes,
  });

  // two tones, V/2 each
  const t1 = part('tone 1', f, V / 2);
  const t2 = part('tone 2', f2, V / 2);
  const iTwo = C === null ? null : TWO_PI * C * (f + f2) * (V / 2);
  const twoNotes: string[] = [];
  if (resolved.resonance_Hz !== null && f2 > resolved.resonance_Hz) {
    twoNotes.push(
      `tone 2 (${formatSI(f2, 'Hz', 4)}) is above the resonance (${formatSI(resolved.resonance_Hz, 'Hz', 4)}): |H| = ${t2.response_magnitude.toPrecision(3)}, lagging the voltage by ${((-t2.response_phase_rad * 180) / Math.PI).toFixed(0)} deg`,
    );
  }
  waveforms.push({
    waveform: 'two-tone',
    amplitude_m: t1.amplitude_m,
    second_amplitude_m: t2.amplitude_m,
    second_frequency_Hz: f2,
    components: [t1, t2],
    current_peak_A: iTwo,
    current_exceeded: currentCheck(iTwo),
    filtered_peak_m: null,
    notes: twoNotes,
  });

  if (act.max_voltage !== undefined && V > act.max_voltage)
    notes.push(
      `the common peak voltage ${formatSI(V, 'V', 4)} is above actuator.max_voltage = ${formatSI(act.max_voltage, 'V', 4)} for every waveform`,
    );
  return {
    basis: 'equal peak voltage',
    voltage_peak_V: V,
    max_voltage_V: act.max_voltage ?? null,
    stroke_m: 2 * sine.amplitude_m,
    frequency_Hz: f,
    second_frequency_Hz: f2,
    second_frequency_source: given ? 'drive.second_frequency' : '3 x drive.frequency',
    waveforms,
    notes,
  };
}

/**
 * Peak |x| of the mirror motion a plain triangle voltage produces, m: the sum over the
 * harmonics n of k_v |H(n f)| V_n s_n sin(n theta + arg H(n f)), s_n = (-1)^((n-1)/2) the
 * triangle series' signs, sampled at 2048 points per period (harmonics up to 9: the sampled
 * maximum errs by < 1e-4 relative).
 */
function filteredTrianglePeak(harm: CompareComponent[], frequency_Hz: number): number {
  const n = 2048;
  let peak = 0;
  for (let i = 0; i < n; i++) {
    const th = (TWO_PI * i) / n;
    let x = 0;
    for (const c of harm) {
      const order = Math.round(c.frequency_Hz / frequency_Hz);
      const sign = ((order - 1) / 2) % 2 === 0 ? 1 : -1;
      // c.amplitude_m is already k_v |H(n f)| V_n
      x += sign * c.amplitude_m * Math.sin(order * th + c.response_phase_rad);
    }
    peak = Math.max(peak, Math.abs(x));
  }
  return peak;
}

/**
 * Smallest q <= 64 with f2 / f = p / q to 1e-9 relative, or null: the two tones then
 * repeat together every q / f.
 */
function commonPeriodCount(f: number, f2: number): number | null {
  const r = f2 / f;
  for (let q = 1; q <= 64; q++) {
    const p = Math.round(r * q);
    if (p > 0 && Math.abs(p / q - r) <= 1e-9 * r) return q;
  }
  return null;
}

/**
 * Fraction of time the actuator motion of a two-tone drive is slower than v_c (m/s),
 * sampled over one common period q / f (TIME_SAMPLES midpoints); null when the tones are
 * not commensurate (then the phase average of fractionBelowSpeed is the time average).
 * Drift and vibration are left out, as in fractionBelowSpeed.
 */
function twoToneTimeFraction(drive: DriveSpec, v_c: number): number | null {
  const q = commonPeriodCount(drive.frequency, drive.second_frequency);
  if (q === null) return null;
  const motion = createDrive({ ...drive, drift: 0, vibration: undefined }, 0);
  const T = q / drive.frequency;
  let below = 0;
  for (let i = 0; i < TIME_SAMPLES; i++)
    if (Math.abs(motion.velocity(((i + 0.5) * T) / TIME_SAMPLES)) < v_c) below++;
  return below / TIME_SAMPLES;
}

/** The overrides that turn the scenario's drive into one plan's drive. */
function planOverrides(p: WaveformPlan): Record<string, number | string> {
  const o: Record<string, number | string> = {
    'drive.waveform': p.waveform,
    'drive.amplitude': p.amplitude_m,
  };
  if (p.waveform === 'two-tone') {
    o['drive.second_amplitude'] = p.second_amplitude_m ?? 0;
    o['drive.second_frequency'] = p.second_frequency_Hz ?? 0;
  }
  return o;
}

function pct(x: number | null): string {
  return x === null ? 'not computed' : `${(100 * x).toFixed(0)} %`;
}

/** The recommendation: the decoupled row with the highest gain over static, and why. */
function recommend(
  rows: ComparisonRow[],
  basis: ComparisonPlan['basis'],
): WaveformComparison['recommendation'] {
  const at = basis === 'equal peak voltage' ? 'at this peak voltage' : 'at this stroke';
  const decoupled = rows.filter(
    (r) => r.status === 'ok' && r.class === 'decoupled' && r.gain_over_static !== null,
  );
  if (decoupled.length === 0) {
    const ran = rows.filter((r) => r.gain_over_static !== null);
    const best = ran.sort((a, b) => (b.gain_over_static ?? 0) - (a.gain_over_static ?? 0))[0];
    return {
      waveform: null,
      reason: best
        ? `no waveform is decoupled ${at} (classes: ${rows.map((r) => `${r.waveform} ${r.class ?? r.status}`).join(', ')}); the highest gain over static is the ${best.waveform}'s, ${best.gain_over_static!.toPrecision(3)}x (${best.class}). Raise the drive or relax the thresholds to compare decoupled runs`
        : `no waveform gave a driven result ${at}`,
    };
  }
  decoupled.sort((a, b) => b.gain_over_static! - a.gain_over_static!);
  const win = decoupled[0];
  const others = rows
    .filter((r) => r !== win)
    .map(
      (r) =>
        `${r.waveform} ${r.gain_over_static === null ? 'not computed' : `${r.gain_over_static.toPrecision(3)}x`} (${r.class ?? r.status})`,
    );
  return {
    waveform: win.waveform,
    reason: `${win.waveform}: decoupled with the highest gain over static ${at}, ${win.gain_over_static!.toPrecision(3)}x (vs ${others.join(', ')}); it spends ${pct(win.fraction_below_critical_time ?? win.fraction_below_critical)} of the time below the critical speed, in-band ripple ${pct(win.ripple_rel)}${win.current_exceeded ? '; but its peak reactive current exceeds actuator.max_current' : ''}`,
  };
}

/**
 * Run the comparison: planComparison, then one runScenario per waveform sharing one set of
 * references (computeReferences on the scenario; referenceKey does not depend on the drive).
 * A numerical failure of one waveform is a row with status 'numerical-failure', not an error.
 * @returns the content of compare.json (all values SI)
 * @throws InputError as planComparison, or when an override makes the scenario invalid
 */
export function compareWaveforms(s: Scenario, opts: CompareOptions = {}): WaveformComparison {
  const wall0 = Date.now();
  const plan = planComparison(s, opts);
  const progress = opts.onProgress ?? (() => undefined);
  const n = plan.waveforms.length;
  progress(0, 'references');
  const refs: References = computeReferences(s, {
    engine: opts.engine,
    seed: opts.seed,
    onProgress: (x) => progress(x / (n + 1), 'references'),
  });
  const rows: ComparisonRow[] = plan.waveforms.map((p, i) => {
    const sw = withOverrides(s, planOverrides(p));
    const a = runScenario(sw, {
      engine: opts.engine,
      seed: opts.seed,
      references: refs,
      onProgress: (x) => progress((i + 1 + x) / (n + 1), p.waveform),
    });
    const sum = a.summary;
    const vc = sum.drive.critical_speed_m_s;
    return {
      ...p,
      status: sum.status,
      message: sum.message,
      engine: sum.engine,
      peak_speed_m_s: sum.drive.peak_speed_m_s,
      critical_speed_m_s: vc,
      fraction_below_critical: sum.drive.fraction_below_critical,
      fraction_below_critical_time:
        p.waveform === 'two-tone' && vc !== null ? twoToneTimeFraction(sw.drive, vc) : null,
      gain_over_static: sum.driven?.gain_over_static ?? null,
      ripple_rel: sum.driven?.ripple_rel ?? null,
      ripple_full_band_rel: sum.driven?.ripple_full_band_rel ?? null,
      hops_per_period: sum.driven?.hops_per_period ?? null,
      class: sum.driven?.class ?? (sum.status === 'numerical-failure' ? 'numerical-failure' : null),
      class_reason: sum.driven?.class_reason ?? sum.message,
    };
  });
  progress(1, 'done');
  const notes = [...plan.notes];
  const two = rows.find((r) => r.waveform === 'two-tone');
  if (two && two.fraction_below_critical_time !== null) {
    notes.push(
      `two-tone: the tones are commensurate, so the motion repeats; the time spent below the critical speed over one common period is ${pct(two.fraction_below_critical_time)} (the summary's phase average: ${pct(two.fraction_below_critical)})`,
    );
  }
  notes.push(
    "the critical speed comes from each run (the locking rule with that run's returned field), so it can differ between waveforms",
  );
  return {
    version: RESULT_VERSION,
    tool_version: TOOL_VERSION,
    name: s.name,
    scenario_sha256: scenarioSha256(s),
    basis: plan.basis,
    voltage_peak_V: plan.voltage_peak_V,
    max_voltage_V: plan.max_voltage_V,
    stroke_m: plan.stroke_m,
    frequency_Hz: plan.frequency_Hz,
    second_frequency_Hz: plan.second_frequency_Hz,
    second_frequency_source: plan.second_frequency_source,
    rows,
    recommendation: recommend(rows, plan.basis),
    notes,
    timing: { wall_s: (Date.now() - wall0) / 1000, references_wall_s: refs.data.wall_s },
  };
}
