/**
 * The two references every driven run is judged against (docs/model.md §4):
 * the free-running laser (no return mirror) and the static system (actuator off),
 * settled at positions spread over half a wavelength, up and down.
 */
import type { CoupledParams } from '../physics/coupled/params';
import { ExactEngine } from '../physics/coupled/exact';
import { RoundTripEngine } from '../physics/coupled/roundtrip';
import { balanceErrors } from '../physics/coupled/lane-engine';
import type { LaneEngine, MirrorMotion, NormalSource } from '../physics/coupled/lane-engine';
import { createLaneEngine, EngineKind } from '../physics/coupled/factory';
import { singleModePower } from '../physics/laser/saturation';

/** Steady state of the laser alone. */
export interface FreeRunningResult {
  Er: number[];
  Ei: number[];
  N: number[];
  /** one-way intracavity power summed over modes, W */
  intracavity_W: number;
  /** output through M2, T2 sum |E|^2, W */
  output_W: number;
  modePowers_W: number[];
  /** mode numbers (ModeSet.index) holding at least 1 % of the strongest mode's power */
  lasingModes: number[];
  steps: number;
}

/** Time-step choice for the laser alone: resolve the photon lifetime, tau_N and the relaxation oscillation. */
export function laserOnlyStep(p: CoupledParams): number {
  const ro = Math.sqrt((p.gammaC * Math.max(p.pump - 1, 0.1)) / p.tauN);
  return Math.min(0.02 / p.gammaC, p.classA ? Infinity : 0.05 * p.tauN, 0.05 / ro);
}

/**
 * Settle the laser with no external cavity on the modal engine from a state near the
 * single-mode estimate (random phases from the generator), for `settle_s` (default 400
 * photon lifetimes, at least 50 tau_N), and average the last fifth.
 */
export function freeRunning(
  p: CoupledParams,
  rng: NormalSource & { uniform(): number },
  settle_s?: number,
): FreeRunningResult {
  const M = p.M;
  if (!Number.isFinite(p.gammaC)) {
    return {
      Er: new Array(M).fill(0),
      Ei: new Array(M).fill(0),
      N: new Array(M).fill(0),
      intracavity_W: 0,
      output_W: 0,
      modePowers_W: new Array(M).fill(0),
      lasingModes: [],
      steps: 0,
    };
  }
  const dt = laserOnlyStep(p);
  return settleAlone(p, rng, settle_s, {
    build: (q, still) => new ExactEngine(q, 1, dt, still, rng, 0),
    startPower: (m) =>
      singleModePower(p.inhomogeneous, p.pump * p.gainRel[m], p.cross[m * M + m], 1 / p.invPsat) / M,
    intracavity: null,
  });
}

/**
 * The free-running laser on the round-trip engine (docs/model.md §3.5): the same settle
 * and averaging as freeRunning, from the homogeneous estimate P_sat (p f - 1) / M per
 * mode, with the whole band free to lase (mode powers by demodulation at the cold-cavity
 * modes, the total from the engine's own intracavity power).
 */
export function freeRunningRoundTrip(
  p: CoupledParams,
  rng: NormalSource & { uniform(): number },
  settle_s?: number,
): FreeRunningResult {
  if (!Number.isFinite(p.gammaC)) return freeRunning(p, rng, settle_s);
  return settleAlone(p, rng, settle_s, {
    build: (q, still) => new RoundTripEngine(q, 1, still, rng, 0),
    startPower: (m) => Math.max(0, p.pump * p.gainRel[m] - 1) / (p.invPsat * p.M),
    intracavity: (e) => e.intracavityPower(0),
  });
}

/** What a free-running settle takes from the engine it runs on. */
interface AloneEngine {
  /** the engine, one lane, for the laser with no external cavity q */
  build(q: CoupledParams, still: MirrorMotion): LaneEngine;
  /** starting power of mode slot m, W (raised to the spontaneous power) */
  startPower(m: number): number;
  /** one-way intracavity power of the lane, W, averaged as the total; null: the sum of the mode powers */
  intracavity: ((e: LaneEngine) => number) | null;
}

/**
 * Settle one lane of the laser alone for `settle_s` (default 400 photon lifetimes, at least
 * 50 tau_N, at least 1000 steps) from the engine's starting powers with phases drawn from
 * the generator, and average mode powers over the last fifth.
 */
