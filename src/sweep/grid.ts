/**
 * The grid of a sweep: the `sweep.axes` of a scenario expanded into points, each a copy of
 * the base scenario with overrides (`withOverrides`), never a mutation of a shared object.
 *
 * Points are numbered row-major over the axes, the last axis varying fastest, so the
 * index of a point depends only on the axes, never on the order in which points finish
 * (src/results/grid-index.ts).
 */
import type { Scenario, SweepAxisSpec } from '../scenario/schema';
import { InputError } from '../scenario/errors';
import { formatKeyPath, parseKeyPath } from '../scenario/keypath';
import { nearestKey, numericKeyPaths } from '../scenario/shape';
import { withOverrides } from '../scenario/validate';
import type { MapAxis } from '../results/map';
import { axisValuesAt, pointCount } from '../results/grid-index';

/** Refuse grids beyond this many points: a typo in `points` should not start a month-long job. */
export const MAX_GRID_POINTS = 10_000_000;

/** One expanded axis: its key path, SI values in grid order, and how it is best drawn. */
export type GridAxis = MapAxis;

/** An expanded sweep: the base scenario (without `sweep`) and its axes. */
export interface SweepGrid {
  /** the scenario every point copies, its `sweep` section removed */
  base: Scenario;
  axes: GridAxis[];
  /** product of the axis lengths */
  total: number;
}

/** One point of the grid: its row-major index and the SI value of each axis key. */
export interface GridPoint {
  index: number;
  axes: Record<string, number>;
}

/**
 * The SI value at a key path of a validated scenario, or undefined if the path holds
 * no number there (an absent optional section, text).
 */
export function valueAtPath(s: Scenario, key: string): unknown {
  const path = parseKeyPath(key);
  if (path === null) return undefined;
  let cur: unknown = s;
  for (const seg of path) {
    if (cur === null || typeof cur !== 'object') return undefined;
    cur = (cur as Record<string | number, unknown>)[seg];
  }
  return cur;
}

/** The scenario without its sweep section (a point is one run, not a sweep). */
export function withoutSweep(s: Scenario): Scenario {
  const copy = { ...s };
  delete copy.sweep;
  return copy;
}

/**
 * Convert one axis value (a number taken as SI, or a quantity string such as "80 nm") to
 * SI by applying it to the base scenario with `withOverrides`, which knows the kind of
 * every key from the schema and validates the result. Errors name `where` (the key path
 * of the value in the sweep section) and the file.
 */
function siValue(
  base: Scenario,
  key: string,
  value: number | string,
  where: string,
  file: string | null,
): number {
  let s: Scenario;
  try {
    s = withOverrides(base, { [key]: value });
  } catch (err) {
    if (err instanceof InputError) {
      const detail = err.problems
        .map((p) => (p.path !== '' && p.path !== key ? `${p.path}: ${p.message}` : p.message))
        .join('; ');
      throw new InputError(file, [
        { path: where, message: `${key} = ${JSON.stringify(value)} is not valid: ${detail}` },
      ]);
    }
    throw err;
  }
  const v = valueAtPath(s, key);
  if (typeof v !== 'number') {
    throw new InputError(file, [
      { path: where, message: `expected a numeric value for ${key}, found ${JSON.stringify(v)}` },
    ]);
  }
  return v;
}

/**
 * Values of a range axis: `points` values from `from` to `to` inclusive, evenly spaced
 * (linear: x_i = a + (b - a) i / (n - 1)) or evenly spaced in log (x_i = a (b/a)^(i/(n-1))).
 * The end points are exact; a single point is `from`. Log needs a, b > 0.
 */
