/**
 * The speed curve of docs/model.md §3.6: for one laser and cavity, the statistically
 * steady state of a return mirror moving at constant speed over many half wavelengths,
 * in both directions, on a fixed lattice of speeds (8 per decade), so that curves computed
 * for different drives share their points. Each point is stepped by the engine the planner
 * would pick for a mirror at that speed (whatever engines exist), over SPEED_LANES lanes
 * at stratified random rest offsets, each lane started from the free-running state and
 * settled FREE_START_MEMORY_TIMES memory times at speed (so every point is independent of
 * the static reference and of the other points, and can run on any thread: docs/model.md §4.2).
 */
import { createHash } from 'node:crypto';
import type { Scenario } from '../scenario/schema';
import type { CoupledParams } from '../physics/coupled/params';
import type { MirrorMotion } from '../physics/coupled/lane-engine';
import { createLaneEngine } from '../physics/coupled/factory';
import type { EngineKind } from '../physics/coupled/factory';
import { createRng } from '../numerics/rng';
import { RunningStats } from '../analysis/stats';
import { HopDetector } from '../analysis/hops';
import type { SpeedCurve, SpeedPoint } from '../results/speed-curve';
import { externalPowerOf, laserOutputOf } from './references';
import type { FreeRunningResult } from './references';
import { planEngines } from './engine-choice';
import type { EngineRequest } from './engine-choice';

/** Lanes (rest offsets) per speed and direction. */
export const SPEED_LANES = 3;
/** Half wavelengths each lane crosses in the analysed window at every speed. */
export const SPEED_HALF_WAVES = 8;
/** Lattice points per decade of speed (base grid every second point, refined to all). */
export const SPEED_LATTICE_PER_DECADE = 8;
/**
 * Bend that calls for refinement: where the mean gap power at a base point departs from
 * the straight line (in log speed) through its two base neighbours by more than this
 * fraction, the points between it and both neighbours are added.
 */
export const SPEED_REFINE_BEND = 0.05;

/**
 * Memory times a lane started from the free-running state settles before its statistics
 * count (speed points and turning-point windows): the memory time is the regrowth of a
 * suppressed mode (memoryTime), so four of them forget the start; on the demo laser and gap
 * 33 us, the 32 us of docs/model.md §4.2 for driven lanes started the same way.
 */
export const FREE_START_MEMORY_TIMES = 4;

/**
 * Memory time of the coupled system, s: the regrowth of a mode from the noise floor to the
 * free-running level at the unsaturated excess gain, ln(P_free / P_sp) / (gamma_c (p - 1)),
 * times MEMORY_REGROWTH_FACTOR, and never below 40 of the slowest linear response (photon
 * lifetimes of laser and gap, tau_N). The factor: on the demo laser and gap this regrowth
 * estimate is 2.9 us while the lag measured after each turning point (docs/model.md §3.6)
 * was about 7 us: the mode regrows at the saturated, not the unsaturated, excess gain.
 */
export const MEMORY_REGROWTH_FACTOR = 3;

export function memoryTime(p: CoupledParams, free: { intracavity_W: number }): number {
  const gapLife = p.hasExternal ? p.roundTripExternal_s / Math.max(1e-12, 1 - (p.r2 * p.r3eff) ** 2) : 0;
  const response = Math.max(1 / p.gammaC, gapLife, p.classA ? 0 : p.tauN);
  let peak = 0;
  for (let m = 0; m < p.M; m++) peak = Math.max(peak, p.pump * p.gainRel[m]);
  const excess = p.gammaC * Math.max(peak - 1, 0.05);
  const ratio = Math.max(Math.E, free.intracavity_W / Math.max(p.spontaneous_W, 1e-30));
  const regrowth = Math.log(ratio) / excess;
  return Math.max(40 * response, MEMORY_REGROWTH_FACTOR * regrowth);
}

