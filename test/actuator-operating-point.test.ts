import { describe, expect, it } from 'vitest';
import type { Scenario, ScenarioInput } from '../src/scenario/schema';
import { actuatorScenario } from './fixtures/actuator';
import type { MapAxis, SweepMap } from '../src/results/map';
import type { RunClass } from '../src/results/summary';
import { reachableMask, recommendOperatingPoint } from '../src/analysis/operating-point';
import { mechanicalResponse, reachable } from '../src/physics/actuator';
import { withOverrides } from '../src/scenario/validate';
import { InputError } from '../src/scenario/errors';

const TWO_PI = 2 * Math.PI;

/** Invented test scenario; only the drive and actuator matter here. */
function scenario(actuator?: ScenarioInput['actuator']): Scenario {
  return actuatorScenario({ waveform: 'sine', amplitude: 1e-7, frequency: 1e5 }, actuator);
}

const ACT = {
  stroke_per_volt: 10e-9,
  capacitance: 50e-9,
  resonance: 400e3,
  quality_factor: 20,
  max_voltage: 100,
  min_resonance_margin: 1.5,
};

function logAxis(key: string, from: number, to: number, points: number): MapAxis {
  const values = Array.from({ length: points }, (_, i) => from * (to / from) ** (i / (points - 1)));
  return { key, values, scale: 'log' };
}

/** A synthetic map over the given axes (row-major, last fastest) with classes from a rule. */
function synthMap(axes: MapAxis[], rule: (v: Record<string, number>) => RunClass): SweepMap {
  const n = axes.reduce((k, a) => k * a.values.length, 1);
  const classes: (RunClass | null)[] = [];
  for (let i = 0; i < n; i++) {
    const v: Record<string, number> = {};
    let rem = i;
    for (let j = axes.length - 1; j >= 0; j--) {
      v[axes[j].key] = axes[j].values[rem % axes[j].values.length];
      rem = Math.floor(rem / axes[j].values.length);
    }
    classes.push(rule(v));
  }
  return {
    version: 1,
    name: 'synthetic',
    scenario_sha256: '',
    axes,
    total_points: n,
    finished_points: n,
    failed_points: 0,
    metrics: {},
    classes,
    class_reasons: classes.map(() => null),
    amplitude_key: 'drive.amplitude',
    frequency_key: 'drive.frequency',
    onset_curve: null,
    decoupling_boundary: null,
    critical_curve: null,
    reachable: null,
    recommended: null,
    recommended_reason: '',
  };
}

// 4 points per decade: amplitude 1 nm .. 10 um, frequency 100 Hz .. 1 MHz.
const AMP = logAxis('drive.amplitude', 1e-9, 1e-5, 17);
const FREQ = logAxis('drive.frequency', 100, 1e6, 17);
// 8 points per decade over the same spans: fine enough for the voltage-versus-resonance trade to show.
const AMP8 = logAxis('drive.amplitude', 1e-9, 1e-5, 33);
const FREQ8 = logAxis('drive.frequency', 100, 1e6, 33);
/** Invented rule for the synthetic map: decoupled above a peak speed of 0.3 m/s. */
const bySpeed =
  (vc: number) =>
  (v: Record<string, number>): RunClass =>
    TWO_PI * v['drive.frequency'] * v['drive.amplitude'] >= vc ? 'decoupled' : 'modulated';
/**
 * Invented rule where the stroke matters too: decoupled when the peak speed reaches 5 cm/s
 * and the stroke 2A sweeps at least half a wavelength (one external resonance per half
 * period). Then the same amplitude serves at every frequency above a few tens of kHz, and
 * voltage (lowest near the resonance, where |H| rises) trades against current 2 pi f C V
 * (lowest at low frequency).
 */
const bySpeedAndStroke = (v: Record<string, number>): RunClass =>
  TWO_PI * v['drive.frequency'] * v['drive.amplitude'] >= 0.05 && 2 * v['drive.amplitude'] >= 632.8e-9 / 2
    ? 'decoupled'
    : 'modulated';

/**
 * Brute-force expectation on a plain 2-D grid (no strides): decoupled points whose
 * neighbours along both axes are decoupled, reachable by reachable(), ranked by the
 * utilisation of the amplifier's tightest rating, written out here from the ratings:
 * u = max(V / V_max, I / I_max) with V = A / (k_v |H(f)|) and I = 2 pi f C V (each term
 * only where the scenario sets that rating; Thomson, Theory of Vibration, ch. 3, for |H|),
 * ties to the lower voltage; with no rating the lowest voltage, without an actuator the
 * lowest amplitude; remaining ties to the lower frequency.
 */