function settleAlone(
  p: CoupledParams,
  rng: NormalSource & { uniform(): number },
  settle_s: number | undefined,
  how: AloneEngine,
): FreeRunningResult {
  const M = p.M;
  const q: CoupledParams = { ...p, hasExternal: false, returnToLaser: false, kappa: 0, couplingOut: 0 };
  const still: MirrorMotion = { position: () => 0, velocity: () => 0 };
  const eng = how.build(q, still);
  const T = settle_s ?? Math.max(400 / p.gammaC, 50 * p.tauN);
  const steps = Math.max(1000, Math.ceil(T / eng.dt));
  const Er: number[] = [];
  const Ei: number[] = [];
  const N: number[] = [];
  for (let m = 0; m < M; m++) {
    const P0 = Math.max(p.spontaneous_W, how.startPower(m));
    const th = 2 * Math.PI * rng.uniform();
    Er.push(Math.sqrt(P0) * Math.cos(th));
    Ei.push(Math.sqrt(P0) * Math.sin(th));
    N.push(1);
  }
  eng.setLaserState(Er, Ei, N);
  const avgFrom = Math.floor(steps * 0.8);
  const acc = new Float64Array(M);
  const intracavity = how.intracavity;
  let sum = 0;
  let count = 0;
  let k = 0;
  eng.advance(steps, (e) => {
    if (k++ >= avgFrom) {
      for (let m = 0; m < M; m++) acc[m] += e.Er[m] * e.Er[m] + e.Ei[m] * e.Ei[m];
      if (intracavity !== null) sum += intracavity(e);
      count++;
    }
  });
  const modePowers = Array.from(acc, (v) => v / Math.max(count, 1));
  const total = intracavity === null ? modePowers.reduce((a, b) => a + b, 0) : sum / Math.max(count, 1);
  const strongest = Math.max(...modePowers);
  return {
    Er: Array.from(eng.Er),
    Ei: Array.from(eng.Ei),
    N: Array.from(eng.N),
    intracavity_W: total,
    output_W: p.T2 * total,
    modePowers_W: modePowers,
    lasingModes: p.modes.index.filter(
      (_, m) => strongest > 0 && modePowers[m] >= 0.01 * strongest && modePowers[m] > 100 * p.spontaneous_W,
    ),
    steps,
  };
}

/** Per-lane means collected over the last part of a settle. */
export interface LaneMeans {
  external_W: number;
  laserOutput_W: number;
  intracavity_W: number;
  /** mode slot (0..M-1) with the largest mean intracavity power */
  dominant: number;
  /** mean intracavity power of each mode slot, W */
  modePowers_W: number[];
  /** mean returned power sum |b_m|^2 at M2, W */
  returned_W: number;
}

/** Net power leaving through M2 on the outside of lane l, W (the engine's own account). */
export function laserOutputOf(e: LaneEngine, l: number): number {
  return e.laserOutput(l);
}

/** Circulating one-way power in the gap of lane l, W (the engine's own account). */
export function externalPowerOf(e: LaneEngine, l: number): number {
  return e.externalPower(l);
}

/** Advance all lanes `steps` steps and average the lane observables over the last `avgSteps`. */
export function settleLanes(e: LaneEngine, steps: number, avgSteps: number): LaneMeans[] | null {
  const L = e.L;
  const M = e.M;
  const ext = new Float64Array(L);
  const out = new Float64Array(L);
  const ic = new Float64Array(L);
  const ret = new Float64Array(L);
  const modeP = new Float64Array(L * M);
  const from = steps - Math.min(avgSteps, steps);
  let k = 0;
  let count = 0;
  const ok = e.advance(steps, (en) => {
    if (k++ < from) return;
    count++;
    for (let l = 0; l < L; l++) {
      ext[l] += en.externalPower(l);
      out[l] += en.laserOutput(l);
      ic[l] += en.intracavityPower(l);
      ret[l] += en.returnedPower(l);
      for (let m = 0; m < M; m++) {
        const j = l * M + m;
        modeP[j] += en.Er[j] * en.Er[j] + en.Ei[j] * en.Ei[j];
      }
    }
  });
  if (!ok) return null;
  const res: LaneMeans[] = [];
  for (let l = 0; l < L; l++) {
    let dom = 0;
    for (let m = 1; m < M; m++) if (modeP[l * M + m] > modeP[l * M + dom]) dom = m;
    res.push({
      external_W: ext[l] / count,
      laserOutput_W: out[l] / count,
      intracavity_W: ic[l] / count,
      dominant: dom,
      modePowers_W: Array.from(modeP.subarray(l * M, (l + 1) * M), (v) => v / count),
      returned_W: ret[l] / count,
    });
  }
  return res;
}