/** The stepping-engine request a speed curve is computed with: a named stepping engine, else the planner's choice. */
export function steppingRequest(requested: string): string {
  return ['exact', 'fast', 'modal', 'meanfield', 'roundtrip'].includes(requested) ? requested : 'auto';
}

/** The stepping engine (kind and step) the planner picks for a mirror moving at constant speed v. */
export function steppingEngineFor(
  s: Scenario,
  p: CoupledParams,
  finesse: number,
  regrowth_s: number,
  v: number,
  requested: string,
): { kind: EngineKind; dt: number } {
  const still: Scenario = {
    ...s,
    drive: { ...s.drive, waveform: 'off', amplitude: 0, second_amplitude: 0, drift: v, vibration: undefined },
  };
  let req = steppingRequest(requested) as EngineRequest;
  // the slow-drive path asked for by name runs on the modal family (docs/model.md §3.7):
  // the mean field where it holds at this speed, else the delay line
  if (requested === 'speedcurve' || requested === 'adiabatic') {
    const mf = planEngines(still, p, finesse, regrowth_s, 'meanfield');
    req = mf.driven.warning === null ? 'meanfield' : 'modal';
  }
  const plan = planEngines(still, p, finesse, regrowth_s, req);
  const k = plan.driven.kind as string;
  if (k === 'exact' || k === 'fast' || k === 'roundtrip') return { kind: k, dt: plan.driven.dt };
  return { kind: plan.static.kind, dt: plan.static.dt };
}

/** Key of a speed curve: laser, cavity, rest position, step settings, seed, engine request, band and dwell. */
export function speedCurveKey(s: Scenario, seed: number, requested: string): string {
  const relevant = {
    requested: steppingRequest(requested),
    laser: s.laser,
    external: s.external ?? null,
    offset: s.drive.offset,
    substeps: s.simulation.substeps,
    band: s.analysis.detection_bandwidth,
    dwell: s.analysis.hop_dwell,
    seed,
    lattice: SPEED_LATTICE_PER_DECADE,
    lanes: SPEED_LANES,
    halfWaves: SPEED_HALF_WAVES,
    // how a point starts and settles, and the hop margin it counts with: a curve saved
    // before either changed is not mixed with new points
    start: 'free-running',
    settleMemoryTimes: FREE_START_MEMORY_TIMES,
    hopMargin: s.analysis.hop_margin,
  };
  return createHash('sha256')
    .update(JSON.stringify(relevant, (_k, v) => (v === Infinity ? 'flat' : v)))
    .digest('hex');
}

/** Lattice index of a speed (v = 10^(k / 8)). */
function latticeIndex(v: number): number {
  return Math.round(SPEED_LATTICE_PER_DECADE * Math.log10(v));
}
function latticeSpeed(k: number): number {
  return 10 ** (k / SPEED_LATTICE_PER_DECADE);
}

export interface SpeedCurveContext {
  s: Scenario;
  p: CoupledParams;
  finesse: number;
  /** the regrowth time the planner is given (the static settle time) */
  regrowth_s: number;
  free: FreeRunningResult;
  seed: number;
  requested: string;
  onProgress?: (fraction: number) => void;
}

/** Mirror at constant speed dir * v about the rest position. */
function constantMotion(rest_m: number, velocity: number): MirrorMotion {
  return { position: (t) => rest_m + velocity * t, velocity: () => velocity };
}

/**
 * Step SPEED_LANES lanes at constant speed dir x 10^(k / 8) m/s from the free-running state
 * and collect their statistics; a message instead on a numerical failure. Its own noise
 * stream (seed, k, dir): the same point wherever and whenever it is computed.
 */
