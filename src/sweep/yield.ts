/**
 * Tolerance yield (docs/model.md §7): the `tolerances` section of a scenario draws N
 * scenarios (seeded), each the base with every varied key moved by a random amount; the
 * draws run through the sweep machinery (runSweep with a PointSet), and their results give
 * the yield, percentiles and a sensitivity ranking.
 *
 * Draw i uses the generator createRng(seed).fork(i), keys in the order written, one
 * deviate each, so a draw does not depend on N, on the shard or on the order points finish.
 * A draw the scenario rules refuse (a reflectivity above 1, a negative length) is drawn
 * again from the same stream: the distributions are truncated to the valid range.
 */
import type { Scenario } from '../scenario/schema';
import { InputError, InputProblem } from '../scenario/errors';
import { formatKeyPath, parseKeyPath } from '../scenario/keypath';
import { nearestKey, numericKeyPaths, quantityKindAt } from '../scenario/shape';
import { parseQuantity, QuantityKind } from '../scenario/units';
import { withOverrides } from '../scenario/validate';
import { createRng } from '../numerics/rng';
import type { PointRecord } from './persist';
import type { PointSet } from './run-sweep';
import type { YieldSummary } from '../results/yield';
import { valueAtPath, withoutSweep } from './grid';

/** The axis key that numbers the draws in sweep.json and map.json. */
export const DRAW_KEY = 'draw';

/** Redraws allowed for one key before a draw is refused as impossible. */
const MAX_REDRAWS = 1000;

export interface ToleranceKey {
  key: string;
  distribution: 'normal' | 'uniform';
  /** standard deviation (normal) or half width (uniform), SI */
  spread: number;
  /** the base scenario's value, SI */
  nominal: number;
}

export interface DrawPlan extends PointSet {
  base: Scenario;
  keys: ToleranceKey[];
  seed: number;
  draws: number;
  floor_W: number | null;
}

/** The base of the draws: the scenario without its sweep and tolerances sections. */
function baseOf(s: Scenario): Scenario {
  const b = withoutSweep(s);
  delete (b as { tolerances?: unknown }).tolerances;
  return b;
}

/**
 * Check the tolerances section and plan `draws` draws. Throws InputError (exit 2) with the
 * key path for: no tolerances section, N < 1, a key that is not a numeric scenario value
 * (or whose value is 'auto' or absent in the scenario), a spread that is negative, not a
 * number or in the wrong units.
 */
