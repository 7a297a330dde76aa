/**
 * Maps that refine where the answer changes (docs/model.md §9, maps that refine): a sweep
 * first computes a coarse grid, then subdivides a cell of it only where its corner points
 * differ in class, or by more than a set margin in the compared metrics, down to the grid's
 * own resolution. Grid points inside a cell whose corners all agree are not run: they are
 * inferred, their class the corners' class and their metrics interpolated multilinearly
 * over the corners (in index space, so in log space on a log axis), and marked as inferred
 * in map.json (`point_source`). A cell whose corners share a class but differ in a metric
 * is first probed at its centre (the point it would split at): where the corners'
 * interpolation holds there within the same margin, it is inferred too (centreAgrees).
 *
 * The plan is a pure function of the axes, the settings and the points computed so far.
 * Every cell is decided from its own corners only, so:
 * - `--resume` replays the plan over the points already in points.ndjson and runs only what
 *   is still missing (a point is never run twice);
 * - `--shard I/N` owns the coarse cells whose row-major ordinal is I - 1 modulo N and
 *   refines inside them alone; corner points shared with a neighbour cell of another shard
 *   are run in both (the results are identical, `merge` keeps one), and the merged map is
 *   the map an unsharded refined sweep gives, except that each shard also computes the
 *   margin neighbours of the operating point its own cells recommend (it cannot see the
 *   others' points; run-sweep.ts), which the unsharded map may infer;
 * - the map (which points are inferred, from which corners) is rebuilt from points.ndjson
 *   by the same function at any time, also for an interrupted sweep.
 */
import type { MapAxis } from '../results/map';

/** What the plan knows of a computed point. */
export interface RefinePoint {
  /** the class (a failed point has class 'numerical-failure') */
  class: string;
  /** the compared metrics (null where the run gave none) */
  metrics: Record<string, number | null>;
  /**
   * relative standard error of the driven mean gap power (stderr / mean), when the run
   * states one; differences within the combined noise of two points do not split a cell
   */
  rel_stderr: number | null;
  /**
   * the standard errors the run states for the compared metrics that are not power-like
   * (ripple, hops), by metric name; absent or null where it states none
   */
  stderr?: Record<string, number | null>;
}

export type { RefineMetric, RefineSettings } from '../results/sweep-header';
import type { RefineMetric, RefineSettings } from '../results/sweep-header';

/** Default coarse step: 4 grid steps (a 32-point axis starts from 9 points, a 16-point one from 5). */
export const DEFAULT_COARSE_STEP = 4;
/**
 * Default margin: 10 % in the compared metrics. On a smooth synthetic 32 x 32 map (the
 * decoupling rule's gain curve over 3 decades of speed) margins of 5, 10 and 20 % inferred
 * 20, 31 and 45 % of the points with worst gain errors of 0.14, 0.73 and 2.5 %: the margin
 * bounds the error of a monotone metric, the error itself is far smaller.
 */
export const DEFAULT_REFINE_MARGIN = 0.1;

/**
 * The settings a sweep refines with: class, the gain over static (relative, power-like),
 * the in-band ripple (relative to at least the ripple limit) and the hops per period
 * (relative to at least the hop limit, or 1).
 */
export function defaultRefineSettings(
  thresholds: { ripple_limit: number; max_hops_per_period: number },
  margin = DEFAULT_REFINE_MARGIN,
  coarse_step = DEFAULT_COARSE_STEP,
): RefineSettings {
  return {
    coarse_step,
    margin,
    noise_factor: 2 * Math.SQRT2,
    centre_probe: true,
    metrics: [
      { name: 'gain_over_static', floor: 0, powerLike: true },
      { name: 'ripple_rel', floor: thresholds.ripple_limit, powerLike: false },
      { name: 'hops_per_period', floor: Math.max(1, thresholds.max_hops_per_period), powerLike: false },
    ],
  };
}

/** How one uncomputed point is inferred: the computed corners of its uniform cell and their weights. */
export interface Inference {
  corners: number[];
  weights: number[];
}

export interface RefinePlan {
  /** points whose results the plan needs next (not yet known), ascending */
  need: number[];
  /** uncomputed points inside a cell whose corners agree, and how each is inferred */
  inferred: Map<number, Inference>;
  /**
   * the most points this sweep (or shard) can still come to hold: known + needed + the
   * uncomputed points of cells still waiting for a corner or for a subdivision
   */
  upper_bound: number;
  /** true when nothing more is needed: every owned cell is uniform or resolved to single steps */
  complete: boolean;
}