/** Time for a suppressed mode to regrow from noise, the slow end of docs/model.md §4's 5-15 us. */
export const STATIC_REGROWTH_s = 16e-6;

/** Most positions the automatic static reference refines to. */
export const STATIC_MAX_POSITIONS = 8192;

/** The mean of two neighbours' settled means (a midpoint on a smooth stretch of the static curve). */
function averageMeans(a: LaneMeans, b: LaneMeans): LaneMeans {
  return {
    external_W: 0.5 * (a.external_W + b.external_W),
    laserOutput_W: 0.5 * (a.laserOutput_W + b.laserOutput_W),
    intracavity_W: 0.5 * (a.intracavity_W + b.intracavity_W),
    dominant: a.dominant,
    modePowers_W: a.modePowers_W.map((v, m) => 0.5 * (v + b.modePowers_W[m])),
    returned_W: 0.5 * (a.returned_W + b.returned_W),
  };
}

/** The static reference: settled power versus mirror position over half a wavelength. */
export interface StaticResult {
  positions_m: number[];
  up: LaneMeans[];
  down: LaneMeans[];
  converged: boolean;
  /** (N, mean external power) of each refinement level */
  levels: { positions: number; mean_W: number }[];
  /**
   * the levels' limit by Aitken's delta-squared extrapolation (docs/model.md §4.1), when the
   * refinement stopped on it: the mean, its error (the change between the last two
   * extrapolations) and the ratio of successive level differences; null otherwise
   */
  extrapolated: StaticExtrapolation | null;
  /** settled states (up branch) per position, for starting driven lanes (null once sent between threads) */
  store: LaneEngine | null;
  steps: number;
  laneSteps: number;
  worstBalance: number;
  mismatch: number;
  failed: string | null;
}

export interface StaticOptions {
  /**
   * 'auto' refines from 16 positions, doubling until the positions resolve the external
   * resonance (at least two per width lambda / (2 F)) and the mean moves by < 1 %
   * (at most 8192); a number is used as is
   */
  positions: 'auto' | number;
  /** finesse of the external cavity, for the resolution requirement of 'auto' */
  finesse?: number;
  /** settle time per position when continuing from a neighbour, s */
  settle_s: number;
  dt: number;
  halfWavelength_m: number;
  /** the mirror's rest position (drive offset), m */
  rest_m: number;
  initial: FreeRunningResult;
  rng: NormalSource;
  /** which engine settles the positions (the fast one has the same steady states) */
  engine: EngineKind;
  /**
   * once the grid holds a position per resonance width (N >= F), refine only where the curve
   * changes (docs/model.md §4.1): a midpoint is settled when its
   * two neighbours differ in gap power by more than STATIC_ACTIVE_REL of the mean level, in
   * dominant mode, or between their up and down branches; elsewhere it takes the mean of its
   * neighbours (and the left neighbour's settled state)
   */
  adaptive?: boolean;
  /** told the fraction of the refinement done (by level: log2 N of log2 STATIC_MAX_POSITIONS) */
  onProgress?: (fraction: number) => void;
}

/** The limit of the static levels as N grows, docs/model.md §4.1. */
export interface StaticExtrapolation {
  mean_W: number;
  error_W: number;
  ratio: number;
}

/**
 * Aitken's delta-squared limit of the last three levels (m0, m1, m2 at N, 2N, 4N): when the
 * differences shrink geometrically with a ratio q in (0, STATIC_AITKEN_MAX_RATIO], the
 * limit is m2 + d2 q / (1 - q) with d2 = m2 - m1; null when the levels do not (yet) fall
 * or rise geometrically.
 */