function bruteForce(
  s: Scenario,
  rule: (v: Record<string, number>) => RunClass,
  amp: MapAxis = AMP,
  freq: MapAxis = FREQ,
): { A: number; f: number; u: number | null; V: number | null } | null {
  const grid = amp.values.map((A) =>
    freq.values.map((f) => rule({ 'drive.amplitude': A, 'drive.frequency': f }) === 'decoupled'),
  );
  let best: { A: number; f: number; u: number | null; V: number | null; key: number[] } | null = null;
  const act = s.actuator;
  for (let i = 0; i < amp.values.length; i++) {
    for (let j = 0; j < freq.values.length; j++) {
      const nb = [
        grid[i][j],
        grid[i - 1]?.[j] ?? true,
        grid[i + 1]?.[j] ?? true,
        grid[i][j - 1] ?? true,
        grid[i][j + 1] ?? true,
      ];
      if (!nb.every(Boolean)) continue;
      const A = amp.values[i];
      const f = freq.values[j];
      if (!reachable(s, A, f).ok) continue;
      let key: number[];
      let u: number | null = null;
      let V: number | null = null;
      if (act) {
        const h =
          act.resonance === undefined
            ? 1
            : mechanicalResponse(f, act.resonance, act.quality_factor).magnitude;
        V = A / (act.stroke_per_volt * h);
        const terms: number[] = [];
        if (act.max_voltage !== undefined) terms.push(V / act.max_voltage);
        if (act.max_current !== undefined && act.capacitance !== undefined)
          terms.push((TWO_PI * f * act.capacitance * V) / act.max_current);
        if (terms.length > 0) {
          u = Math.max(...terms);
          key = [u, V, f];
        } else {
          key = [V, f];
        }
      } else {
        key = [A, f];
      }
      const less = (a: number[], b: number[]) => {
        for (let k = 0; k < a.length; k++) {
          // relative 1e-12: the code and this expectation round their ratios differently
          if (Math.abs(a[k] - b[k]) > 1e-12 * Math.abs(b[k])) return a[k] < b[k];
        }
        return false;
      };
      if (best === null || less(key, best.key)) best = { A, f, u, V, key };
    }
  }
  return best === null ? null : { A: best.A, f: best.f, u: best.u, V: best.V };
}