export function planDraws(s: Scenario, draws: number, file: string | null = null): DrawPlan {
  if (!Number.isInteger(draws) || draws < 1) {
    throw new InputError(null, [
      { path: '--draws', message: `expected a whole number >= 1, found ${draws}` },
    ]);
  }
  const tol = s.tolerances;
  if (!tol) {
    throw new InputError(file, [
      {
        path: 'tolerances',
        message: 'expected a tolerances section ({ vary: { <key>: { normal: <sd> } } }), found none',
      },
    ]);
  }
  const base = baseOf(s);
  const known = numericKeyPaths();
  const problems: InputProblem[] = [];
  const keys: ToleranceKey[] = [];
  for (const [rawKey, spec] of Object.entries(tol.vary)) {
    const key = rawKey.trim();
    const distribution = 'normal' in spec ? 'normal' : 'uniform';
    const where = formatKeyPath(['tolerances', 'vary', key, distribution]);
    const path = parseKeyPath(key);
    if (path === null || !known.includes(key)) {
      const near = nearestKey(key, known);
      problems.push({
        path: formatKeyPath(['tolerances', 'vary', key]),
        message: `expected the key path of a numeric scenario value${near ? ` (did you mean '${near}'?)` : ''}, found '${rawKey}'`,
      });
      continue;
    }
    const nominal = valueAtPath(base, key);
    if (typeof nominal !== 'number' || !Number.isFinite(nominal)) {
      problems.push({
        path: formatKeyPath(['tolerances', 'vary', key]),
        message: `expected ${key} to hold a finite number in the scenario to vary around, found ${JSON.stringify(nominal ?? null)}`,
      });
      continue;
    }
    const kind = (quantityKindAt(path) ?? 'dimensionless') as QuantityKind;
    const raw = 'normal' in spec ? spec.normal : spec.uniform;
    const parsed = parseQuantity(raw, kind);
    if (!parsed.ok) {
      problems.push({ path: where, message: parsed.message });
      continue;
    }
    if (!(parsed.value >= 0)) {
      problems.push({
        path: where,
        message: `expected a spread >= 0 (${distribution === 'normal' ? 'standard deviation' : 'half width'}), found ${JSON.stringify(raw)}`,
      });
      continue;
    }
    keys.push({ key, distribution, spread: parsed.value, nominal });
  }
  if (problems.length > 0) throw new InputError(file, problems);
  const seed = tol.seed ?? s.simulation.seed;
  const root = createRng(seed);
  const cache = new Map<number, { axes: Record<string, number>; scenario: Scenario }>();
  const pointAt = (index: number) => {
    const hit = cache.get(index);
    if (hit) return hit;
    const rng = root.fork(index);
    const axes: Record<string, number> = { [DRAW_KEY]: index };
    const values: Record<string, number> = {};
    for (const k of keys) {
      let ok = false;
      for (let attempt = 0; attempt < MAX_REDRAWS && !ok; attempt++) {
        const u = k.distribution === 'normal' ? rng.normal() : 2 * rng.uniform() - 1;
        const v = k.nominal + k.spread * u;
        try {
          withOverrides(base, { ...values, [k.key]: v });
          values[k.key] = v;
          ok = true;
        } catch (err) {
          if (!(err instanceof InputError)) throw err;
        }
      }
      if (!ok) {
        throw new InputError(file, [
          {
            path: formatKeyPath(['tolerances', 'vary', k.key]),
            message: `draw ${index}: no valid value in ${MAX_REDRAWS} tries around ${k.nominal} (the spread reaches far outside what the key accepts)`,
          },
        ]);
      }
    }
    const point = { axes: { ...axes, ...values }, scenario: withOverrides(base, values) };
    cache.set(index, point);
    return point;
  };
  return {
    base,
    keys,
    seed,
    draws,
    floor_W: tol.gap_power_floor ?? null,
    axes: [{ key: DRAW_KEY, values: Array.from({ length: draws }, (_, i) => i), scale: 'linear' }],
    total: draws,
    pointAt,
  };
}

/** Ranks 1..n with ties given their mean rank. */
function ranks(v: readonly number[]): number[] {
  const order = v.map((x, i) => [x, i] as const).sort((a, b) => a[0] - b[0]);
  const r = new Array<number>(v.length);
  let i = 0;
  while (i < order.length) {
    let j = i;
    while (j + 1 < order.length && order[j + 1][0] === order[i][0]) j++;
    const mean = (i + j) / 2 + 1;
    for (let k = i; k <= j; k++) r[order[k][1]] = mean;
    i = j + 1;
  }
  return r;
}

/**
 * Spearman's rank correlation coefficient: the Pearson correlation of the ranks (ties at
 * their mean rank). Null when either variable is constant or n < 3.
 * Reference: Spearman, Am. J. Psychol. 15, 72 (1904); e.g. NIST/SEMATECH e-Handbook of
 * Statistical Methods, 1.3.5.x (rank correlation).
 */
export function spearman(x: readonly number[], y: readonly number[]): number | null {
  const n = x.length;
  if (n < 3 || y.length !== n) return null;
  const rx = ranks(x);
  const ry = ranks(y);
  const mx = rx.reduce((a, b) => a + b, 0) / n;
  const my = ry.reduce((a, b) => a + b, 0) / n;
  let sxy = 0;
  let sxx = 0;
  let syy = 0;
  for (let i = 0; i < n; i++) {
    sxy += (rx[i] - mx) * (ry[i] - my);
    sxx += (rx[i] - mx) ** 2;
    syy += (ry[i] - my) ** 2;
  }
  if (sxx === 0 || syy === 0) return null;
  return sxy / Math.sqrt(sxx * syy);
}

/** Percentile p (0..100) by linear interpolation between order statistics (NIST method, type 7). */
export function percentile(sorted: readonly number[], p: number): number | null {
  if (sorted.length === 0) return null;
  const h = ((sorted.length - 1) * p) / 100;
  const lo = Math.floor(h);
  const hi = Math.min(sorted.length - 1, lo + 1);
  return sorted[lo] + (sorted[hi] - sorted[lo]) * (h - lo);
}

