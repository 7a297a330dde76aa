/**
 * Maps that refine (src/sweep/refine.ts) on a synthetic map whose every boundary is known
 * in closed form: the real sweep machinery (runSweep, points.ndjson, resume, shards, merge)
 * with an injected point evaluator in place of the simulator. The independent expectation
 * is always the same map computed at every grid point (--full) by the same evaluator.
 *
 * The synthetic map over amplitude A and frequency f (both log axes): peak speed
 * v = 2 pi f A (docs/model.md §5); class 'hopping' inside a disc in (log A, log f),
 * else 'decoupled' where v > v_c, else 'modulated' (the decoupling rule of docs/model.md §4,
 * a straight line in log-log); the gain over static a smooth monotone function of v.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadScenarioFile } from '../src/scenario/load';
import type { Scenario } from '../src/scenario/schema';
import type { Executor } from '../src/sweep/pool';
import { ExecutorStopped } from '../src/sweep/pool';
import type { SweepTask, TaskResult } from '../src/sweep/worker';
import { failedPointSummary, readPoints } from '../src/sweep/persist';
import type { PointRecord, PointSummary } from '../src/sweep/persist';
import { runSweep } from '../src/sweep/run-sweep';
import { mergeShards } from '../src/sweep/merge';
import { computedOnly } from '../src/sweep/map';
import {
  coarseIndices,
  cornersAgree,
  defaultRefineSettings,
  interpolateMetric,
  planRefinement,
} from '../src/sweep/refine';
import type { RefinePoint } from '../src/sweep/refine';
import { axisIndices as gridIndices } from '../src/results/grid-index';
import type { SweepMap } from '../src/results/map';
import { isComputedPoint } from '../src/results/map';
import { bestPoints, buildSweepReportHtml } from '../src/report/sweep-report';
import { etaText, formatProgressLine } from '../src/cli/progress';
import { combinedZ, directScenario, spreadIndices } from '../src/bench/map-refined';
import { drivenStderr } from '../src/sweep/map';
import { sineDriveKinematics } from './fixtures/report/make-fixtures';

const ROOT = path.resolve(__dirname, '..');
const N = 24;
const VC = 0.05; // m/s, the synthetic critical speed
const DISC = { logA: -6.8, logF: 4.0, r: 0.45 }; // hopping disc in decades

/** With `flat`, every compared metric is the same everywhere: only the class tells regions apart. */
let flat = false;

function truth(A: number, f: number): { cls: string; gain: number; ripple: number; hops: number } {
  if (flat) {
    const t = truthOf(A, f);
    return { ...t, gain: 2, ripple: 0.05, hops: 0 };
  }
  return truthOf(A, f);
}

function truthOf(A: number, f: number): { cls: string; gain: number; ripple: number; hops: number } {
  const v = 2 * Math.PI * f * A;
  const dA = Math.log10(A) - DISC.logA;
  const dF = Math.log10(f) - DISC.logF;
  const inDisc = dA * dA + dF * dF < DISC.r * DISC.r;
  const x = v / VC;
  const gain = 1 + (2 * x * x) / (1 + x * x);
  const ripple = 0.3 / (1 + x);
  if (inDisc) return { cls: 'hopping', gain, ripple, hops: 3 };
  return { cls: v > VC ? 'decoupled' : 'modulated', gain, ripple, hops: 0 };
}

function syntheticRecord(index: number, axes: Record<string, number>): PointRecord {
  const A = axes['drive.amplitude'];
  const f = axes['drive.frequency'];
  const t = truth(A, f);
  const summary = {
    ...failedPointSummary(''),
    status: 'ok',
    message: null,
    class: t.cls,
    class_reason: `synthetic ${t.cls}`,
    // a complete driven and drive section, as points.ndjson's contract requires (results/schemas.ts)
    driven: {
      external_mean_W: 0.1 * t.gain,
      external_std_W: 0,
      external_min_W: 0.1 * t.gain,
      external_max_W: 0.1 * t.gain,
      ripple_rel: t.ripple,
      ripple_full_band_rel: 2 * t.ripple,
      laser_output_mean_W: 0.01,
      laser_output_std_W: 0,
      laser_intracavity_mean_W: 1,
      enhancement: 10 * t.gain,
      gain_over_static: t.gain,
      gain_over_worst_static: t.gain,
      hops_per_s: t.hops * f,
      hops_per_period: t.hops,
      class: t.cls,
      class_reason: '',
      offsets: 1,
      offset_positions_m: [0],
      external_mean_by_offset_W: { min: 0.1 * t.gain, max: 0.1 * t.gain, values: [0.1 * t.gain] },
      mode_occupation: [],
      hop_phase_histogram: [],
      analysed_time_s: 1 / f,
      settle_time_s: 1 / f,
    },
    drive: {
      ...sineDriveKinematics(A, f, 0),
      critical_speed_m_s: VC,
      critical_speed_landau_zener_m_s: VC,
      fraction_below_critical: null,
      locking_half_width_Hz: 0,
    },
  } as unknown as PointSummary;
  return { index, axes, summary, wall_s: 0 };
}