export function speedPoint(
  ctx: Pick<SpeedCurveContext, 's' | 'p' | 'finesse' | 'regrowth_s' | 'free' | 'seed' | 'requested'>,
  k: number,
  dir: 1 | -1,
  memory_s: number,
): SpeedPoint | string {
  const { s, p } = ctx;
  const v = latticeSpeed(k);
  const eng = steppingEngineFor(s, p, ctx.finesse, ctx.regrowth_s, v, ctx.requested);
  const half = s.laser.wavelength / 2;
  const L = SPEED_LANES;
  const M = p.M;
  const rng = createRng(ctx.seed).fork(100000 + 2 * (k + 1000) + (dir > 0 ? 0 : 1));
  const offsets = Array.from({ length: L }, (_, l) => ((l + rng.uniform()) * half) / L);
  const settle_s = speedSettle(memory_s, half, v);
  const analysed_s = speedAnalysed(memory_s, half, v);
  const settleSteps = Math.ceil(settle_s / eng.dt);
  const steps = Math.ceil(analysed_s / eng.dt);
  const rest = s.drive.offset;
  const e = createLaneEngine(
    {
      kind: eng.kind,
      dt: eng.dt,
      maxExcursion_m: Math.abs(rest) + half + v * (settle_s + analysed_s) * 1.01,
    },
    p,
    L,
    constantMotion(rest, dir * v),
    rng,
  );
  e.setLaserState(ctx.free.Er, ctx.free.Ei, ctx.free.N);
  offsets.forEach((o, l) => (e.offset[l] = o));
  if (!e.advance(settleSteps)) return e.failMessage || 'numerical failure';
  const ext = Array.from({ length: L }, () => new RunningStats());
  const out = Array.from({ length: L }, () => new RunningStats());
  const ic = new Float64Array(L);
  const ret = new Float64Array(L);
  const modeP = new Float64Array(M);
  const band = 1 / s.analysis.detection_bandwidth;
  const blockSteps = Math.max(1, Math.floor(Math.min(band, analysed_s / 4) / eng.dt));
  const blockSum = new Float64Array(L);
  const blocks = Array.from({ length: L }, () => new RunningStats());
  const hops = Array.from(
    { length: L },
    () =>
      new HopDetector({
        dt_s: eng.dt,
        dwell_s: s.analysis.hop_dwell,
        modeCount: M,
        // the scenario's margin, as the analysis of every stepped run applies it (docs/model.md §4.3)
        margin: s.analysis.hop_margin,
        driveFrequency_Hz: null,
      }),
  );
  const lanePowers = new Float64Array(M);
  let n = 0;
  const ok = e.advance(steps, (en) => {
    for (let l = 0; l < L; l++) {
      const pe = externalPowerOf(en, l);
      ext[l].push(pe);
      out[l].push(laserOutputOf(en, l));
      // intracavity and returned power as the engine defines them (on the round-trip engine
      // the whole band, not only the demodulated modes), as every stepped run reports them
      ic[l] += en.intracavityPower(l);
      ret[l] += en.returnedPower(l);
      for (let m = 0; m < M; m++) {
        const j = l * M + m;
        const pm = en.Er[j] * en.Er[j] + en.Ei[j] * en.Ei[j];
        modeP[m] += pm;
        lanePowers[m] = pm;
      }
      hops[l].pushPowers(lanePowers);
      blockSum[l] += pe;
    }
    n++;
    if (n % blockSteps === 0) {
      for (let l = 0; l < L; l++) {
        blocks[l].push(blockSum[l] / blockSteps);
        blockSum[l] = 0;
      }
    }
  });
  if (!ok) return e.failMessage || 'numerical failure';
  const er = ext.map((x) => x.result());
  const or = out.map((x) => x.result());
  const hr = hops.map((h) => h.result());
  const means = er.map((r) => r.mean);
  const mean = means.reduce((a, b) => a + b, 0) / L;
  const spread = means.reduce((a, b) => a + (b - mean) ** 2, 0) / Math.max(1, L - 1);
  const pooled = er.reduce((a, r) => a + r.variance + (r.mean - mean) ** 2, 0) / L;
  const outMean = or.reduce((a, r) => a + r.mean, 0) / L;
  const outVar = or.reduce((a, r) => a + r.variance + (r.mean - outMean) ** 2, 0) / L;
  // block means about each lane's own mean; blocks shorter than the detector's window are
  // scaled as independent averages would be (sqrt(block / window))
  let bVar = 0;
  let bCount = 0;
  for (let l = 0; l < L; l++) {
    const b = blocks[l].result();
    if (b.count >= 2) {
      bVar += b.sampleVariance;
      bCount++;
    }
  }
  const blockTime = blockSteps * eng.dt;
  const bandStd = bCount > 0 ? Math.sqrt((bVar / bCount) * Math.min(1, blockTime / band)) : NaN;
  const hopsTotal = hr.reduce((a, h) => a + h.hops, 0);
  const dur = steps * eng.dt;
  return {
    speed_m_s: v,
    external_mean_W: mean,
    external_stderr_W: Math.sqrt(spread / L),
    external_std_W: Math.sqrt(pooled),
    external_min_W: Math.min(...er.map((r) => r.min)),
    external_max_W: Math.max(...er.map((r) => r.max)),
    band_std_W: bandStd,
    laser_output_mean_W: outMean,
    laser_output_std_W: Math.sqrt(outVar),
    intracavity_mean_W: ic.reduce((a, b) => a + b, 0) / (L * n),
    returned_mean_W: ret.reduce((a, b) => a + b, 0) / (L * n),
    mode_powers_W: Array.from(modeP, (x) => x / (L * n)),
    mode_occupation: Array.from({ length: M }, (_, m) => hr.reduce((a, h) => a + h.occupation[m], 0) / L),
    hops_per_s: hopsTotal / (L * dur),
    hops_counted: hopsTotal,
    analysed_s: dur,
    lanes: L,
    engine: eng.kind,
    dt_s: eng.dt,
  };
}

