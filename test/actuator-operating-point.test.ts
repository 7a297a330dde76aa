import { describe, expect, it } from 'vitest';
import { scenarioSchema, type Scenario, type ScenarioInput } from '../src/scenario/schema';
import type { MapAxis, SweepMap } from '../src/results/map';
import type { RunClass } from '../src/results/summary';
import { reachableMask, recommendOperatingPoint } from '../src/analysis/operating-point';
import { mechanicalResponse, reachable } from '../src/physics/actuator';

const TWO_PI = 2 * Math.PI;

/** Invented test scenario; only the drive and actuator matter here. */
function scenario(actuator?: ScenarioInput['actuator']): Scenario {
  return scenarioSchema.parse({
    name: 'operating-point-test',
    laser: {
      wavelength: 632.8e-9,
      cavity_length: 0.2,
      rear_mirror: { reflectivity: 0.999 },
      output_coupler: { reflectivity: 0.99 },
      gain: { linewidth: 1.5e9, pump_ratio: 1.5, saturation_power: 0.2, inversion_lifetime: 2e-8 },
    },
    drive: { waveform: 'sine', amplitude: 1e-7, frequency: 1e5 },
    actuator,
  });
}

const ACT = { stroke_per_volt: 10e-9, capacitance: 50e-9, resonance: 400e3, quality_factor: 20, max_voltage: 100, min_resonance_margin: 1.5 };

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
/** Invented rule for the synthetic map: decoupled above a peak speed of 0.3 m/s. */
const bySpeed = (vc: number) => (v: Record<string, number>): RunClass => (TWO_PI * v['drive.frequency'] * v['drive.amplitude'] >= vc ? 'decoupled' : 'modulated');

/**
 * Brute-force expectation on a plain 2-D grid (no strides): decoupled points whose
 * neighbours along both axes are decoupled, reachable by reachable(), lowest voltage
 * A / (k_v |H(f)|) (or lowest amplitude without actuator), ties to lower frequency.
 */
function bruteForce(s: Scenario, rule: (v: Record<string, number>) => RunClass): { A: number; f: number } | null {
  const grid = AMP.values.map((A) => FREQ.values.map((f) => rule({ 'drive.amplitude': A, 'drive.frequency': f }) === 'decoupled'));
  let best: { A: number; f: number; cost: number } | null = null;
  for (let i = 0; i < AMP.values.length; i++) {
    for (let j = 0; j < FREQ.values.length; j++) {
      const nb = [grid[i][j], grid[i - 1]?.[j] ?? true, grid[i + 1]?.[j] ?? true, grid[i][j - 1] ?? true, grid[i][j + 1] ?? true];
      if (!nb.every(Boolean)) continue;
      const A = AMP.values[i];
      const f = FREQ.values[j];
      if (!reachable(s, A, f).ok) continue;
      const cost = s.actuator ? A / (s.actuator.stroke_per_volt * mechanicalResponse(f, s.actuator.resonance!, s.actuator.quality_factor).magnitude) : A;
      if (best === null || cost < best.cost || (cost === best.cost && f < best.f)) best = { A, f, cost };
    }
  }
  return best;
}

describe('recommended operating point', () => {
  const rule = bySpeed(0.3);

  it('is decoupled with decoupled neighbours, reachable, and the cheapest such point (brute force)', () => {
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
    expect(p.voltage_V!).toBeCloseTo(p.amplitude_m / (10e-9 * mechanicalResponse(p.frequency_Hz, 400e3, 20).magnitude), 9);
    expect(p.stroke_m).toBeCloseTo(2 * p.amplitude_m, 18);
    expect(p.axes).toEqual({ 'drive.amplitude': p.amplitude_m, 'drive.frequency': p.frequency_Hz });
    expect(recommended_reason).toBe(p.reason);
    expect(p.reason).toMatch(/lowest peak drive voltage/);
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

  it('a voltage limit below the cheapest point leaves none reachable, and says which limit', () => {
    // Lowering max_voltage only removes points, and the cheapest point has the lowest voltage
    // of all: below it nothing remains; a limit above it keeps the same point.
    const base = recommendOperatingPoint(synthMap([AMP, FREQ], rule), scenario(ACT)).recommended!;
    const same = recommendOperatingPoint(synthMap([AMP, FREQ], rule), scenario({ ...ACT, max_voltage: base.voltage_V! * 1.01 })).recommended!;
    expect(same.index).toBe(base.index);
    const tight = recommendOperatingPoint(synthMap([AMP, FREQ], rule), scenario({ ...ACT, max_voltage: base.voltage_V! * 0.99 }));
    expect(tight.recommended).toBeNull();
    expect(tight.recommended_reason).toMatch(/actuator\.max_voltage/);
    const mask = reachableMask(synthMap([AMP, FREQ], rule), scenario({ ...ACT, max_voltage: base.voltage_V! * 0.99 }))!;
    expect(mask[base.index]).toBe(false);
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

  it('no decoupled point, or none with a margin, gives null and a reason', () => {
    const none = recommendOperatingPoint(synthMap([AMP, FREQ], () => 'hopping'), scenario(ACT));
    expect(none.recommended).toBeNull();
    expect(none.recommended_reason).toMatch(/none of the 289 map points is decoupled/);
    const lone = AMP.values[8];
    const f0 = FREQ.values[8];
    const isolated = recommendOperatingPoint(
      synthMap([AMP, FREQ], (v) => (v['drive.amplitude'] === lone && v['drive.frequency'] === f0 ? 'decoupled' : 'modulated')),
      scenario(ACT),
    );
    expect(isolated.recommended).toBeNull();
    expect(isolated.recommended_reason).toMatch(/no margin/);
    const noAxes = recommendOperatingPoint(synthMap([AMP], rule), scenario(ACT));
    expect(noAxes.recommended).toBeNull();
    expect(noAxes.recommended_reason).toMatch(/drive\.frequency/);
  });

  it('with a further axis, takes the best over it and says so', () => {
    // Invented rule: the longer gap decouples at a lower speed (0.1 m/s instead of 1 m/s).
    const gap: MapAxis = { key: 'external.length', values: [0.05, 0.1], scale: 'linear' };
    const rule2 = (v: Record<string, number>): RunClass => bySpeed(v['external.length'] > 0.07 ? 0.1 : 1)(v);
    const s = scenario(ACT);
    const p = recommendOperatingPoint(synthMap([FREQ, gap, AMP], rule2), s).recommended!;
    expect(p.axes['external.length']).toBe(0.1);
    expect(p.reason).toMatch(/best over the other axes: external\.length = 0\.1/);
    const bf = bruteForce(s, bySpeed(0.1))!;
    expect([p.amplitude_m, p.frequency_Hz]).toEqual([bf.A, bf.f]);
  });
});
