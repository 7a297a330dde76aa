/**
 * The inverse question of docs/model.md §5 on a stability map: which points an actuator
 * can reach, and the reachable operating point decoupled with a margin that asks least of it.
 *
 * The map's arrays are flattened row-major over its axes, the last axis fastest
 * (src/results/grid-index.ts); the amplitude and frequency axes are found by key, in any order.
 */
import type { OperatingPoint, SweepMap } from '../results/map';
import type { Scenario } from '../scenario/schema';
import { actuatorSheet, actuatorUtilisation } from '../physics/actuator';
import { strokePeakToPeak } from '../physics/drive';
import { formatSI } from '../scenario/units';
import { AMPLITUDE_KEY, FREQUENCY_KEY } from '../scenario/keypath';
import { withOverrides } from '../scenario/validate';
import { axisStrides, axisValuesAt, pointCount } from '../results/grid-index';

/**
 * Per map point, whether the scenario's actuator can deliver the drive there (no limit of
 * actuatorSheet exceeded: voltage, current, resonance margin, above resonance), every axis
 * value of the point applied to the scenario by `withOverrides`, as the sweep built the
 * point (validated; a copy). Axes the map lacks keep the scenario's values.
 * @returns one boolean per point (flat, row-major), or null when the scenario has no actuator
 */
export function reachableMask(map: SweepMap, scenario: Scenario): boolean[] | null {
  if (scenario.actuator === undefined) return null;
  const n = pointCount(map.axes);
  const mask = new Array<boolean>(n);
  for (let i = 0; i < n; i++) mask[i] = actuatorSheet(withOverrides(scenario, axisValuesAt(map.axes, i))).ok;
  return mask;
}

/** What recommendOperatingPoint returns: the two SweepMap fields of the same names. */
export interface OperatingPointChoice {
  recommended: OperatingPoint | null;
  recommended_reason: string;
}

/** What one candidate point costs; compared by `cheaper`. */
interface Cost {
  /** fraction of the tightest amplifier rating (null when ranking by voltage or stroke alone) */
  utilisation: number | null;
  limitingKey: string | null;
  /** peak drive voltage (V), or the peak-to-peak stroke (m) without an actuator */
  primary: number;
  voltage: number | null;
  current: number | null;
  frequency: number;
}

/** Lexicographic order: utilisation (when ranked by it), then voltage or stroke, then frequency. */
function cheaper(a: Cost, b: Cost): boolean {
  if (a.utilisation !== null && b.utilisation !== null && a.utilisation !== b.utilisation)
    return a.utilisation < b.utilisation;
  if (a.primary !== b.primary) return a.primary < b.primary;
  return a.frequency < b.frequency;
}

/**
 * The recommended operating point of a map: among points that are
 *  - decoupled with a margin: class 'decoupled', and so is every existing grid neighbour
 *    (index +-1) along the amplitude and the frequency axes (same values of the other axes);
 *    a neighbour not finished or failed does not count as decoupled;
 *  - reachable by the actuator (reachableMask; every point when there is no actuator),
 * the one that asks least of the hardware:
 *  - with an amplifier rating set (`actuator.max_voltage` and/or `actuator.max_current`):
 *    the smallest utilisation u = max(V / V_max, I / I_max) over the ratings set
 *    (actuatorUtilisation), i.e. the most headroom on the rating nearest to being reached;
 *    equal u goes to the lower voltage. With a voltage rating alone this is the
 *    lowest-voltage point; with both, voltage is traded against reactive current
 *    I = 2 pi f C V, so the point can move when either rating changes;
 *  - with an actuator but no rating (nothing to weigh the voltage against): the lowest peak
 *    drive voltage;
 *  - without an actuator: the lowest peak-to-peak stroke.
 * The resonance margin is a constraint (reachability), never a cost.
 * Remaining ties go to the lower frequency, then the lower index. Other axes are searched
 * too and the best point over them is taken (the reason says so).
 * @returns the point with a reason sentence, or null and a reason naming what was missing
 */