/** Indices along one axis of the coarse grid: 0, step, 2 step, ..., and n - 1. */
export function coarseIndices(n: number, step: number): number[] {
  const s = Math.max(1, Math.floor(step));
  const out: number[] = [];
  for (let i = 0; i < n - 1; i += s) out.push(i);
  out.push(n - 1);
  return n === 1 ? [0] : out;
}

function stridesOf(dims: readonly number[]): number[] {
  const st = new Array<number>(dims.length);
  let acc = 1;
  for (let k = dims.length - 1; k >= 0; k--) {
    st[k] = acc;
    acc *= dims[k];
  }
  return st;
}

/** Every flat index of the box lo..hi (inclusive) per axis. */
function boxIndices(lo: readonly number[], hi: readonly number[], st: readonly number[]): number[] {
  const out: number[] = [];
  const rec = (k: number, base: number) => {
    if (k === lo.length) {
      out.push(base);
      return;
    }
    for (let i = lo[k]; i <= hi[k]; i++) rec(k + 1, base + i * st[k]);
  };
  rec(0, 0);
  return out;
}

/** The corners of a box (deduplicated along axes where lo == hi). */
function cornerIndices(lo: readonly number[], hi: readonly number[], st: readonly number[]): number[] {
  const out: number[] = [];
  const rec = (k: number, base: number) => {
    if (k === lo.length) {
      out.push(base);
      return;
    }
    rec(k + 1, base + lo[k] * st[k]);
    if (hi[k] > lo[k]) rec(k + 1, base + hi[k] * st[k]);
  };
  rec(0, 0);
  return out;
}

/**
 * True when the corner points of a cell agree: one class (not 'numerical-failure'), and for each compared metric
 * either all null or all finite with max - min at most margin x max(floor, max |v|) or
 * within noise_factor standard errors, where every corner states one (power-like metrics:
 * rel_stderr x value; the others: their own stated error, RefinePoint.stderr).
 */
export function cornersAgree(points: readonly RefinePoint[], settings: RefineSettings): boolean {
  if (points.length <= 1) return true;
  if (!oneClass(points)) return false;
  for (const m of settings.metrics) {
    const vals = points.map((p) => p.metrics[m.name] ?? null);
    const finite = vals.filter((v): v is number => v !== null && Number.isFinite(v));
    if (finite.length === 0) continue;
    if (finite.length !== vals.length) return false;
    const lo = Math.min(...finite);
    const hi = Math.max(...finite);
    const scale = Math.max(m.floor, ...finite.map(Math.abs));
    const noise = statedNoise(points, finite, m);
    const allowed = Math.max(settings.margin * scale, noise === null ? 0 : settings.noise_factor * noise);
    if (hi - lo > allowed) return false;
  }
  return true;
}

/**
 * The largest standard error the points state for metric `m` (their values `values`, in
 * order), or null when one of them states none: for a power-like metric rel_stderr x
 * |value|, for the others (ripple, hops) their own stated error, RefinePoint.stderr.
 */
function statedNoise(
  points: readonly RefinePoint[],
  values: readonly number[],
  m: RefineMetric,
): number | null {
  let noise = 0;
  for (let i = 0; i < points.length; i++) {
    const p = points[i];
    const e = m.powerLike
      ? p.rel_stderr === null
        ? null
        : p.rel_stderr * Math.abs(values[i])
      : (p.stderr?.[m.name] ?? null);
    if (e === null || !Number.isFinite(e)) return null;
    noise = Math.max(noise, e);
  }
  return noise;
}

/** True when the points share one class that is not 'numerical-failure' (a failure says nothing of its neighbours). */
function oneClass(points: readonly RefinePoint[]): boolean {
  const cls = points[0].class;
  return cls !== 'numerical-failure' && points.every((p) => p.class === cls);
}

/**
 * True when a cell's centre point agrees with its corners' interpolation there
 * (interpolateMetric with the weights the inference uses): the corners' class, and each
 * compared metric within margin x max(floor, |centre|, |interpolated|) of the interpolated
 * value, or within noise_factor standard errors (the centre's and the corners' largest,
 * by the rule of cornersAgree).
 */