/** Settle time of a speed point, s: the free start forgotten, and two half wavelengths crossed. */
function speedSettle(memory_s: number, half: number, v: number): number {
  return Math.max(FREE_START_MEMORY_TIMES * memory_s, (2 * half) / v);
}

/** Analysed time of a speed point, s: SPEED_HALF_WAVES half wavelengths, at least two memory times. */
function speedAnalysed(memory_s: number, half: number, v: number): number {
  return Math.max((SPEED_HALF_WAVES * half) / v, 2 * memory_s);
}

/** Cost of one speed point in lane-steps (for progress and for ordering the work, longest first). */
export function speedPointCost(
  ctx: Pick<SpeedCurveContext, 's' | 'p' | 'finesse' | 'regrowth_s' | 'requested'>,
  k: number,
  memory_s: number,
): number {
  const v = latticeSpeed(k);
  const eng = steppingEngineFor(ctx.s, ctx.p, ctx.finesse, ctx.regrowth_s, v, ctx.requested);
  const half = ctx.s.laser.wavelength / 2;
  return (SPEED_LANES * (speedSettle(memory_s, half, v) + speedAnalysed(memory_s, half, v))) / eng.dt;
}

/** A speed point to compute: lattice index and direction. */
export type SpeedTodo = [k: number, dir: 1 | -1];

/** A curve being extended: its points so far and the base lattice it is refined on. */
export interface SpeedCurveWork {
  curve: SpeedCurve;
  memory_s: number;
  base: number[];
  started: number;
}

/**
 * Start the curve over [vLo, vHi] (lattice points around both ends included), from `prior`
 * when it has the same key (its points are kept): the base grid is every second lattice
 * point; `todo` lists the base points still missing, longest first.
 */
