// Waveform comparison (src/simulate/compare.ts, `dithercav compare`) and the actuator sheet
// in the run summary. The CLI part runs the real binary: needs `npm run build` first (npm
// test does it). Fixture: test/fixtures/compare/tiny-compare.yaml (invented numbers, a few
// seconds per comparison).
import { existsSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { scratchDir } from './fixtures/scratch';
import { cli, ROOT } from './fixtures/cli';
import { loadScenarioFile } from '../src/scenario/load';
import { withOverrides } from '../src/scenario/validate';
import { InputError } from '../src/scenario/errors';
import type { Scenario } from '../src/scenario/schema';
import { compareWaveforms, planComparison } from '../src/simulate/compare';
import type { WaveformComparison, ComparisonRow } from '../src/results/compare';
import { runScenario } from '../src/simulate/run';
import { actuatorSheet } from '../src/physics/actuator';
import { buildRunReportHtml, waveformMotion } from '../src/report';
import { fmtSI } from '../src/report/format';

const FIXTURE = join(ROOT, 'test', 'fixtures', 'compare', 'tiny-compare.yaml');
const tmp = scratchDir('compare');

const base: Scenario = loadScenarioFile(FIXTURE).scenario;
const act = base.actuator!;
/** The fixture without its actuator section and with twice the amplitude (triangle 4 A f above v_c). */
const { actuator: _dropped, ...bare } = base;
const noActuator: Scenario = { ...bare, drive: { ...base.drive, amplitude: 2 * base.drive.amplitude } };

/**
 * |H(f)| of a mass-spring-damper driven by a force, normalised to 1 at f = 0:
 * 1 / sqrt((1 - r^2)^2 + (r / Q)^2), r = f / f0 (Thomson, Theory of Vibration with
 * Applications, ch. 3, forced damped vibration: the magnification factor). Written out
 * here rather than taken from src/physics so the check is independent of it.
 */
function magnification(f: number, f0: number, Q: number): number {
  const r = f / f0;
  return 1 / Math.sqrt((1 - r * r) ** 2 + (r / Q) ** 2);
}

function row(c: WaveformComparison, w: string): ComparisonRow {
  const r = c.rows.find((x) => x.waveform === w);
  if (!r) throw new Error(`no row ${w}`);
  return r;
}

describe('amplitudes at equal peak voltage', () => {
  const plan = planComparison(base);
  const f = base.drive.frequency;
  const f0 = act.resonance!;
  const Q = act.quality_factor;
  const kv = act.stroke_per_volt;
  // V = A / (k_v |H(f)|) for the scenario's sine (Thomson, Theory of Vibration, ch. 3)
  const V = base.drive.amplitude / (kv * magnification(f, f0, Q));

  it("takes the voltage the scenario's sine needs", () => {
    expect(plan.basis).toBe('equal peak voltage');
    // closed form against the same closed form in other code: only rounding differs
    expect(Math.abs(plan.voltage_peak_V! / V - 1)).toBeLessThan(1e-12);
  });

  it('gives every part of every waveform the amplitude k_v |H(f_n)| V_n', () => {
    for (const w of plan.waveforms) {
      for (const c of w.components) {
        // each amplitude through the response at its own frequency (Thomson ch. 3); rounding only
        expect(
          Math.abs(c.amplitude_m / (kv * magnification(c.frequency_Hz, f0, Q) * c.voltage_V!) - 1),
        ).toBeLessThan(1e-12);
      }
    }
  });

  it('splits the two-tone voltage equally, second tone at 3 f when the scenario sets none', () => {
    const two = plan.waveforms.find((w) => w.waveform === 'two-tone')!;
    expect(two.second_frequency_Hz).toBe(3 * f);
    expect(plan.second_frequency_source).toBe('3 x drive.frequency');
    // the peaks of V/2 + V/2 add to V when the tones line up
    expect(two.components.map((c) => c.voltage_V! / V)).toEqual([
      expect.closeTo(0.5, 12),
      expect.closeTo(0.5, 12),
    ]);
    expect(two.amplitude_m / ((kv * magnification(f, f0, Q) * V) / 2)).toBeCloseTo(1, 12);
    expect(two.second_amplitude_m! / ((kv * magnification(3 * f, f0, Q) * V) / 2)).toBeCloseTo(1, 12);
    const given = planComparison(base, { secondFrequencyGiven: true }).waveforms.find(
      (w) => w.waveform === 'two-tone',
    )!;
    expect(given.second_frequency_Hz).toBe(base.drive.second_frequency);
  });

  it("matches the triangle's fundamental through H(f) and carries its odd harmonics", () => {
    const tri = plan.waveforms.find((w) => w.waveform === 'triangle')!;
    // a triangle of peak V has harmonics (8/pi^2) V / n^2, n odd (Fourier series of the
    // triangle wave, e.g. Kreyszig, Advanced Engineering Mathematics, ch. 11); rounding only
    for (const c of tri.components) {
      const n = Math.round(c.frequency_Hz / f);
      expect(n % 2).toBe(1);
      expect(c.voltage_V! / ((8 * V) / (Math.PI * Math.PI * n * n))).toBeCloseTo(1, 12);
    }
    // the ideal triangle with that fundamental: (8/pi^2) A_tri = k_v |H(f)| (8/pi^2) V
    expect(tri.amplitude_m / (kv * magnification(f, f0, Q) * V)).toBeCloseTo(1, 12);
    // 3 f = 1.5 MHz lies just above the 1.2 MHz resonance, 5 f far above: both named
    expect(tri.notes.join(' ')).toMatch(/amplifies harmonic 3 and attenuates harmonic 5/);
  });

  it('far below the resonance the filtered triangle is the triangle series to harmonic 9', () => {
    const stiff = withOverrides(base, { 'actuator.resonance': '1 THz' });
    const tri = planComparison(stiff).waveforms.find((w) => w.waveform === 'triangle')!;
    // |H| = 1 and no phase: the partial Fourier sum (8/pi^2) sum_{n odd <= 9} 1/n^2 of a unit
    // triangle, all terms adding at the turning point (Kreyszig, ch. 11); at f/f0 = 5e-7 the
    // response departs from 1 by ~ r^2 = 2.5e-13, the 2048-point sampling by < 1e-4 (it samples
    // the turning point exactly, theta = pi/2 being a grid point)
    const partial = (8 / (Math.PI * Math.PI)) * (1 + 1 / 9 + 1 / 25 + 1 / 49 + 1 / 81);
    expect(tri.filtered_peak_m! / tri.amplitude_m).toBeCloseTo(partial, 9);
    // no harmonic departs from the fundamental, so no departure is noted
    expect(tri.notes.join(' ')).not.toMatch(/amplifies|attenuates/);
    // at the fixture's 1.2 MHz resonance harmonic 3 lands above it, phase-flipped: the motion peaks lower
    const real = planComparison(base).waveforms.find((w) => w.waveform === 'triangle')!;
    expect(real.filtered_peak_m!).toBeLessThan(partial * real.amplitude_m);
  });

  it('checks the peak current C dV/dt of each voltage waveform', () => {
    const C = act.capacitance!;
    const cur = (w: string) => plan.waveforms.find((x) => x.waveform === w)!;
    // i = C dV/dt (capacitor law, e.g. Horowitz & Hill, The Art of Electronics, ch. 1):
    // 2 pi f C V for a sine, 4 f C V for a triangle (slope 2V per half period), the sum of
    // the tones' for two tones (their maxima line up); rounding only
    expect(cur('sine').current_peak_A! / (2 * Math.PI * f * C * V)).toBeCloseTo(1, 12);
    expect(cur('triangle').current_peak_A! / (4 * f * C * V)).toBeCloseTo(1, 12);
    expect(cur('two-tone').current_peak_A! / (2 * Math.PI * C * (f + 3 * f) * (V / 2))).toBeCloseTo(1, 12);
    // the fixture's limit of 3 A sits between the sine's ~2.1 A and the two tones' ~4.2 A
    expect(cur('sine').current_exceeded).toBe(false);
    expect(cur('two-tone').current_exceeded).toBe(true);
  });

  it('refuses a drive with nothing to compare, naming the key', () => {
    const still = withOverrides(base, { 'drive.amplitude': 0 });
    expect(() => planComparison(still)).toThrow(InputError);
    expect(() => planComparison(still)).toThrow(/drive\.amplitude/);
  });
});

describe('the comparison runs', () => {
  const c = compareWaveforms(base);
  const noAct = compareWaveforms(noActuator);

  it('runs the three waveforms', () => {
    expect(c.rows.map((r) => r.waveform)).toEqual(['sine', 'triangle', 'two-tone']);
    for (const r of [...c.rows, ...noAct.rows]) expect(r.status).toBe('ok');
  });

  it('the sine spends (2/pi) arcsin(v_c / v_peak) of the time below the critical speed', () => {
    // at twice the fixture's stroke, so that v_c lies inside (0, v_peak) with the round-trip
    // engine's returned field (its critical speed is higher than the modal engine's was)
    const wide = withOverrides(base, { 'drive.amplitude': 2 * base.drive.amplitude });
    const wideNoAct = withOverrides(noActuator, { 'drive.amplitude': 2 * noActuator.drive.amplitude });
    for (const [comp, sc] of [
      [compareWaveforms(wide), wide],
      [compareWaveforms(wideNoAct), wideNoAct],
    ] as const) {
      const s = row(comp, 'sine');
      // peak speed 2 pi f A of x = A sin(2 pi f t) (derivative)
      expect(s.peak_speed_m_s / (2 * Math.PI * sc.drive.frequency * s.amplitude_m)).toBeCloseTo(1, 12);
      const vc = s.critical_speed_m_s!;
      // the fixture puts v_c inside (0, v_peak), so the closed form is exercised, not clamped
      expect(vc).toBeGreaterThan(0);
      expect(vc).toBeLessThan(s.peak_speed_m_s);
      // closed form of MODEL.md section 4 (time at |cos| < x over a period is (2/pi) arcsin x); rounding only
      expect(s.fraction_below_critical!).toBeCloseTo((2 / Math.PI) * Math.asin(vc / s.peak_speed_m_s), 12);
      // second method: count midpoints of one period with |v_peak cos| < v_c; with 1e5 samples
      // and 4 crossings per period the count errs by at most 4e-5
      const n = 100_000;
      let below = 0;
      for (let i = 0; i < n; i++)
        if (Math.abs(s.peak_speed_m_s * Math.cos((2 * Math.PI * (i + 0.5)) / n)) < vc) below++;
      expect(Math.abs(s.fraction_below_critical! - below / n)).toBeLessThan(5e-5);
    }
  });

  it('the ideal triangle is either always below the critical speed or never', () => {
    // constant speed 4 A f between instantaneous turns: fraction 1 if v_c > 4 A f, else 0
    // (the turning instants have zero duration; common practice, no source)
    const seen = new Set<number>();
    for (const comp of [c, noAct]) {
      const t = row(comp, 'triangle');
      expect(t.peak_speed_m_s / (4 * t.amplitude_m * base.drive.frequency)).toBeCloseTo(1, 12);
      const expected = t.critical_speed_m_s! > t.peak_speed_m_s ? 1 : 0;
      expect(t.fraction_below_critical).toBe(expected);
      seen.add(expected);
    }
    // the two scenarios are chosen so that both cases occur (1 at 800 nm, 0 at 1.6 um)
    expect([...seen].sort()).toEqual([0, 1]);
  });

  it('two tones at 3 f repeat, so the time fraction is that of one common period', () => {
    const t = row(c, 'two-tone');
    const vc = t.critical_speed_m_s!;
    const w1 = 2 * Math.PI * base.drive.frequency;
    const w2 = 2 * Math.PI * t.second_frequency_Hz!;
    // v = A1 w1 cos(w1 t) + A2 w2 cos(w2 t) (phases 0 in the fixture), derivative of the two sines
    const g = (x: number) =>
      Math.abs(t.amplitude_m * w1 * Math.cos(w1 * x) + t.second_amplitude_m! * w2 * Math.cos(w2 * x)) - vc;
    // second method: the crossings of |v| = v_c located by bisection, the time below summed
    // exactly between them (the code samples 2e5 midpoints instead)
    const T = 1 / base.drive.frequency;
    const n = 4000;
    const cuts = [0];
    for (let i = 0; i < n; i++) {
      let lo = (i * T) / n;
      let hi = ((i + 1) * T) / n;
      if (g(lo) < 0 === g(hi) < 0) continue;
      const loNeg = g(lo) < 0;
      for (let k = 0; k < 60; k++) {
        const mid = 0.5 * (lo + hi);
        if (g(mid) < 0 === loNeg) lo = mid;
        else hi = mid;
      }
      cuts.push(0.5 * (lo + hi));
    }
    cuts.push(T);
    let below = 0;
    for (let k = 0; k + 1 < cuts.length; k++)
      if (g(0.5 * (cuts[k] + cuts[k + 1])) < 0) below += cuts[k + 1] - cuts[k];
    // the fixture's v_c lies inside the speed range, so there are crossings to find
    expect(cuts.length).toBeGreaterThan(2);
    // midpoint sampling at 2e5 points errs by at most (crossings) x T / 2e5 in time
    expect(t.fraction_below_critical_time!).toBeCloseTo(below / T, 3);
  });

  it('without an actuator it holds the stroke equal and says so', () => {
    expect(noAct.basis).toBe('equal stroke');
    expect(noAct.voltage_peak_V).toBeNull();
    const two = row(noAct, 'two-tone');
    // stroke 2 (A1 + A2) of two tones equals the sine's 2 A
    // halving and adding back are exact in binary floating point
    expect(2 * (two.amplitude_m + two.second_amplitude_m!)).toBe(2 * row(noAct, 'sine').amplitude_m);
    expect(noAct.notes.join(' ')).toMatch(/no actuator section.*same peak-to-peak stroke/);
  });

  it('recommends the decoupled waveform with the highest gain over static', () => {
    for (const comp of [c, noAct]) {
      const dec = comp.rows.filter((r) => r.class === 'decoupled' && r.gain_over_static !== null);
      const best =
        dec.length === 0
          ? null
          : dec.reduce((a, b) => (b.gain_over_static! > a.gain_over_static! ? b : a)).waveform;
      expect(comp.recommendation.waveform).toBe(best);
      expect(comp.recommendation.reason.length).toBeGreaterThan(20);
    }
  });
});

describe('the run summary carries the actuator sheet', () => {
  const a = runScenario(base);
  it('equals actuatorSheet of the scenario, and is null without an actuator section', () => {
    expect(JSON.parse(JSON.stringify(a.summary.actuator))).toEqual(
      JSON.parse(JSON.stringify(actuatorSheet(base))),
    );
    expect(runScenario(noActuator).summary.actuator).toBeNull();
  });

  it('renders in the report with values, limits and OK / EXCEEDED', () => {
    // white space between tags is not content: compare the rows with it removed
    const tight0 = (h: string) => h.replace(/>\s+</g, '><');
    const page = tight0(buildRunReportHtml(a));
    expect(page).toContain('What the actuator has to deliver');
    const v = a.summary.actuator!.actuator!.voltage_peak_V;
    expect(page).toContain(
      `<tr class=""><th>peak voltage</th><td class="num">${fmtSI(v, 'V')}</td><td class="num">≤ 400 V</td><td>OK</td></tr>`,
    );
    // the same run with a voltage limit below the need: flagged (the report only reads the summary)
    const tight = withOverrides(base, { 'actuator.max_voltage': '100 V' });
    const b = { ...a, summary: { ...a.summary, actuator: actuatorSheet(tight) } };
    expect(tight0(buildRunReportHtml(b))).toContain(
      `<tr class="flag"><th>peak voltage</th><td class="num">${fmtSI(v, 'V')}</td><td class="num">≤ 100 V</td><td>EXCEEDED</td></tr>`,
    );
    const none = { ...a, summary: { ...a.summary, actuator: null } };
    expect(buildRunReportHtml(none)).not.toContain('What the actuator has to deliver');
  });
});

describe('dithercav compare', () => {
  it('prints the table and writes compare.json (exit 0)', () => {
    const out = join(tmp, 'cli');
    const r = cli('compare', FIXTURE, '--out', out, '--quiet');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(
      /^waveform\s+amplitude\(s\)\s+peak speed\s+time below v_c\s+gain over static\s+ripple in band\s+hops\/period\s+class$/m,
    );
    expect(r.out).toMatch(/at equal peak drive voltage/);
    expect(r.out).toMatch(/^(recommended|no recommendation): /m);
    const file = join(out, 'compare.json');
    expect(existsSync(file)).toBe(true);
    const j = JSON.parse(readFileSync(file, 'utf8')) as WaveformComparison;
    expect(j.rows.map((x) => x.waveform)).toEqual(['sine', 'triangle', 'two-tone']);
    expect(j.basis).toBe('equal peak voltage');
    // report.html beside it, rebuilt by `dithercav report` from compare.json alone
    const page = join(out, 'report.html');
    expect(existsSync(page)).toBe(true);
    rmSync(page);
    const rebuilt = cli('report', out);
    expect(rebuilt.code, rebuilt.err).toBe(0);
    const text = readFileSync(page, 'utf8');
    expect(text).toContain('data-report-kind="compare"');
    expect(text).toContain('The waveforms side by side');
  });

  it('draws each waveform from its saved parts: a sine part gives A sin(wt + phi) and speed A w cos(wt + phi)', () => {
    // closed form of one sinusoid, checked at a quarter period
    const A = 2e-7;
    const f = 1e5;
    const m = waveformMotion([{ frequency_Hz: f, amplitude_m: A, response_phase_rad: 0 }], f, 1, 4);
    expect(m.t).toHaveLength(5);
    expect(m.x[1]).toBeCloseTo(A, 18); // sin(pi/2) = 1; tolerance: double round-off at 1e-7 scale
    expect(m.v[0]).toBeCloseTo(2 * Math.PI * f * A, 9); // cos(0) = 1
    // two parts add: the peak of the sum at t = 0 with phases pi/2 is A1 + A2
    const two = waveformMotion(
      [
        { frequency_Hz: f, amplitude_m: A, response_phase_rad: Math.PI / 2 },
        { frequency_Hz: 3 * f, amplitude_m: A / 3, response_phase_rad: Math.PI / 2 },
      ],
      f,
    );
    expect(two.x[0]).toBeCloseTo(A + A / 3, 18);
  });

  it('bad input exits 2 with the file and the key', () => {
    const missing = cli('compare', join(tmp, 'no-such-file.yaml'), '--quiet');
    expect(missing.code).toBe(2);
    expect(missing.err).toMatch(/no-such-file\.yaml/);
    const still = join(tmp, 'still.yaml');
    writeFileSync(still, readFileSync(FIXTURE, 'utf8').replace(/amplitude: 800 nm/, 'amplitude: 0 nm'));
    const r = cli('compare', still, '--out', join(tmp, 'still-out'), '--quiet');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/still\.yaml: drive\.amplitude: expected an amplitude above 0/);
    expect(r.err).not.toMatch(/\n\s+at /); // no stack trace
  });
});