export function aitkenLimit(levels: { mean_W: number }[]): { limit: number; ratio: number } | null {
  if (levels.length < 3) return null;
  const [m0, m1, m2] = levels.slice(-3).map((l) => l.mean_W);
  const d1 = m1 - m0;
  const d2 = m2 - m1;
  if (d1 === 0) return null;
  const q = d2 / d1;
  if (!(q > 0 && q <= STATIC_AITKEN_MAX_RATIO)) return null;
  return { limit: m2 + (d2 * q) / (1 - q), ratio: q };
}

/** Largest ratio of successive level differences the extrapolation trusts (a ratio near 1 is no convergence). */
export const STATIC_AITKEN_MAX_RATIO = 0.8;

/** Difference between neighbouring static positions (relative to the curve's mean) that makes their midpoint worth settling. */
export const STATIC_ACTIVE_REL = 0.02;

/**
 * Most lanes in one engine of the static refinement: the round-trip engine steps 0.78 M
 * lane-steps/s at 256 lanes and 0.52 M at 4096 (the demo laser, one core), its delay lines
 * falling out of the cache.
 */
export const STATIC_CHUNK_LANES = 256;

/**
 * Settle the system with the actuator off at N positions over half a wavelength,
 * docs/model.md §4. Level 0: chains of consecutive positions, each position started
 * from the settled state of its neighbour (up, then back down), with a warm-up of three
 * positions before each chain so no chain starts cold. Refinement (auto): each new
 * midpoint starts from its left neighbour's up state and its right neighbour's down
 * state, all midpoints and both branches stepped as independent lanes, in engines of at
 * most STATIC_CHUNK_LANES lanes.
 */