/** An executor running the synthetic evaluator; `runs` lists every index it was asked for. */
function fakeExecutor(stopAfter?: { n: number; abort: () => void }): Executor & { runs: number[] } {
  const runs: number[] = [];
  let stopped = false;
  return {
    threads: 2,
    runs,
    run<T extends SweepTask>(task: T): Promise<TaskResult<T>> {
      if (stopped || task.type !== 'point') return Promise.reject(new ExecutorStopped());
      runs.push(task.index);
      if (stopAfter && runs.length === stopAfter.n) stopAfter.abort();
      return new Promise((res) =>
        setImmediate(() => res(syntheticRecord(task.index, task.axes) as TaskResult<T>)),
      );
    },
    async destroy() {
      stopped = true;
    },
  };
}

let tmp = '';
let scenario: Scenario;
let full: SweepMap;
let refined: SweepMap;
let refinedRuns: number[];
let fullRuns: number[];

function mapScenario(): Scenario {
  const base = loadScenarioFile(path.join(ROOT, 'scenarios', 'demo-sweep.yaml')).scenario;
  return {
    ...base,
    sweep: {
      axes: [
        { key: 'drive.amplitude', from: 1e-8, to: 3e-6, points: N, scale: 'log' },
        { key: 'drive.frequency', from: 1e3, to: 1e6, points: N, scale: 'log' },
      ],
    },
  } as Scenario;
}

const neighbourPairs = (): [number, number][] => {
  const out: [number, number][] = [];
  for (let i = 0; i < N; i++)
    for (let j = 0; j < N; j++) {
      if (i + 1 < N) out.push([i * N + j, (i + 1) * N + j]);
      if (j + 1 < N) out.push([i * N + j, i * N + j + 1]);
    }
  return out;
};

beforeAll(async () => {
  tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'dithercav-refine-'));
  scenario = mapScenario();
  const fx = fakeExecutor();
  full = (await runSweep(scenario, { outDir: path.join(tmp, 'full'), executor: fx, full: true })).map;
  fullRuns = fx.runs;
  const ex = fakeExecutor();
  refined = (await runSweep(scenario, { outDir: path.join(tmp, 'refined'), executor: ex })).map;
  refinedRuns = ex.runs;
}, 60_000);

afterAll(() => {
  if (tmp) fs.rmSync(tmp, { recursive: true, force: true });
});