export function rangeValues(from: number, to: number, points: number, scale: 'linear' | 'log'): number[] {
  if (points === 1) return [from];
  const out = new Array<number>(points);
  if (scale === 'log') {
    const la = Math.log(from);
    const lb = Math.log(to);
    for (let i = 0; i < points; i++) out[i] = Math.exp(la + ((lb - la) * i) / (points - 1));
  } else {
    for (let i = 0; i < points; i++) out[i] = from + ((to - from) * i) / (points - 1);
  }
  out[0] = from;
  out[points - 1] = to;
  return out;
}

/** Explicit values are drawn on a log axis when all are positive and span at least two decades. */
function explicitScale(values: number[]): 'linear' | 'log' {
  if (values.length < 2 || values.some((v) => !(v > 0))) return 'linear';
  const lo = Math.min(...values);
  const hi = Math.max(...values);
  return hi / lo >= 100 ? 'log' : 'linear';
}

function expandAxis(base: Scenario, spec: SweepAxisSpec, i: number, file: string | null): GridAxis {
  const where = (k: string) => formatKeyPath(['sweep', 'axes', i, k]);
  const key = spec.key.trim();
  const known = numericKeyPaths();
  if (!known.includes(key)) {
    const near = nearestKey(key, known);
    throw new InputError(file, [
      {
        path: where('key'),
        message: `expected the key path of a numeric scenario value${near ? ` (did you mean '${near}'?)` : ''}, found '${spec.key}'`,
      },
    ]);
  }
  if ('values' in spec) {
    const values = spec.values.map((v, j) =>
      siValue(base, key, v, formatKeyPath(['sweep', 'axes', i, 'values', j]), file),
    );
    return { key, values, scale: explicitScale(values) };
  }
  const from = siValue(base, key, spec.from, where('from'), file);
  const to = siValue(base, key, spec.to, where('to'), file);
  if (spec.scale === 'log' && !(from > 0 && to > 0)) {
    throw new InputError(file, [
      { path: where('scale'), message: `expected from and to > 0 for a log axis, found ${from} and ${to}` },
    ]);
  }
  // The schema's bounds are intervals, so valid end points make every value between valid;
  // combinations of axes are checked when each point's scenario is built.
  return { key, values: rangeValues(from, to, spec.points, spec.scale), scale: spec.scale };
}

/**
 * Expand the `sweep` section of a validated scenario into its grid. Throws InputError
 * (naming `file` and the key path inside `sweep`) for an unknown or non-numeric key, a
 * value the key does not accept, a repeated key, a log axis through zero, or a grid
 * larger than MAX_GRID_POINTS. A scenario without `sweep` is refused too.
 */
export function expandGrid(scenario: Scenario, file: string | null = null): SweepGrid {
  if (!scenario.sweep)
    throw new InputError(file, [
      { path: 'sweep', message: 'expected a sweep section with axes, found none' },
    ]);
  const base = withoutSweep(scenario);
  const axes: GridAxis[] = [];
  const seen = new Set<string>();
  scenario.sweep.axes.forEach((spec, i) => {
    const axis = expandAxis(base, spec, i, file);
    if (seen.has(axis.key)) {
      throw new InputError(file, [
        {
          path: formatKeyPath(['sweep', 'axes', i, 'key']),
          message: `expected each key once, found '${axis.key}' again`,
        },
      ]);
    }
    seen.add(axis.key);
    axes.push(axis);
  });
  const total = pointCount(axes);
  if (total > MAX_GRID_POINTS) {
    throw new InputError(file, [
      { path: 'sweep.axes', message: `expected at most ${MAX_GRID_POINTS} points in all, found ${total}` },
    ]);
  }
  return { base, axes, total };
}

/** The point at `index`: its axis values (SI) by key. */
export function gridPoint(grid: Pick<SweepGrid, 'axes'>, index: number): GridPoint {
  return { index, axes: axisValuesAt(grid.axes, index) };
}

/** The scenario of one point: the base with every axis key set to the point's value (validated). */
export function pointScenario(grid: SweepGrid, index: number): Scenario {
  return withOverrides(grid.base, gridPoint(grid, index).axes);
}