describe('recommended operating point', () => {
  const rule = bySpeed(0.3);

  it('is decoupled with decoupled neighbours, reachable, and the lowest-voltage such point under a voltage rating (brute force)', () => {
    const s = scenario(ACT);
    const map = synthMap([AMP, FREQ], rule);
    const { recommended, recommended_reason } = recommendOperatingPoint(map, s);
    expect(recommended).not.toBeNull();
    const p = recommended!;
    expect(map.classes[p.index]).toBe('decoupled');
    expect(reachable(s, p.amplitude_m, p.frequency_Hz).ok).toBe(true);
    expect(reachableMask(map, s)![p.index]).toBe(true);
    const bf = bruteForce(s, rule)!;
    expect(p.amplitude_m).toBe(bf.A);
    expect(p.frequency_Hz).toBe(bf.f);
    // resonance margin 1.5 caps f at 267 kHz; the grid point below is 178 kHz
    expect(p.frequency_Hz).toBeCloseTo(177827.9, 0);
    expect(p.voltage_V!).toBeCloseTo(
      p.amplitude_m / (10e-9 * mechanicalResponse(p.frequency_Hz, 400e3, 20).magnitude),
      9,
    );
    expect(p.current_A!).toBeCloseTo(TWO_PI * p.frequency_Hz * 50e-9 * p.voltage_V!, 12);
    expect(p.utilisation!).toBeCloseTo(p.voltage_V! / 100, 12);
    expect(p.limiting_key).toBe('actuator.max_voltage');
    expect(p.stroke_m).toBeCloseTo(2 * p.amplitude_m, 18);
    expect(p.axes).toEqual({ 'drive.amplitude': p.amplitude_m, 'drive.frequency': p.frequency_Hz });
    expect(recommended_reason).toBe(p.reason);
    expect(p.reason).toMatch(/most headroom on the amplifier/);
    expect(p.reason).toContain('actuator.max_voltage');
  });

  it('gives the same point whatever the axis order', () => {
    const s = scenario(ACT);
    const a = recommendOperatingPoint(synthMap([AMP, FREQ], rule), s).recommended!;
    const b = recommendOperatingPoint(synthMap([FREQ, AMP], rule), s).recommended!;
    expect([b.amplitude_m, b.frequency_Hz]).toEqual([a.amplitude_m, a.frequency_Hz]);
    expect(b.index).not.toBe(a.index);
    const mask = reachableMask(synthMap([FREQ, AMP], rule), s)!;
    expect(mask[b.index]).toBe(true);
  });

  it('moves with the actuator: a higher resonance opens higher frequencies at lower voltage', () => {
    const low = recommendOperatingPoint(synthMap([AMP, FREQ], rule), scenario(ACT)).recommended!;
    const stiff = scenario({ ...ACT, resonance: 4e6 });
    const high = recommendOperatingPoint(synthMap([AMP, FREQ], rule), stiff).recommended!;
    expect(high.frequency_Hz).toBeGreaterThan(low.frequency_Hz);
    expect(high.voltage_V!).toBeLessThan(low.voltage_V!);
    const bf = bruteForce(stiff, rule)!;
    expect([high.amplitude_m, high.frequency_Hz]).toEqual([bf.A, bf.f]);
  });

  it('moves when the voltage limit changes: voltage trades against current, a tighter limit moves it towards the resonance', () => {
    // Below f0 a stroke costs less voltage nearer the resonance (|H| rises; Thomson ch. 3)
    // but more reactive current 2 pi f C V; with both ratings set, the most headroom moves.
    const act = { ...ACT, max_current: 3 };
    const at = (maxV: number) =>
      recommendOperatingPoint(
        synthMap([AMP8, FREQ8], bySpeedAndStroke),
        scenario({ ...act, max_voltage: maxV }),
      ).recommended!;
    const base = at(100);
    const tight = at(50);
    const loose = at(300);
    expect(tight.frequency_Hz).toBeGreaterThan(base.frequency_Hz);
    expect(tight.voltage_V!).toBeLessThan(base.voltage_V!);
    expect(tight.current_A!).toBeGreaterThan(base.current_A!);
    expect(loose.frequency_Hz).toBeLessThan(base.frequency_Hz);
    expect(loose.current_A!).toBeLessThan(base.current_A!);
    for (const [maxV, p] of [
      [100, base],
      [50, tight],
      [300, loose],
    ] as const) {
      const bf = bruteForce(scenario({ ...act, max_voltage: maxV }), bySpeedAndStroke, AMP8, FREQ8)!;
      expect([p.amplitude_m, p.frequency_Hz]).toEqual([bf.A, bf.f]);
      expect(p.utilisation!).toBeCloseTo(bf.u!, 12);
      expect(p.voltage_V!).toBeLessThanOrEqual(maxV * p.utilisation! * (1 + 1e-12));
      expect(p.current_A!).toBeLessThanOrEqual(3 * p.utilisation! * (1 + 1e-12));
    }
    // Every voltage limit from 20 V to 1 kV that leaves a point gives one of the decoupled
    // class that the actuator reaches, and its frequency never rises as the limit loosens.
    let lastF = Infinity;
    let found = 0;
    for (let maxV = 20; maxV <= 1000; maxV *= 1.25) {
      const s = scenario({ ...act, max_voltage: maxV });
      const map = synthMap([AMP8, FREQ8], bySpeedAndStroke);
      const p = recommendOperatingPoint(map, s).recommended;
      if (p === null) continue;
      found++;
      expect(map.classes[p.index]).toBe('decoupled');
      expect(reachableMask(map, s)![p.index]).toBe(true);
      expect(p.frequency_Hz).toBeLessThanOrEqual(lastF);
      lastF = p.frequency_Hz;
    }
    expect(found).toBeGreaterThan(10);
  });

  it('a bigger amplifier never asks for a harder drive: with a voltage rating alone the point stays as the rating grows', () => {
    // The resonance margin is a constraint, not a cost: a generous voltage rating must not
    // pull the choice to a lower frequency at a higher voltage.
    const points = [100, 300, 1000, 3000].map(
      (maxV) =>
        recommendOperatingPoint(synthMap([AMP8, FREQ8], rule), scenario({ ...ACT, max_voltage: maxV }))
          .recommended!,
    );
    for (const p of points)
      expect([p.amplitude_m, p.frequency_Hz]).toEqual([points[0].amplitude_m, points[0].frequency_Hz]);
  });

  it('with a voltage limit only (no resonance, no current limit) it is the lowest-voltage point', () => {
    const act = { stroke_per_volt: 10e-9, max_voltage: 100 };
    const s = scenario(act);
    const p = recommendOperatingPoint(synthMap([AMP, FREQ], rule), s).recommended!;
    const bf = bruteForce(s, rule)!;
    expect([p.amplitude_m, p.frequency_Hz]).toEqual([bf.A, bf.f]);
    expect(p.limiting_key).toBe('actuator.max_voltage');
    expect(p.utilisation!).toBeCloseTo(p.voltage_V! / 100, 12);
    // no point that qualifies has a lower voltage: the smallest decoupled amplitude with margin
    const lower = AMP.values.filter((A) => A < p.amplitude_m && A / 10e-9 <= 100);
    for (const A of lower) {
      const others = FREQ.values.filter(
        (f) => rule({ 'drive.amplitude': A, 'drive.frequency': f }) === 'decoupled',
      );
      const withMargin = others.filter((f) => {
        const i = AMP.values.indexOf(A);
        const j = FREQ.values.indexOf(f);
        const cls = (ii: number, jj: number) =>
          ii < 0 ||
          jj < 0 ||
          ii >= AMP.values.length ||
          jj >= FREQ.values.length ||
          rule({ 'drive.amplitude': AMP.values[ii], 'drive.frequency': FREQ.values[jj] }) === 'decoupled';
        return cls(i - 1, j) && cls(i + 1, j) && cls(i, j - 1) && cls(i, j + 1);
      });
      expect(withMargin).toEqual([]);
    }
  });

  it('without a rating it is the lowest-voltage point and no utilisation is given', () => {
    const s = scenario({ stroke_per_volt: 10e-9, capacitance: 50e-9, resonance: 400e3, quality_factor: 20 });
    const p = recommendOperatingPoint(synthMap([AMP, FREQ], rule), s).recommended!;
    const bf = bruteForce(s, rule)!;
    expect([p.amplitude_m, p.frequency_Hz]).toEqual([bf.A, bf.f]);
    expect(p.utilisation).toBeNull();
    expect(p.reason).toMatch(/lowest peak drive voltage/);
  });

  it('with a current rating alone it is the point of least reactive current', () => {
    const s = scenario({
      stroke_per_volt: 10e-9,
      capacitance: 50e-9,
      resonance: 400e3,
      quality_factor: 20,
      max_current: 3,
    });
    const map = synthMap([AMP8, FREQ8], bySpeedAndStroke);
    const p = recommendOperatingPoint(map, s).recommended!;
    const bf = bruteForce(s, bySpeedAndStroke, AMP8, FREQ8)!;
    expect([p.amplitude_m, p.frequency_Hz]).toEqual([bf.A, bf.f]);
    expect(p.limiting_key).toBe('actuator.max_current');
    expect(p.utilisation!).toBeCloseTo(p.current_A! / 3, 12);
    // and it draws less current than the lowest-voltage point does
    const lowestV = recommendOperatingPoint(
      map,
      scenario({ stroke_per_volt: 10e-9, capacitance: 50e-9, resonance: 400e3, quality_factor: 20 }),
    ).recommended!;
    expect(p.current_A!).toBeLessThan(lowestV.current_A!);
    expect(p.voltage_V!).toBeGreaterThan(lowestV.voltage_V!);
  });

  it('a voltage limit below the lowest-voltage point leaves none reachable, and says which limit', () => {
    // The lowest voltage of all points with a margin, found with no voltage limit set:
    // any limit below it removes every such point.
    const noLimit = {
      stroke_per_volt: 10e-9,
      capacitance: 50e-9,
      resonance: 400e3,
      quality_factor: 20,
      min_resonance_margin: 1.5,
    };
    const lowest = recommendOperatingPoint(synthMap([AMP, FREQ], rule), scenario(noLimit)).recommended!;
    const same = recommendOperatingPoint(
      synthMap([AMP, FREQ], rule),
      scenario({ ...noLimit, max_voltage: lowest.voltage_V! * 1.01 }),
    ).recommended!;
    expect(same.index).toBe(lowest.index);
    const tight = recommendOperatingPoint(
      synthMap([AMP, FREQ], rule),
      scenario({ ...noLimit, max_voltage: lowest.voltage_V! * 0.99 }),
    );
    expect(tight.recommended).toBeNull();
    expect(tight.recommended_reason).toMatch(/actuator\.max_voltage/);
    const mask = reachableMask(
      synthMap([AMP, FREQ], rule),
      scenario({ ...noLimit, max_voltage: lowest.voltage_V! * 0.99 }),
    )!;
    expect(mask[lowest.index]).toBe(false);
  });

  it('without an actuator: smallest stroke, no reachability mask', () => {
    const s = scenario();
    const map = synthMap([AMP, FREQ], rule);
    expect(reachableMask(map, s)).toBeNull();
    const p = recommendOperatingPoint(map, s).recommended!;
    const bf = bruteForce(s, rule)!;
    expect([p.amplitude_m, p.frequency_Hz]).toEqual([bf.A, bf.f]);
    expect(p.voltage_V).toBeNull();
    expect(p.reason).toMatch(/smallest stroke/);
  });

  it('no decoupled point gives null and a reason; none with a margin gives the fallback, marked', () => {
    const none = recommendOperatingPoint(
      synthMap([AMP, FREQ], () => 'hopping'),
      scenario(ACT),
    );
    expect(none.recommended).toBeNull();
    expect(none.recommended_reason).toMatch(/none of the 289 map points is decoupled/);
    // a sweep stopped after 3 points: the reason counts the finished points, not the grid
    const stopped = synthMap([AMP, FREQ], () => 'hopping');
    stopped.classes = stopped.classes.map((c, i) => (i < 3 ? c : null));
    expect(recommendOperatingPoint(stopped, scenario(ACT)).recommended_reason).toMatch(
      /none of the 3 finished point\(s\) \(of 289 on the map\) is decoupled/,
    );
    const lone = AMP.values[8];
    const f0 = FREQ.values[8];
    const isolatedMap = synthMap([AMP, FREQ], (v) =>
      v['drive.amplitude'] === lone && v['drive.frequency'] === f0 ? 'decoupled' : 'modulated',
    );
    // without an actuator every point is reachable: the lone decoupled point is the fallback
    const isolated = recommendOperatingPoint(isolatedMap, scenario());
    expect(isolated.recommended).not.toBeNull();
    expect([isolated.recommended!.amplitude_m, isolated.recommended!.frequency_Hz]).toEqual([lone, f0]);
    expect(isolated.recommended!.margin).toBe(false);
    expect(isolated.recommended_reason).toMatch(/^no margin on this grid/);
    // a point with decoupled neighbours is marked as having its margin
    expect(recommendOperatingPoint(synthMap([AMP, FREQ], rule), scenario()).recommended!.margin).toBe(true);
    const noAxes = recommendOperatingPoint(synthMap([AMP], rule), scenario(ACT));
    expect(noAxes.recommended).toBeNull();
    expect(noAxes.recommended_reason).toMatch(/drive\.frequency/);
  });

  it('with a further axis, takes the best over it and says so', () => {
    // Invented rule: the longer gap decouples at a lower speed (0.1 m/s instead of 1 m/s).
    const gap: MapAxis = { key: 'external.length', values: [0.05, 0.1], scale: 'linear' };
    const rule2 = (v: Record<string, number>): RunClass => bySpeed(v['external.length'] > 0.07 ? 0.1 : 1)(v);
    // A map over external.length comes from a scenario with a gap (a sweep refuses the axis without one).
    const s = withOverrides(scenario(ACT), {
      'external.length': 0.05,
      'external.return_mirror.reflectivity': 0.9,
    });
    const p = recommendOperatingPoint(synthMap([FREQ, gap, AMP], rule2), s).recommended!;
    expect(p.axes['external.length']).toBe(0.1);
    expect(p.reason).toMatch(/best over the other axes: external\.length = 0\.1/);
    const bf = bruteForce(s, bySpeed(0.1))!;
    expect([p.amplitude_m, p.frequency_Hz]).toEqual([bf.A, bf.f]);
  });

  it('builds each point with withOverrides: a value no scenario file could hold is refused, naming the key', () => {
    // A negative amplitude is refused by the schema; a hand-made copy of the scenario used to
    // pass it on to the actuator sheet unnoticed.
    const bad: MapAxis = { key: 'drive.amplitude', values: [-1e-7, 1e-7], scale: 'linear' };
    const map = synthMap([bad, FREQ], rule);
    expect(() => reachableMask(map, scenario(ACT))).toThrow(InputError);
    expect(() => reachableMask(map, scenario(ACT))).toThrow(/drive\.amplitude/);
  });
});