export function startSpeedCurve(
  prior: SpeedCurve | null,
  ctx: SpeedCurveContext,
  vLo: number,
  vHi: number,
): { work: SpeedCurveWork; todo: SpeedTodo[] } {
  const key = speedCurveKey(ctx.s, ctx.seed, ctx.requested);
  const memory_s = memoryTime(ctx.p, ctx.free);
  const curve: SpeedCurve =
    prior && prior.key === key
      ? { ...prior, forward: [...prior.forward], backward: [...prior.backward] }
      : {
          key,
          memory_time_s: memory_s,
          detection_bandwidth_Hz: ctx.s.analysis.detection_bandwidth,
          forward: [],
          backward: [],
          lane_steps: 0,
          wall_s: 0,
        };
  const base = speedBaseLattice(vLo, vHi);
  const todo: SpeedTodo[] = [];
  for (const k of base) {
    if (!hasSpeed(curve.forward, k)) todo.push([k, 1]);
    if (!hasSpeed(curve.backward, k)) todo.push([k, -1]);
  }
  return { work: { curve, memory_s, base, started: Date.now() }, todo: longestFirst(todo) };
}

/** The base grid of a curve over [vLo, vHi]: every second lattice index, both ends covered. */
export function speedBaseLattice(vLo: number, vHi: number): number[] {
  let kLo = Math.floor(SPEED_LATTICE_PER_DECADE * Math.log10(vLo));
  let kHi = Math.ceil(SPEED_LATTICE_PER_DECADE * Math.log10(Math.max(vHi, vLo)));
  if (kLo % 2 !== 0) kLo--;
  if (kHi % 2 !== 0) kHi++;
  const base: number[] = [];
  for (let k = kLo; k <= kHi; k += 2) base.push(k);
  return base;
}

function hasSpeed(list: SpeedPoint[], k: number): boolean {
  return list.some((q) => latticeIndex(q.speed_m_s) === k);
}

/** Slowest (costliest) first, forward before backward: the order the work is handed out in. */
function longestFirst(todo: SpeedTodo[]): SpeedTodo[] {
  return [...todo].sort((a, b) => a[0] - b[0] || b[1] - a[1]);
}

/** Add a computed point to the curve; returns its cost in lane-steps (counted in lane_steps). */
export function addSpeedPoint(
  work: SpeedCurveWork,
  ctx: Pick<SpeedCurveContext, 's' | 'p' | 'finesse' | 'regrowth_s' | 'requested'>,
  [k, dir]: SpeedTodo,
  point: SpeedPoint,
): number {
  const cost = speedPointCost(ctx, k, work.memory_s);
  work.curve.lane_steps += cost;
  (dir > 0 ? work.curve.forward : work.curve.backward).push(point);
  return cost;
}

/**
 * The refinement the base points call for: where the mean gap power at a base point departs
 * from the straight line (in log speed) through its two base neighbours by more than
 * SPEED_REFINE_BEND, the lattice points on both sides of it, in that direction.
 */
export function speedRefinement(work: SpeedCurveWork): SpeedTodo[] {
  const { base, curve } = work;
  const todo: SpeedTodo[] = [];
  for (const dir of [1, -1] as const) {
    const list = dir > 0 ? curve.forward : curve.backward;
    const at = (k: number) => list.find((q) => latticeIndex(q.speed_m_s) === k) as SpeedPoint;
    const refine = new Set<number>();
    for (let i = 1; i + 1 < base.length; i++) {
      const a = at(base[i - 1]).external_mean_W;
      const b = at(base[i]).external_mean_W;
      const c = at(base[i + 1]).external_mean_W;
      // equal steps in log speed: the straight line through the neighbours is their mean
      if (Math.abs(b - 0.5 * (a + c)) > SPEED_REFINE_BEND * Math.max(Math.abs(b), 1e-300)) {
        refine.add(base[i] - 1);
        refine.add(base[i] + 1);
      }
    }
    for (const mid of refine) if (!hasSpeed(list, mid)) todo.push([mid, dir]);
  }
  return longestFirst(todo);
}

/** The finished curve: points in speed order, its wall time counted. */
export function finishSpeedCurve(work: SpeedCurveWork): SpeedCurve {
  const c = work.curve;
  c.forward.sort((a, b) => a.speed_m_s - b.speed_m_s);
  c.backward.sort((a, b) => a.speed_m_s - b.speed_m_s);
  c.wall_s += (Date.now() - work.started) / 1000;
  return c;
}