export function centreAgrees(
  corners: readonly RefinePoint[],
  weights: readonly number[],
  centre: RefinePoint,
  settings: RefineSettings,
): boolean {
  if (!oneClass([...corners, centre])) return false;
  for (const m of settings.metrics) {
    const vals = corners.map((p) => p.metrics[m.name] ?? null);
    const c = centre.metrics[m.name] ?? null;
    const known = [...vals, c].filter((v): v is number => v !== null && Number.isFinite(v));
    if (known.length === 0) continue;
    if (known.length !== vals.length + 1) return false;
    const guess = interpolateMetric(vals, weights);
    if (guess === null) return false;
    const v = c as number;
    const noise = statedNoise([...corners, centre], known, m);
    const allowed = Math.max(
      settings.margin * Math.max(m.floor, Math.abs(v), Math.abs(guess)),
      noise === null ? 0 : settings.noise_factor * noise,
    );
    if (Math.abs(v - guess) > allowed) return false;
  }
  return true;
}

/** Multilinear weights of the corners of box lo..hi at point p (corners in cornerIndices order). */
function cornerWeights(lo: readonly number[], hi: readonly number[], p: readonly number[]): number[] {
  const out: number[] = [];
  const rec = (k: number, w: number) => {
    if (k === lo.length) {
      out.push(w);
      return;
    }
    if (hi[k] > lo[k]) {
      const t = (p[k] - lo[k]) / (hi[k] - lo[k]);
      rec(k + 1, w * (1 - t));
      rec(k + 1, w * t);
    } else rec(k + 1, w);
  };
  rec(0, 1);
  return out;
}

function unflatten(index: number, dims: readonly number[]): number[] {
  const out = new Array<number>(dims.length);
  let rest = index;
  for (let k = dims.length - 1; k >= 0; k--) {
    out[k] = rest % dims[k];
    rest = Math.floor(rest / dims[k]);
  }
  return out;
}

/** Which coarse cells a shard owns: ordinal % count == index - 1 (every cell without a shard). */
export function ownsCell(ordinal: number, shard: { index: number; count: number } | null): boolean {
  return shard === null || ordinal % shard.count === shard.index - 1;
}

/**
 * The refinement plan for a grid of `axes` given the points known so far (see the module
 * comment). `shard` restricts it to the coarse cells that shard owns.
 */