export const YIELD_PERCENTILES = [5, 25, 50, 75, 95] as const;

export type { YieldSummary } from '../results/yield';

/** The yield of finished draws (docs/model.md §7). */
export function summariseYield(plan: DrawPlan, name: string, records: readonly PointRecord[]): YieldSummary {
  const ok = records.filter((r) => r.summary.status === 'ok' && r.summary.driven);
  const gap = ok.map((r) => r.summary.driven!.external_mean_W);
  const ripple = ok.map((r) => r.summary.driven!.ripple_rel);
  const n = ok.length;
  const frac = (k: number) => (n > 0 ? k / n : null);
  const dec = ok.map((r) => r.summary.class === 'decoupled');
  const floor = plan.floor_W;
  const above = floor === null ? null : gap.map((g) => g >= floor);
  const pct = (v: number[]) => {
    const sorted = v.filter((x) => Number.isFinite(x)).sort((a, b) => a - b);
    const out: Record<string, number | null> = {};
    for (const p of YIELD_PERCENTILES) out[`p${p}`] = percentile(sorted, p);
    return out;
  };
  const classCounts: Record<string, number> = {};
  for (const r of records) classCounts[r.summary.class] = (classCounts[r.summary.class] ?? 0) + 1;
  const ranking = plan.keys.map((k) => {
    const x = ok.map((r) => r.axes[k.key]);
    return { key: k.key, rho_gap_power: spearman(x, gap), rho_ripple: spearman(x, ripple) };
  });
  const strength = (r: { rho_gap_power: number | null }) =>
    r.rho_gap_power === null ? -1 : Math.abs(r.rho_gap_power);
  ranking.sort((a, b) => strength(b) - strength(a));
  return {
    name,
    draws_planned: plan.draws,
    draws_finished: records.length,
    draws_failed: records.length - n,
    seed: plan.seed,
    tolerances: plan.keys.map((k) => ({ ...k })),
    yield_decoupled: frac(dec.filter(Boolean).length),
    gap_power_floor_W: floor,
    yield_above_floor: above ? frac(above.filter(Boolean).length) : null,
    yield_both: above ? frac(dec.filter((d, i) => d && above[i]).length) : null,
    gap_power_percentiles_W: pct(gap),
    ripple_percentiles: pct(ripple),
    histogram: histogram(gap, 12),
    ranking_method:
      "Spearman rank correlation of each key's drawn value with the draw's mean gap power (and ripple), over the finished draws; ranked by its magnitude",
    ranking,
    class_counts: classCounts,
  };
}

function histogram(v: number[], bins: number): { edges_W: number[]; counts: number[] } {
  const f = v.filter((x) => Number.isFinite(x));
  if (f.length === 0) return { edges_W: [], counts: [] };
  let lo = Math.min(...f);
  let hi = Math.max(...f);
  if (hi === lo) {
    const pad = Math.abs(lo) * 1e-3 || 1e-12;
    lo -= pad;
    hi += pad;
  }
  const edges = Array.from({ length: bins + 1 }, (_, i) => lo + ((hi - lo) * i) / bins);
  const counts = new Array<number>(bins).fill(0);
  for (const x of f) counts[Math.min(bins - 1, Math.floor(((x - lo) / (hi - lo)) * bins))]++;
  return { edges_W: edges, counts };
}

/** draws.csv: one row per draw: index, each varied key (SI), class, gap power, ripple, laser output. */
export function drawsCsv(plan: DrawPlan, records: readonly PointRecord[]): string {
  const head = [
    'draw',
    ...plan.keys.map((k) => k.key),
    'class',
    'external_mean_W',
    'ripple_rel',
    'laser_output_mean_W',
    'hops_per_period',
  ];
  const rows = [...records]
    .sort((a, b) => a.index - b.index)
    .map((r) => {
      const d = r.summary.driven;
      return [
        String(r.index),
        ...plan.keys.map((k) => num(r.axes[k.key])),
        r.summary.class,
        num(d?.external_mean_W),
        num(d?.ripple_rel),
        num(d?.laser_output_mean_W),
        num(d?.hops_per_period),
      ].join(',');
    });
  return `${head.join(',')}\n${rows.map((r) => `${r}\n`).join('')}`;
}

function num(v: unknown): string {
  return typeof v === 'number' && Number.isFinite(v) ? String(v) : '';
}