export function recommendOperatingPoint(map: SweepMap, scenario: Scenario): OperatingPointChoice {
  const ampKey = map.amplitude_key ?? AMPLITUDE_KEY;
  const freqKey = map.frequency_key ?? FREQUENCY_KEY;
  const ai = map.axes.findIndex((a) => a.key === ampKey);
  const fi = map.axes.findIndex((a) => a.key === freqKey);
  if (ai < 0 || fi < 0) {
    return {
      recommended: null,
      recommended_reason: `no operating point: the map needs both ${ampKey} and ${freqKey} axes`,
    };
  }
  const st = axisStrides(map.axes);
  const n = pointCount(map.axes);
  const nA = map.axes[ai].values.length;
  const nF = map.axes[fi].values.length;
  const isDecoupled = (i: number) => map.classes[i] === 'decoupled';

  const withMargin: number[] = [];
  let decoupledCount = 0;
  for (let i = 0; i < n; i++) {
    if (!isDecoupled(i)) continue;
    decoupledCount++;
    const ka = Math.floor(i / st[ai]) % nA;
    const kf = Math.floor(i / st[fi]) % nF;
    const ok =
      (ka === 0 || isDecoupled(i - st[ai])) &&
      (ka === nA - 1 || isDecoupled(i + st[ai])) &&
      (kf === 0 || isDecoupled(i - st[fi])) &&
      (kf === nF - 1 || isDecoupled(i + st[fi]));
    if (ok) withMargin.push(i);
  }
  if (decoupledCount === 0) {
    const finished = map.classes.filter((c) => c !== null && c !== undefined).length;
    return {
      recommended: null,
      recommended_reason:
        finished < n
          ? `no operating point: none of the ${finished} finished point(s) (of ${n} on the map) is decoupled`
          : `no operating point: none of the ${n} map points is decoupled`,
    };
  }
  // Without a point whose neighbours are decoupled too, the cheapest decoupled point is
  // still offered, marked: it may sit on the edge of the decoupled region.
  const margin = withMargin.length > 0;
  const candidates = margin ? withMargin : [...Array(n).keys()].filter(isDecoupled);

  const hasActuator = scenario.actuator !== undefined;
  const byUtilisation =
    scenario.actuator !== undefined &&
    (scenario.actuator.max_voltage !== undefined || scenario.actuator.max_current !== undefined);
  let best = -1;
  let bestCost: Cost | null = null;
  let reachableCount = 0;
  const refusals = new Map<string, number>();
  for (const i of candidates) {
    const values = axisValuesAt(map.axes, i);
    const s = withOverrides(scenario, values);
    let cost: Cost;
    if (hasActuator) {
      const sheet = actuatorSheet(s);
      if (!sheet.ok) {
        for (const k of sheet.exceeded) refusals.set(k, (refusals.get(k) ?? 0) + 1);
        continue;
      }
      const voltage = sheet.actuator!.voltage_peak_V;
      const u = byUtilisation ? actuatorUtilisation(sheet) : null;
      cost = {
        utilisation: u?.fraction ?? null,
        limitingKey: u?.key ?? null,
        primary: voltage,
        voltage,
        current: sheet.actuator!.current_peak_A,
        frequency: values[freqKey],
      };
    } else {
      cost = {
        utilisation: null,
        limitingKey: null,
        primary: strokePeakToPeak(s.drive),
        voltage: null,
        current: null,
        frequency: values[freqKey],
      };
    }
    reachableCount++;
    if (bestCost === null || cheaper(cost, bestCost)) {
      best = i;
      bestCost = cost;
    }
  }
  if (bestCost === null) {
    const why = [...refusals.entries()].map(([k, c]) => `${c} exceed ${k}`).join(', ');
    return {
      recommended: null,
      recommended_reason: margin
        ? `no operating point: ${withMargin.length} point(s) are decoupled with a margin but the actuator reaches none of them (${why})`
        : `no operating point: ${decoupledCount} point(s) are decoupled, none with decoupled neighbours in both amplitude and frequency, and the actuator reaches none of them (${why})`,
    };
  }

  const values = axisValuesAt(map.axes, best);
  const s = withOverrides(scenario, values);
  const amplitude = values[ampKey];
  const frequency = values[freqKey];
  const stroke = strokePeakToPeak(s.drive);
  const others = map.axes.filter((a, i) => i !== ai && i !== fi && a.values.length > 1);
  const where = `${formatSI(amplitude, 'm', 3)} amplitude and ${formatSI(frequency, 'Hz', 3)}`;
  let cheapest: string;
  if (bestCost.utilisation !== null) {
    cheapest =
      `most headroom on the amplifier at ${where}: it uses ${(100 * bestCost.utilisation).toFixed(0)} % of its tightest rating ` +
      `(${bestCost.limitingKey}; peak drive ${formatSI(bestCost.voltage!, 'V', 3)}` +
      (bestCost.current !== null ? `, ${formatSI(bestCost.current, 'A', 3)}` : '') +
      ')';
  } else if (hasActuator) {
    cheapest = `lowest peak drive voltage (${formatSI(bestCost.voltage!, 'V', 3)}) at ${where}`;
  } else {
    cheapest = `smallest stroke (${formatSI(stroke, 'm', 3)} peak to peak; no actuator described) at ${where}`;
  }
  let reason = margin
    ? `${cheapest}, ` +
      `among ${reachableCount} point(s) that are decoupled with decoupled neighbours in amplitude and frequency` +
      (hasActuator ? ' and that the actuator can reach' : '') +
      ` (${decoupledCount} of ${n} points decoupled, ${withMargin.length} with a margin)`
    : `no margin on this grid: no decoupled point has decoupled neighbours in both amplitude and frequency, so this is the ${cheapest}, ` +
      `among ${reachableCount} decoupled point(s)` +
      (hasActuator ? ' that the actuator can reach' : '') +
      ` (${decoupledCount} of ${n} points decoupled); it may sit on the edge of the decoupled region: refine the grid around it before relying on it`;
  if (others.length > 0) {
    reason += `; best over the other axes: ${others.map((a) => `${a.key} = ${values[a.key]}`).join(', ')}`;
  }
  return {
    recommended: {
      index: best,
      axes: values,
      amplitude_m: amplitude,
      frequency_Hz: frequency,
      voltage_V: bestCost.voltage,
      current_A: bestCost.current,
      utilisation: bestCost.utilisation,
      limiting_key: bestCost.limitingKey,
      stroke_m: stroke,
      reason,
      margin,
    },
    recommended_reason: reason,
  };
}