export function planRefinement(
  axes: readonly Pick<MapAxis, 'values'>[],
  known: ReadonlyMap<number, RefinePoint>,
  settings: RefineSettings,
  shard: { index: number; count: number } | null = null,
): RefinePlan {
  const dims = axes.map((a) => a.values.length);
  const st = stridesOf(dims);
  const coarse = dims.map((n) => coarseIndices(n, settings.coarse_step));
  const need = new Set<number>();
  const inferred = new Map<number, Inference>();
  const open = new Set<number>();

  const visit = (lo: number[], hi: number[]): void => {
    const corners = cornerIndices(lo, hi, st);
    const missing = corners.filter((c) => !known.has(c));
    if (missing.length > 0) {
      for (const c of missing) need.add(c);
      for (const i of boxIndices(lo, hi, st)) open.add(i);
      return;
    }
    const pts = corners.map((c) => known.get(c) as RefinePoint);
    const inferCell = () => {
      for (const i of boxIndices(lo, hi, st)) {
        if (known.has(i) || inferred.has(i)) continue;
        inferred.set(i, { corners, weights: cornerWeights(lo, hi, unflatten(i, dims)) });
      }
    };
    if (cornersAgree(pts, settings)) {
      inferCell();
      return;
    }
    if (lo.every((l, k) => hi[k] - l <= 1)) return;
    // corners of one class that differ in a metric: probe the centre (the split point, so
    // it is needed anyway if the cell splits); where the corners' interpolation holds
    // there, the metric is smooth across the cell and the rest is inferred
    if (settings.centre_probe && oneClass(pts)) {
      const centre = lo.map((l, k) => Math.floor((l + hi[k]) / 2));
      const ci = centre.reduce((a, x, k) => a + x * st[k], 0);
      const cp = known.get(ci);
      if (cp === undefined) {
        need.add(ci);
        for (const i of boxIndices(lo, hi, st)) open.add(i);
        return;
      }
      if (centreAgrees(pts, cornerWeights(lo, hi, centre), cp, settings)) {
        inferCell();
        return;
      }
    }
    // split every axis longer than one step at its middle, visit the 2^d children
    const parts = lo.map((l, k) => {
      const h = hi[k];
      if (h - l <= 1) return [[l, h]];
      const mid = Math.floor((l + h) / 2);
      return [
        [l, mid],
        [mid, h],
      ];
    });
    const rec = (k: number, clo: number[], chi: number[]) => {
      if (k === parts.length) {
        visit(clo, chi);
        return;
      }
      for (const [a, b] of parts[k]) rec(k + 1, [...clo, a], [...chi, b]);
    };
    rec(0, [], []);
  };

  // coarse cells, row-major over the coarse intervals (one "interval" [0,0] on a one-value axis)
  const intervals = coarse.map((c) =>
    c.length === 1 ? [[c[0], c[0]]] : c.slice(1).map((b, j) => [c[j], b]),
  );
  let ordinal = 0;
  const owned: number[][][] = [];
  const rec = (k: number, cell: number[][]) => {
    if (k === intervals.length) {
      if (ownsCell(ordinal, shard)) owned.push(cell);
      ordinal++;
      return;
    }
    for (const iv of intervals[k]) rec(k + 1, [...cell, iv]);
  };
  rec(0, []);
  for (const cell of owned)
    visit(
      cell.map((iv) => iv[0]),
      cell.map((iv) => iv[1]),
    );

  // a point needed by one cell or still open in another is not (finally) inferred
  for (const i of need) inferred.delete(i);
  for (const i of open) inferred.delete(i);
  const ownedKnown = new Set<number>();
  for (const cell of owned)
    for (const i of boxIndices(
      cell.map((iv) => iv[0]),
      cell.map((iv) => iv[1]),
      st,
    ))
      if (known.has(i)) ownedKnown.add(i);
  // open cells of a non-uniform parent may still be subdivided: every uncomputed point of them may run
  let upper = ownedKnown.size + need.size;
  for (const i of open) if (!known.has(i) && !need.has(i)) upper++;
  // cells that split but are resolved hold no open points; non-uniform cells waiting on children were visited
  return {
    need: [...need].sort((a, b) => a - b),
    inferred,
    upper_bound: upper,
    complete: need.size === 0,
  };
}

/** Every grid index of the cells a shard owns (all indices without a shard). */
export function ownedIndices(
  axes: readonly Pick<MapAxis, 'values'>[],
  settings: Pick<RefineSettings, 'coarse_step'>,
  shard: { index: number; count: number } | null,
): number[] {
  const dims = axes.map((a) => a.values.length);
  const st = stridesOf(dims);
  const coarse = dims.map((n) => coarseIndices(n, settings.coarse_step));
  const intervals = coarse.map((c) =>
    c.length === 1 ? [[c[0], c[0]]] : c.slice(1).map((b, j) => [c[j], b]),
  );
  const out = new Set<number>();
  let ordinal = 0;
  const rec = (k: number, lo: number[], hi: number[]) => {
    if (k === intervals.length) {
      if (ownsCell(ordinal, shard)) for (const i of boxIndices(lo, hi, st)) out.add(i);
      ordinal++;
      return;
    }
    for (const [a, b] of intervals[k]) rec(k + 1, [...lo, a], [...hi, b]);
  };
  rec(0, [], []);
  return [...out].sort((a, b) => a - b);
}

/**
 * A metric at an inferred point: the weighted corners' values, interpolated in log (a
 * geometric mean, exact for power laws such as the peak speed 2 pi f A on log axes) when
 * all are positive, else linearly; null when a corner with weight has none.
 */
export function interpolateMetric(
  values: readonly (number | null)[],
  weights: readonly number[],
): number | null {
  let lin = 0;
  let lg = 0;
  let positive = true;
  for (let k = 0; k < values.length; k++) {
    if (weights[k] === 0) continue;
    const v = values[k];
    if (v === null || !Number.isFinite(v)) return null;
    lin += weights[k] * v;
    if (v > 0) lg += weights[k] * Math.log(v);
    else positive = false;
  }
  return positive ? Math.exp(lg) : lin;
}