describe('refinement planning', () => {
  it('coarse indices: every step-th index and always the last one', () => {
    expect(coarseIndices(32, 4)).toEqual([0, 4, 8, 12, 16, 20, 24, 28, 31]);
    expect(coarseIndices(16, 4)).toEqual([0, 4, 8, 12, 15]);
    expect(coarseIndices(1, 4)).toEqual([0]);
    expect(coarseIndices(3, 4)).toEqual([0, 2]);
  });

  it('corners agree within the margin, or within 2 sqrt 2 standard errors of the difference, and not across classes', () => {
    const s = defaultRefineSettings({ ripple_limit: 0.1, max_hops_per_period: 0 }, 0.05);
    const p = (cls: string, g: number, se: number | null): RefinePoint => ({
      class: cls,
      metrics: { gain_over_static: g, ripple_rel: 0.01, hops_per_period: 0 },
      rel_stderr: se,
    });
    // 4 % apart, margin 5 %: agree
    expect(cornersAgree([p('decoupled', 2.0, null), p('decoupled', 2.08, null)], s)).toBe(true);
    // 10 % apart: split
    expect(cornersAgree([p('decoupled', 2.0, null), p('decoupled', 2.2, null)], s)).toBe(false);
    // 10 % apart but each point's error is 5 %: 0.2 < 2 sqrt 2 x 0.055 x 2.2, within the noise
    expect(cornersAgree([p('decoupled', 2.0, 0.05), p('decoupled', 2.2, 0.05)], s)).toBe(true);
    expect(cornersAgree([p('decoupled', 2.0, null), p('modulated', 2.0, null)], s)).toBe(false);
    // failed corners never agree: a failure says nothing of its neighbours
    expect(cornersAgree([p('numerical-failure', 2.0, null), p('numerical-failure', 2.0, null)], s)).toBe(
      false,
    );
  });

  it('a ripple or hop count apart by less than 2 sqrt 2 of its own stated errors does not split a cell', () => {
    // the rule for a difference of two independent estimates: 2 standard errors of the
    // difference, sqrt 2 x the larger error (common practice, no source)
    const s = defaultRefineSettings({ ripple_limit: 0.1, max_hops_per_period: 0 }, 0.1);
    const p = (ripple: number, hops: number, se: { ripple: number | null; hops: number | null } | null) => ({
      class: 'hopping',
      metrics: { gain_over_static: 3, ripple_rel: ripple, hops_per_period: hops },
      rel_stderr: 0.01,
      ...(se ? { stderr: { ripple_rel: se.ripple, hops_per_period: se.hops } } : {}),
    });
    // ripple 2.0 against 2.5: 20 % apart, above the 10 % margin
    expect(cornersAgree([p(2.0, 10, null), p(2.5, 10, null)], s)).toBe(false);
    // each stated to 0.2: 0.5 < 2 sqrt 2 x 0.2 = 0.57, within the noise
    const e = { ripple: 0.2, hops: null };
    expect(cornersAgree([p(2.0, 10, e), p(2.5, 10, e)], s)).toBe(true);
    // stated to 0.15: 0.5 > 0.42, apart
    const f = { ripple: 0.15, hops: null };
    expect(cornersAgree([p(2.0, 10, f), p(2.5, 10, f)], s)).toBe(false);
    // one corner without a stated error: the margin alone decides
    expect(cornersAgree([p(2.0, 10, e), p(2.5, 10, null)], s)).toBe(false);
    // hops per period 10 against 14 (29 % apart), each to 1.5: 4 < 4.24, within the noise
    const h = { ripple: null, hops: 1.5 };
    expect(cornersAgree([p(2.0, 10, h), p(2.0, 14, h)], s)).toBe(true);
    expect(cornersAgree([p(2.0, 10, h), p(2.0, 15, h)], s)).toBe(false);
  });

  it('probes the centre of a cell before splitting it: a power law is inferred exactly, a bump is split', () => {
    // Multilinear interpolation of the logs in index space on log axes is exact for a power
    // law (log g linear in log A and log f), so a cell whose corners differ by far more than
    // the margin still agrees with them at its centre; a Gaussian bump in log space does not.
    const n = 17;
    const axes = [
      { values: Array.from({ length: n }, (_, i) => 1e-8 * 10 ** (i / 8)) },
      { values: Array.from({ length: n }, (_, i) => 1e3 * 10 ** (i / 8)) },
    ];
    const settings = defaultRefineSettings({ ripple_limit: 0.1, max_hops_per_period: 0 }, 0.1);
    const runPlan = (gain: (i: number, j: number) => number) => {
      const known = new Map<number, RefinePoint>();
      for (let round = 0; round < 50; round++) {
        const plan = planRefinement(axes, known, settings);
        if (plan.complete) return { known, plan };
        for (const k of plan.need)
          known.set(k, {
            class: 'decoupled',
            metrics: {
              gain_over_static: gain(Math.floor(k / n), k % n),
              ripple_rel: 0.01,
              hops_per_period: 0,
            },
            rel_stderr: null,
          });
      }
      throw new Error('the plan did not finish');
    };
    const power = (i: number, j: number) =>
      2 * (axes[0].values[i] / 1e-8) ** 0.5 * (axes[1].values[j] / 1e3) ** 0.3;
    const a = runPlan(power);
    // coarse grid 5 x 5 (every 4th of 17) and one centre in each of its 16 cells
    expect(a.known.size).toBe(25 + 16);
    expect(a.plan.inferred.size).toBe(n * n - 41);
    // the corners of a coarse cell differ by a factor 10^(0.5 / 2) x 10^(0.3 / 2), far beyond the margin
    expect(power(4, 4) / power(0, 0)).toBeGreaterThan(2.5);
    for (const [k, inf] of a.plan.inferred) {
      const g = interpolateMetric(
        inf.corners.map((c) => a.known.get(c)!.metrics.gain_over_static),
        inf.weights,
      )!;
      expect(g / power(Math.floor(k / n), k % n) - 1).toBeLessThan(1e-9);
    }
    // a bump of 50 % over a flat 2, 1.5 grid steps wide, off the centre of a coarse cell (a
    // bump whose corners all agree is the documented blind spot, docs/model.md §9)
    const bump = (i: number, j: number) =>
      2 * (1 + 0.5 * Math.exp(-((i - 5) ** 2 + (j - 6) ** 2) / (2 * 1.5 ** 2)));
    const b = runPlan(bump);
    // the probe at (6, 6) sees 2.8 where the corners say about 2.2: the cells around it split
    expect(b.known.has(6 * n + 6)).toBe(true);
    // split: the children's corners on the cell's edges are computed (here (4, 6) and (6, 4))
    expect(b.known.has(4 * n + 6) && b.known.has(6 * n + 4)).toBe(true);
  });

  it('progress of a growing plan: planned so far, the most it can grow to, and the ETA as a range', () => {
    // 28 points left at 2 points/s is 14 s; 298 left at most is 149 s = 2m29s
    expect(formatProgressLine('sweep m', 12, 40, 2, 'points', 310)).toBe(
      'sweep m: 12/40 points planned so far (at most 310), 2 points/s, ETA 14s to 2m29s',
    );
    expect(etaText(12, 40, 2)).toBe('14s');
  });
});