export function staticReference(p: CoupledParams, o: StaticOptions): StaticResult {
  const still: MirrorMotion = { position: () => o.rest_m, velocity: () => 0 };
  // A mode switched off near a resonance regrows from noise in 5-15 us (docs/model.md §4): a coarse
  // grid given by number moves the mirror far between positions, so each position gets at
  // least a regrowth time's share (16 us x 64 / N, at most 16 us); the automatic grid is
  // fine enough (thousands of positions) that the walk itself is slow.
  const perPosition_s =
    o.positions === 'auto'
      ? o.settle_s
      : Math.max(
          o.settle_s,
          Math.min(STATIC_REGROWTH_s, (STATIC_REGROWTH_s * 64) / Math.max(1, o.positions as number)),
        );
  const contSteps = Math.max(50, Math.ceil(perPosition_s / o.dt));
  const avgSteps = Math.max(10, Math.floor(contSteps / 4));
  const maxExc = Math.abs(o.rest_m) + o.halfWavelength_m * 1.01;
  const auto = o.positions === 'auto';
  const N0 = auto ? 16 : Math.max(4, Math.floor(o.positions as number));
  let steps = 0;
  let laneSteps = 0;
  let worst = 0;
  let mismatchSum = 0;
  let mismatchCount = 0;
  const record = (e: LaneEngine) => {
    for (let l = 0; l < e.L; l++) {
      const b = balanceErrors(e, l);
      worst = Math.max(worst, b.laser, b.external);
      mismatchSum += b.mismatch;
      mismatchCount++;
    }
  };

  // ---- level 0: chains
  const chainLen = Math.min(16, N0);
  const K = Math.ceil(N0 / chainLen);
  const warm = Math.min(3, N0 - 1);
  /** A still-mirror lane engine of the static scan over `lanes` lanes (steady-state pulling on). */
  const laneEngine = (lanes: number) =>
    createLaneEngine(
      { kind: o.engine, dt: o.dt, maxExcursion_m: maxExc, pullCorrection: true },
      p,
      lanes,
      still,
      o.rng,
    );
  const chain = laneEngine(K);
  chain.setLaserState(o.initial.Er, o.initial.Ei, o.initial.N);
  const pos = (j: number, N: number) => (((j % N) + N) % N) * (o.halfWavelength_m / N);
  let positions = Array.from({ length: N0 }, (_, j) => pos(j, N0));
  let up: (LaneMeans | null)[] = new Array(N0).fill(null);
  let down: (LaneMeans | null)[] = new Array(N0).fill(null);
  let store = laneEngine(N0);
  let storeDown = laneEngine(N0);
  const fail = (msg: string): StaticResult => ({
    positions_m: positions,
    up: [],
    down: [],
    converged: false,
    levels: [],
    extrapolated: null,
    store,
    steps,
    laneSteps,
    worstBalance: worst,
    mismatch: 0,
    failed: msg,
  });
  // walk: warm-up positions, then the chain's own positions up, then back down
  const walk: { offsetIndex: number; record: 'up' | 'down' | null }[] = [];
  for (let w = warm; w >= 1; w--) walk.push({ offsetIndex: -w, record: null });
  for (let i = 0; i < chainLen; i++) walk.push({ offsetIndex: i, record: 'up' });
  for (let i = chainLen - 2; i >= 0; i--) walk.push({ offsetIndex: i, record: 'down' });
  let first = true;
  for (const stepSpec of walk) {
    for (let k = 0; k < K; k++) chain.offset[k] = pos(k * chainLen + stepSpec.offsetIndex, N0);
    const n = first ? contSteps * 4 : contSteps;
    first = false;
    chain.resetEnergy();
    const means = settleLanes(chain, n, avgSteps);
    steps += n;
    laneSteps += n * K;
    if (means === null) return fail(chain.failMessage);
    record(chain);
    if (stepSpec.record === null) continue;
    for (let k = 0; k < K; k++) {
      const j = k * chainLen + stepSpec.offsetIndex;
      if (j >= N0) continue;
      if (stepSpec.record === 'up') {
        up[j] = means[k];
        store.copyLane(chain, k, j);
        if (stepSpec.offsetIndex === chainLen - 1 || j === N0 - 1) {
          down[j] = means[k];
          storeDown.copyLane(chain, k, j);
        }
      } else {
        down[j] = means[k];
        storeDown.copyLane(chain, k, j);
      }
    }
  }
  // chains that ended early (last chain shorter than chainLen) have their down values filled by the walk above
  for (let j = 0; j < N0; j++) {
    if (down[j] === null) down[j] = up[j];
  }
  const meanOf = (u: (LaneMeans | null)[], d: (LaneMeans | null)[]) =>
    u.reduce((s, v, i) => s + 0.5 * ((v as LaneMeans).external_W + (d[i] as LaneMeans).external_W), 0) /
    u.length;
  const levels = [{ positions: N0, mean_W: meanOf(up, down) }];
  let converged = !auto;
  let extrapolated: StaticExtrapolation | null = null;
  let lastLimit: number | null = null;
  // ---- refinement by midpoints
  if (auto) {
    let N = N0;
    // two positions per resonance width lambda / (2 F) over half a wavelength: N >= 2 F
    const resolved = Math.min(
      STATIC_MAX_POSITIONS,
      Math.max(64, 2 * (o.finesse !== undefined && Number.isFinite(o.finesse) ? o.finesse : 1)),
    );
    // refine everywhere until the grid holds one position per resonance width (N >= F), so
    // no resonance can hide between two positions; adaptively after that
    const fineEnough = o.finesse !== undefined && Number.isFinite(o.finesse) ? o.finesse : Infinity;
    while (N < STATIC_MAX_POSITIONS) {
      const upL = up as LaneMeans[];
      const downL = down as LaneMeans[];
      const level = meanOf(up, down);
      // which intervals (j, j + 1) get a settled midpoint
      const active: number[] = [];
      for (let j = 0; j < N; j++) {
        const k = (j + 1) % N;
        const busy =
          !o.adaptive ||
          N < fineEnough ||
          Math.abs(upL[j].external_W - upL[k].external_W) > STATIC_ACTIVE_REL * level ||
          Math.abs(downL[j].external_W - downL[k].external_W) > STATIC_ACTIVE_REL * level ||
          Math.abs(upL[j].external_W - downL[j].external_W) > STATIC_ACTIVE_REL * level ||
          Math.abs(upL[k].external_W - downL[k].external_W) > STATIC_ACTIVE_REL * level ||
          upL[j].dominant !== upL[k].dominant ||
          downL[j].dominant !== downL[k].dominant;
        if (busy) active.push(j);
      }
      const A = active.length;
      // the midpoints' lanes (up branch g = a, down branch g = A + a) in engines of at most
      // STATIC_CHUNK_LANES lanes each, stepped one after the other: the lanes are independent,
      // and a few hundred lanes' delay lines stay in the processor's cache where thousands do not
      const chunks: LaneEngine[] = [];
      for (let g0 = 0; g0 < 2 * A; g0 += STATIC_CHUNK_LANES)
        chunks.push(laneEngine(Math.min(STATIC_CHUNK_LANES, 2 * A - g0)));
      const midLane = (g: number): [LaneEngine, number] => [
        chunks[Math.floor(g / STATIC_CHUNK_LANES)],
        g % STATIC_CHUNK_LANES,
      ];
      active.forEach((j, a) => {
        const [eu, lu] = midLane(a);
        const [ed, ld] = midLane(A + a);
        eu.copyLane(store, j, lu); // up branch from the left neighbour
        ed.copyLane(storeDown, (j + 1) % N, ld); // down branch from the right neighbour
        eu.offset[lu] = (j + 0.5) * (o.halfWavelength_m / N);
        ed.offset[ld] = eu.offset[lu];
      });
      const means: LaneMeans[] = [];
      for (const c of chunks) {
        c.resetEnergy();
        const m = settleLanes(c, contSteps, avgSteps);
        steps += contSteps;
        laneSteps += contSteps * c.L;
        if (m === null) return fail(c.failMessage);
        record(c);
        means.push(...m);
      }
      const slotOf = new Int32Array(N).fill(-1);
      active.forEach((j, a) => (slotOf[j] = a));
      const N2 = 2 * N;
      const up2: LaneMeans[] = new Array(N2);
      const down2: LaneMeans[] = new Array(N2);
      const store2 = laneEngine(N2);
      const storeDown2 = laneEngine(N2);
      for (let j = 0; j < N; j++) {
        const k = (j + 1) % N;
        up2[2 * j] = upL[j];
        down2[2 * j] = downL[j];
        store2.copyLane(store, j, 2 * j);
        storeDown2.copyLane(storeDown, j, 2 * j);
        const a = slotOf[j];
        if (a >= 0) {
          up2[2 * j + 1] = means[a];
          down2[2 * j + 1] = means[A + a];
          store2.copyLane(...midLane(a), 2 * j + 1);
          storeDown2.copyLane(...midLane(A + a), 2 * j + 1);
        } else {
          // a smooth stretch: the midpoint is the mean of its neighbours
          up2[2 * j + 1] = averageMeans(upL[j], upL[k]);
          down2[2 * j + 1] = averageMeans(downL[j], downL[k]);
          store2.copyLane(store, j, 2 * j + 1);
          storeDown2.copyLane(storeDown, k, 2 * j + 1);
        }
      }
      N = N2;
      up = up2;
      down = down2;
      store = store2;
      storeDown = storeDown2;
      positions = Array.from({ length: N }, (_, j) => pos(j, N));
      const mean = meanOf(up, down);
      const prev = levels[levels.length - 1].mean_W;
      levels.push({ positions: N, mean_W: mean });
      o.onProgress?.(Math.log2(N / N0) / Math.log2(STATIC_MAX_POSITIONS / N0));
      if (N >= resolved && Math.abs(mean - prev) <= 0.01 * Math.abs(mean)) {
        converged = true;
        break;
      }
      // the levels of a scan whose positions settle from their neighbours creep towards the
      // quasi-static limit geometrically (docs/model.md §4.1): two successive Aitken limits
      // that agree within 1 % end the refinement, and the limit is the static mean
      const lim = aitkenLimit(levels);
      if (N >= resolved && lim !== null && lastLimit !== null) {
        const err = Math.abs(lim.limit - lastLimit);
        if (err <= 0.01 * Math.abs(lim.limit)) {
          converged = true;
          extrapolated = { mean_W: lim.limit, error_W: err, ratio: lim.ratio };
          break;
        }
      }
      lastLimit = lim === null ? null : lim.limit;
    }
  }
  return {
    positions_m: positions,
    up: up as LaneMeans[],
    down: down as LaneMeans[],
    converged,
    levels,
    extrapolated,
    store,
    steps,
    laneSteps,
    worstBalance: worst,
    mismatch: mismatchCount > 0 ? mismatchSum / mismatchCount : 0,
    failed: null,
  };
}