/**
 * The curve over [vLo, vHi] on this thread: startSpeedCurve, its base points, then the
 * refinement (speedRefinement), extending `prior` when it has the same key. Returns a
 * message instead on a numerical failure.
 */
export function ensureSpeedCurve(
  prior: SpeedCurve | null,
  ctx: SpeedCurveContext,
  vLo: number,
  vHi: number,
): SpeedCurve | string {
  const { work, todo } = startSpeedCurve(prior, ctx, vLo, vHi);
  const cost = (list: SpeedTodo[]) => list.reduce((a, [k]) => a + speedPointCost(ctx, k, work.memory_s), 0);
  const total = cost(todo) * 1.3;
  let done = 0;
  const run = (list: SpeedTodo[]): string | null => {
    for (const item of list) {
      const r = speedPoint(ctx, item[0], item[1], work.memory_s);
      if (typeof r === 'string') return r;
      done += addSpeedPoint(work, ctx, item, r);
      ctx.onProgress?.(Math.min(1, done / Math.max(1, total)));
    }
    return null;
  };
  const err = run(todo) ?? run(speedRefinement(work));
  return err ?? finishSpeedCurve(work);
}

/** The numeric fields of a speed point interpolated in log(speed) (clamped at the ends). */
export interface CurveValue {
  external_W: number;
  external_var_W2: number;
  external_min_W: number;
  external_max_W: number;
  laser_output_W: number;
  laser_output_var_W2: number;
  intracavity_W: number;
  returned_W: number;
  hops_per_s: number;
  mode_powers_W: number[];
  mode_occupation: number[];
}

export function curveAt(curve: SpeedCurve, velocity: number, into?: CurveValue): CurveValue {
  const list = velocity >= 0 ? curve.forward : curve.backward;
  const v = Math.abs(velocity);
  let i = 0;
  while (i + 1 < list.length && list[i + 1].speed_m_s < v) i++;
  const a = list[i];
  const b = list[Math.min(i + 1, list.length - 1)];
  let w = 0;
  if (b !== a && v > a.speed_m_s) {
    w = Math.min(1, Math.log(v / a.speed_m_s) / Math.log(b.speed_m_s / a.speed_m_s));
  }
  const mix = (x: number, y: number) => x * (1 - w) + y * w;
  const r: CurveValue = into ?? {
    external_W: 0,
    external_var_W2: 0,
    external_min_W: 0,
    external_max_W: 0,
    laser_output_W: 0,
    laser_output_var_W2: 0,
    intracavity_W: 0,
    returned_W: 0,
    hops_per_s: 0,
    mode_powers_W: new Array(a.mode_powers_W.length).fill(0),
    mode_occupation: new Array(a.mode_occupation.length).fill(0),
  };
  r.external_W = mix(a.external_mean_W, b.external_mean_W);
  r.external_var_W2 = mix(a.external_std_W ** 2, b.external_std_W ** 2);
  r.external_min_W = Math.min(a.external_min_W, b.external_min_W);
  r.external_max_W = Math.max(a.external_max_W, b.external_max_W);
  r.laser_output_W = mix(a.laser_output_mean_W, b.laser_output_mean_W);
  r.laser_output_var_W2 = mix(a.laser_output_std_W ** 2, b.laser_output_std_W ** 2);
  r.intracavity_W = mix(a.intracavity_mean_W, b.intracavity_mean_W);
  r.returned_W = mix(a.returned_mean_W, b.returned_mean_W);
  r.hops_per_s = mix(a.hops_per_s, b.hops_per_s);
  for (let m = 0; m < r.mode_powers_W.length; m++) {
    r.mode_powers_W[m] = mix(a.mode_powers_W[m], b.mode_powers_W[m]);
    r.mode_occupation[m] = mix(a.mode_occupation[m], b.mode_occupation[m]);
  }
  return r;
}