describe('a refined map against the full grid (synthetic evaluator)', () => {
  it('--full computes every point once and infers none', () => {
    expect(full.point_source!.every((x) => x === 'computed')).toBe(true);
    expect(full.inferred_points).toBe(0);
    expect(full.refinement).toBeNull();
    const read = readPoints(path.join(tmp, 'full', 'points.ndjson'));
    expect(read.records.length).toBe(N * N);
    expect(read.dropped).toEqual([]);
  });

  it('hands out the longest points first: a full grid runs in order of growing drive frequency', () => {
    // at equal settings the stepped time grows as 1/f (docs/model.md §3.6), so the order is by f
    const f = fullRuns.map((i) => gridIndices(full.axes, i)[1]);
    for (let k = 1; k < f.length; k++) expect(f[k]).toBeGreaterThanOrEqual(f[k - 1]);
  });

  it('finds every class boundary the full grid finds: both points of each differing neighbour pair are computed', () => {
    let boundaries = 0;
    for (const [a, b] of neighbourPairs()) {
      if (full.classes[a] === full.classes[b]) continue;
      boundaries++;
      expect(refined.point_source![a], `point ${a}`).toBe('computed');
      expect(refined.point_source![b], `point ${b}`).toBe('computed');
    }
    // the synthetic map has both a straight and a curved boundary: the check is not empty
    expect(boundaries).toBeGreaterThan(40);
    // and the refinement ran fewer points than the grid holds, each at most once
    expect(new Set(refinedRuns).size).toBe(refinedRuns.length);
    expect(refinedRuns.length).toBeLessThan(N * N);
    expect(refinedRuns.length + refined.inferred_points!).toBe(N * N);
  });

  it('finds every class boundary from the class alone, where no compared metric changes', async () => {
    flat = true;
    try {
      const f = (
        await runSweep(scenario, {
          outDir: path.join(tmp, 'flat-full'),
          executor: fakeExecutor(),
          full: true,
        })
      ).map;
      const r = (
        await runSweep(scenario, { outDir: path.join(tmp, 'flat-refined'), executor: fakeExecutor() })
      ).map;
      let boundaries = 0;
      for (const [a, b] of neighbourPairs()) {
        if (f.classes[a] === f.classes[b]) continue;
        boundaries++;
        expect(r.point_source![a], `point ${a}`).toBe('computed');
        expect(r.point_source![b], `point ${b}`).toBe('computed');
      }
      expect(boundaries).toBeGreaterThan(40);
      expect(r.classes).toEqual(f.classes);
    } finally {
      flat = false;
    }
  });

  it('inferred points carry the true class; their metrics lie within the margin (monotone metrics)', () => {
    const margin = refined.refinement!.margin;
    let inferred = 0;
    refined.point_source!.forEach((src, i) => {
      if (src !== 'inferred') return;
      inferred++;
      expect(refined.classes[i], `point ${i}`).toBe(full.classes[i]);
      // gain is monotone in v, so in each coordinate: the truth and the interpolation both lie
      // between the corners' min and max, whose spread the refinement kept below margin x max
      const g = refined.metrics.gain_over_static[i]!;
      const t = full.metrics.gain_over_static[i]!;
      expect(Math.abs(g - t) / t).toBeLessThanOrEqual(margin);
    });
    expect(inferred).toBeGreaterThan(0);
  });

  it('the onset and decoupling curves are those of the full grid, from computed points only', () => {
    expect(refined.onset_curve).toEqual(full.onset_curve);
    expect(refined.decoupling_boundary).toEqual(full.decoupling_boundary);
    // built again from the computed points alone (inferred nulled), the curves do not change
    const only = computedOnly(refined);
    expect(only.classes.filter((c) => c !== null).length).toBe(refinedRuns.length);
  });

  it('the recommended point and its margin neighbours are computed points', () => {
    expect(refined.recommended).not.toBeNull();
    const i = refined.recommended!.index;
    expect(isComputedPoint(refined, i)).toBe(true);
    const [ka, kf] = gridIndices(refined.axes, i);
    for (const [da, df] of [
      [-1, 0],
      [1, 0],
      [0, -1],
      [0, 1],
    ]) {
      const a = ka + da;
      const f = kf + df;
      if (a < 0 || a >= N || f < 0 || f >= N) continue;
      const j = a * N + f;
      expect(refined.point_source![j], `neighbour ${j}`).toBe('computed');
      expect(refined.classes[j]).toBe('decoupled');
    }
    // the full grid's recommendation is decoupled with margin in the refined map too, or
    // dearer: the refined recommendation is never cheaper than what every point computed finds
    expect(refined.recommended!.voltage_V!).toBeGreaterThanOrEqual(
      full.recommended!.voltage_V! * (1 - 1e-12),
    );
  });

  it('an inferred point never decides the operating point', () => {
    // the map with every computed decoupled point turned 'modulated': only inferred points are
    // decoupled, and the computed-only view has none
    const fake: SweepMap = {
      ...refined,
      classes: refined.classes.map((c, i) =>
        refined.point_source![i] === 'computed' && c === 'decoupled' ? 'modulated' : c,
      ),
    };
    expect(fake.classes.some((c, i) => c === 'decoupled' && fake.point_source![i] === 'inferred')).toBe(true);
    expect(computedOnly(fake).classes.includes('decoupled')).toBe(false);
  });
});

describe('the report of a refined map', () => {
  /** The plots of a report: the JSON block the page draws from. */
  const plotsOf = (htmlText: string): { id: string; data: { name?: string; x?: number[] }[] }[] => {
    const m = /<script type="application\/json" id="report-data">([\s\S]*?)<\/script>/.exec(htmlText);
    return JSON.parse(m![1]).plots;
  };

  it('hatches exactly the inferred cells on the class map; the full map has no hatch', () => {
    const cls = plotsOf(buildSweepReportHtml(refined)).find((p) => p.id === 'map-class')!;
    const hatch = cls.data.find((d) => d.name?.startsWith('inferred'));
    expect(hatch).toBeDefined();
    expect(hatch!.x!.length).toBe(refined.inferred_points);
    const fullCls = plotsOf(buildSweepReportHtml(full)).find((p) => p.id === 'map-class')!;
    expect(fullCls.data.some((d) => d.name?.startsWith('inferred'))).toBe(false);
  });

  it('ranks only computed points among the best points', () => {
    for (const i of bestPoints(refined, 50)) expect(refined.point_source![i]).toBe('computed');
  });
});

describe('resume and shards with refinement', () => {
  it('stopped midway and resumed: every point once, the same map as the uninterrupted refined run', async () => {
    const dir = path.join(tmp, 'resume');
    const ac = new AbortController();
    const first = fakeExecutor({ n: 60, abort: () => ac.abort() });
    const out1 = await runSweep(scenario, { outDir: dir, executor: first, signal: ac.signal });
    expect(out1.interrupted).toBe(true);
    // a torn last line, as a kill during a write leaves
    fs.appendFileSync(path.join(dir, 'points.ndjson'), '{"index": 5, "axes": {');
    const second = fakeExecutor();
    const out2 = await runSweep(scenario, { outDir: dir, executor: second, resume: true });
    expect(out2.interrupted).toBe(false);
    const text = fs.readFileSync(path.join(dir, 'points.ndjson'), 'utf8');
    const indices = text
      .split('\n')
      .filter((l) => l !== '')
      .map((l) => JSON.parse(l).index as number);
    expect(new Set(indices).size).toBe(indices.length);
    expect(new Set(indices)).toEqual(new Set(refinedRuns));
    // the second run asked only for points the first had not finished
    const firstDone = new Set(out1.map.point_source!.flatMap((s, i) => (s === 'computed' ? [i] : [])));
    for (const i of second.runs) expect(firstDone.has(i)).toBe(false);
    expect(out2.map.point_source).toEqual(refined.point_source);
    expect(out2.map.classes).toEqual(refined.classes);
  });

  it('shards 1/3, 2/3 and 3/3 refine their own coarse cells; merged, they give the unsharded refined map', async () => {
    const dirs = [1, 2, 3].map((k) => path.join(tmp, `shard-${k}`));
    for (let k = 0; k < 3; k++)
      await runSweep(scenario, {
        outDir: dirs[k],
        executor: fakeExecutor(),
        shard: { index: k + 1, count: 3 },
      });
    const merged = mergeShards(dirs, { outDir: path.join(tmp, 'merged') });
    // every point the unsharded sweep computed, the shards computed; beyond those, a shard
    // computes only the margin neighbours of the operating point its own cells recommend
    // (it cannot see the others' points): at most 8 per shard, each inferred in the
    // unsharded map, the class the same
    const extra: number[] = [];
    merged.map.point_source!.forEach((src, i) => {
      if (refined.point_source![i] === 'computed') expect(src).toBe('computed');
      else if (src === 'computed') extra.push(i);
      else expect(src).toBe(refined.point_source![i]);
    });
    expect(extra.length).toBeLessThanOrEqual(8 * dirs.length);
    for (const i of extra) expect(refined.point_source![i]).toBe('inferred');
    expect(merged.map.classes).toEqual(refined.classes);
    expect(merged.map.decoupling_boundary).toEqual(refined.decoupling_boundary);
    expect(merged.missing).toBe(0);
  });

  it('the plan of a finished refined sweep needs nothing more', () => {
    const known = new Map<number, RefinePoint>();
    const read = readPoints(path.join(tmp, 'refined', 'points.ndjson'));
    for (const r of read.records)
      known.set(r.index, {
        class: r.summary.class,
        metrics: {
          gain_over_static: r.summary.driven!.gain_over_static,
          ripple_rel: r.summary.driven!.ripple_rel,
          hops_per_period: r.summary.driven!.hops_per_period,
        },
        rel_stderr: null,
      });
    const plan = planRefinement(refined.axes, known, defaultRefineSettings(scenario.analysis));
    expect(plan.complete).toBe(true);
    expect(plan.need).toEqual([]);
    expect(plan.upper_bound).toBe(read.records.length);
  });
});

describe('the pieces of the map benchmark', () => {
  it('z is the difference over the combined standard error: |1.0 - 1.1| / hypot(0.03, 0.04) = 2', () => {
    // 3-4-5 triangle: hypot(0.03, 0.04) = 0.05; 1e-12 leaves room for rounding only
    expect(combinedZ(1.0, 0.03, 1.1, 0.04)).toBeCloseTo(2, 12);
    expect(combinedZ(1.0, null, 1.1, 0.04)).toBeNull();
  });

  it('the error from the spread over offsets is s / sqrt(n) with the n - 1 sample variance', () => {
    // values 1, 2, 3, 4: mean 2.5, sample variance 5/3, s.e. sqrt(5/3 / 4) = 0.6455
    const se = drivenStderr({ external_mean_by_offset_W: { values: [1, 2, 3, 4] } });
    expect(se!.from).toBe('offsets');
    expect(se!.stderr_W).toBeCloseTo(Math.sqrt(5 / 12), 12);
    // a stated error wins
    const stated = drivenStderr({
      external_mean_stderr_W: 0.1,
      external_mean_by_offset_W: { values: [1, 2] },
    } as never);
    expect(stated).toEqual({ stderr_W: 0.1, from: 'summary' });
    expect(drivenStderr({ external_mean_by_offset_W: { values: [1] } })).toBeNull();
  });

  it('the direct run samples the rest positions between those of the map: offsets moved by lambda / (4 n)', () => {
    const d = directScenario(scenario);
    const n = scenario.simulation.drive_offsets;
    expect(d.drive.offset - scenario.drive.offset).toBeCloseTo(scenario.laser.wavelength / (4 * n), 18);
    expect(d.simulation.seed).toBe(scenario.simulation.seed + 1);
  });

  it('spread indices lie within the grid, distinct and spread out', () => {
    expect(spreadIndices(2, 2)).toEqual([0, 1]);
    // (j + 0.5) 8 / 4 - 0.5 = 0.5, 2.5, 4.5, 6.5, rounded half up
    expect(spreadIndices(8, 4)).toEqual([1, 3, 5, 7]);
  });
});
