/**
 * One run: plan -> execute -> summarise. The plan fixes the engine, the step, the windows
 * and the rest offsets (after the free-running and static references, computed here or
 * reused); execute steps the driven run; summariseRun (analysis room) turns all of it into
 * the summary of CONTRACT.md. The problem (scenario) says what to solve,
 * the engine how; the result carries provenance (scenario hash, engine, steps, status).
 * A numerical failure is data (status 'numerical-failure'), not an exception.
 */
import { createHash } from 'node:crypto';
import type { EngineChoice, Scenario } from '../scenario/schema';
import type { RunArtifacts, SpectraSet } from '../results/artifacts';
import type { Derived, Warning } from '../results/summary';
import { MAX_DRIVE_OFFSETS, MIN_DETECTION_WINDOWS } from '../results/limits';
import { TOOL_VERSION } from '../version';
import { deriveAll } from '../physics/derive';
import type { CoupledParams } from '../physics/coupled/params';
import type { EngineKind } from '../physics/coupled/factory';
import { createDrive, peakSpeed } from '../physics/drive';
import { createRng, Rng } from '../numerics/rng';
import { stratifiedMeanAndStderr, refineStrata, stratifiedDraw } from '../analysis/stratified';
import { driveHarmonics } from '../analysis/harmonics';
import { driveMoves, returnedLightSpread_Hz, staticCurveOf, summariseRun } from '../analysis/summarise-run';
import {
  freeRunning,
  freeRunningRoundTrip,
  FreeRunningResult,
  STATIC_REGROWTH_s,
  staticReference,
  StaticResult,
} from './references';
import { combineBudgets, peakIntensityOf } from './budget';
import type { SpeedCurve } from '../results/speed-curve';
import { FREE_START_MEMORY_TIMES, memoryTime } from './speed-curve';
import { slowDriveRun } from './slow-drive';
import type { SlowDriveRunInput } from './slow-drive';
import { drivenRun, DrivenResult } from './driven';
import { drivenAdiabatic } from './adiabatic';
import {
  planEngines,
  EnginePlan,
  DrivenEngine,
  EngineRequest,
  DEPRECATED_ENGINE_NAMES,
  engineName,
} from './engine-choice';

export type { EngineChoice };

export interface RunOptions {
  engine?: EngineChoice;
  seed?: number;
  /** called now and then with the fraction done (0..1) and what is being done */
  onProgress?: (fraction: number, label: string) => void;
  /** references computed earlier for a scenario with the same referenceKey */
  references?: References;
  /** a speed curve computed earlier (reused and extended when its key matches) */
  speedCurve?: SpeedCurve | null;
  /** the free-running reference computed earlier for this scenario and seed (computeFreeRunning) */
  freeRunning?: { free: FreeRunningResult; staticKind: EngineKind };
}

/** Free-running and static references; reusable across sweep points with the same referenceKey. */
export interface References {
  key: string;
  data: { free: FreeRunningResult; stat: StaticResult | null; wall_s: number; staticEngine: string };
}

/**
 * The part of a scenario the references depend on: the laser, the external cavity, the
 * rest position, the static settings, the step and the seed; not the drive's amplitude,
 * frequency or waveform, nor the analysis.
 */
export function referenceKey(s: Scenario, seed = s.simulation.seed, staticEngine = 'auto'): string {
  const relevant = {
    staticEngine,
    laser: s.laser,
    external: s.external ?? null,
    offset: s.drive.offset,
    static_positions: s.simulation.static_positions,
    substeps: s.simulation.substeps,
    seed,
  };
  return createHash('sha256')
    .update(JSON.stringify(relevant, (_k, v) => (v === Infinity ? 'flat' : v)))
    .digest('hex');
}

/** Settle time per static position when continuing from a neighbour, s. */
export function staticSettleTime(p: CoupledParams): number {
  const extPhoton = p.hasExternal ? p.roundTripExternal_s / Math.max(1e-12, 1 - (p.r2 * p.r3eff) ** 2) : 0;
  const response = Math.max(1 / p.gammaC, extPhoton, p.classA ? 0 : p.tauN);
  return Math.min(40e-6, Math.max(4e-6, 40 * response));
}

/**
 * Settle time per static position on the round-trip engine, s: 10 response times (the
 * photon lifetimes of laser and gap, tau_N), at most 10 us (docs/model.md §4.1). Each
 * position starts from its settled neighbour a fraction of a resonance width away, so
 * the transient left is small; the refinement's convergence test (the mean moving < 1 %
 * per doubling) guards the mean. The modal engines keep 40 response times (they are
 * 10-40 times cheaper per simulated second).
 */
export function roundTripStaticSettleTime(p: CoupledParams): number {
  const extPhoton = p.hasExternal ? p.roundTripExternal_s / Math.max(1e-12, 1 - (p.r2 * p.r3eff) ** 2) : 0;
  const response = Math.max(1 / p.gammaC, extPhoton, p.tauN);
  return Math.min(10e-6, 10 * response);
}

/** Which engine settles the static reference: the exact one when the exact engine is requested, else the planner's choice. */
export function staticEngineRequest(s: Scenario, opts: RunOptions): EngineRequest {
  const r = opts.engine ?? s.simulation.engine;
  const n = DEPRECATED_ENGINE_NAMES[r] ?? r;
  return n === 'modal' || n === 'meanfield' || n === 'roundtrip' || n === 'adiabatic' || n === 'speedcurve'
    ? n
    : 'auto';
}

/** The engine (kind and step) that settles the references of `s`: the planner's static choice. */
function staticPlan(s: Scenario, opts: RunOptions) {
  const { derived, params } = deriveAll(s);
  const plan = planEngines(
    s,
    params,
    derived.finesse_external,
    staticSettleTime(params),
    staticEngineRequest(s, opts),
  );
  return { derived, params, kind: plan.static.kind, dt: plan.static.dt };
}

/** The free-running reference and the engine that settles the static one. */
export function computeFreeRunning(
  s: Scenario,
  opts: RunOptions = {},
): { free: FreeRunningResult; staticKind: EngineKind } {
  const seed = opts.seed ?? s.simulation.seed;
  const { params, kind } = staticPlan(s, opts);
  const rng = createRng(seed).fork(1);
  const free = kind === 'roundtrip' ? freeRunningRoundTrip(params, rng) : freeRunning(params, rng);
  return { free, staticKind: kind };
}

/** The static reference from the free-running state (null without an external cavity). */
export function computeStatic(
  s: Scenario,
  free: FreeRunningResult,
  opts: RunOptions = {},
): StaticResult | null {
  const seed = opts.seed ?? s.simulation.seed;
  const { derived, params, kind, dt } = staticPlan(s, opts);
  if (!params.hasExternal || !Number.isFinite(params.gammaC)) return null;
  return staticReference(params, {
    positions: s.simulation.static_positions,
    finesse: derived.finesse_external,
    settle_s: kind === 'roundtrip' ? roundTripStaticSettleTime(params) : staticSettleTime(params),
    dt,
    engine: kind,
    adaptive: kind === 'roundtrip',
    halfWavelength_m: s.laser.wavelength / 2,
    rest_m: s.drive.offset,
    initial: free,
    rng: createRng(seed).fork(2),
    onProgress: opts.onProgress ? (f) => opts.onProgress?.(f, 'static reference') : undefined,
  });
}

export function computeReferences(s: Scenario, opts: RunOptions = {}): References {
  const t0 = Date.now();
  const seed = opts.seed ?? s.simulation.seed;
  const { free, staticKind } = opts.freeRunning ?? computeFreeRunning(s, opts);
  opts.onProgress?.(0, 'static reference');
  const stat = computeStatic(s, free, opts);
  return {
    key: referenceKey(s, seed, staticEngineRequest(s, opts)),
    data: { free, stat, wall_s: (Date.now() - t0) / 1000, staticEngine: staticKind },
  };
}

/** What a run decided before stepping: engine, step, windows, rest offsets, or why it cannot run. */
export interface RunPlan {
  seed: number;
  engine: DrivenEngine;
  /** the engine's public name (docs/model.md §3.7) */
  engineName: string;
  engineReason: string;
  warnings: Warning[];
  /** time step of the driven run, s */
  dt: number;
  settle_s: number;
  analysed_s: number;
  settleSteps: number;
  analysedSteps: number;
  /** rest offsets of the first batch of lanes relative to drive.offset, m (stratified random, docs/model.md §4.2) */
  laneOffsets_m: number[];
  /** drive periods analysed at each offset (null for a still mirror) */
  periods: number | null;
  /** relative standard error of the driven mean gap power at which offsets stop being added */
  targetError: number;
  /** lane-step budget of the driven run, all batches */
  maxLaneSteps: number;
  /** whether a driven run is to be stepped (an external cavity, a lasing reference, no failure) */
  drives: boolean;
  /** failure known before stepping: the static reference failed or the step budget refuses the run */
  failure: string | null;
  /** whether the driven figures come from the round-trip engine (directly or through the static and speed curves) */
  fullBand: boolean;
  /** the slow-drive path's state (docs/model.md §3.6): its speed curve, its note for the reason */
  slow: { curve: SpeedCurve | null; note: string; prior: SpeedCurve | null };
}

/**
 * Plan the driven run: the engine and its step (engine-choice), the settle and analysed
 * windows (whole drive periods holding enough detection windows), the lanes' rest offsets,
 * and the step budget check.
 */
export function planRun(
  s: Scenario,
  params: CoupledParams,
  derived: Derived,
  refs: References,
  opts: RunOptions,
): RunPlan {
  const seed = opts.seed ?? s.simulation.seed;
  const requested = opts.engine ?? s.simulation.engine;
  const { stat } = refs.data;
  const tContStatic = staticSettleTime(params);
  const memory_s = memoryTime(params, refs.data.free);
  const engines: EnginePlan = planEngines(
    s,
    params,
    derived.finesse_external,
    tContStatic,
    requested,
    memory_s,
  );
  const engine = engines.driven.kind;
  const warnings: Warning[] = [];
  if (engines.driven.warning) warnings.push({ code: 'engine-validity', message: engines.driven.warning });
  if (engines.couplingWarning) warnings.push({ code: 'engine-coupling', message: engines.couplingWarning });
  if (engine === 'adiabatic' && params.couplingAt !== null)
    warnings.push({
      code: 'tilt-not-followed',
      message:
        'the adiabatic path follows the still-mirror curve, which holds the coupling at the rest tilt: actuator.tilt_per_stroke is not followed (docs/model.md §2.5); choose a time-stepping engine',
    });
  const deprecated = DEPRECATED_ENGINE_NAMES[requested];
  if (deprecated)
    warnings.push({
      code: 'engine-name',
      message: `engine '${requested}' is now called '${deprecated}'; the old name works for this release only`,
    });
  const plan: RunPlan = {
    seed,
    engine,
    engineName: engineName(engine),
    engineReason: `${engines.driven.reason}; static reference: ${engineName(refs.data.staticEngine as EngineKind)} engine`,
    warnings,
    dt: engine === 'adiabatic' || engine === 'speedcurve' ? engines.basis.exactStep_s : engines.driven.dt,
    settle_s: 0,
    analysed_s: 0,
    settleSteps: 0,
    analysedSteps: 0,
    laneOffsets_m: [],
    periods: null,
    targetError: s.analysis.target_error,
    maxLaneSteps: s.simulation.max_steps,
    drives: false,
    failure: stat && stat.failed ? `static reference: ${stat.failed}` : null,
    slow: { curve: null, note: '', prior: opts.speedCurve ?? null },
    fullBand:
      engine === 'roundtrip' ||
      ((engine === 'speedcurve' || engine === 'adiabatic') && refs.data.staticEngine === 'roundtrip'),
  };
  if (plan.failure !== null || !params.hasExternal || !Number.isFinite(params.gammaC)) return plan;
  // the lanes start from settled static states (modal engines: one drive period, both
  // turning points, and a few response times bring them to the periodic regime) or from the
  // free-running state (round-trip engine: at least LANE_SETTLE_FROM_FREE_s, and the drive
  // period only up to four memory times, docs/model.md §4.2)
  const w = drivenWindows(s, engine, tContStatic, memory_s);
  plan.settle_s = w.settle_s;
  plan.analysed_s = w.analysed_s;
  plan.periods = w.periods;
  plan.settleSteps = Math.ceil(plan.settle_s / plan.dt);
  plan.analysedSteps = Math.ceil(plan.analysed_s / plan.dt);
  const lanes = s.simulation.drive_offsets;
  const laneSteps = batchLaneSteps(plan, lanes);
  if (laneSteps > s.simulation.max_steps) {
    plan.failure = `the driven run would take ${laneSteps.toExponential(2)} lane-steps, above simulation.max_steps = ${s.simulation.max_steps.toExponential(2)}; shorten simulation.periods, or let the engine choice (simulation.engine: auto) pick a faster engine`;
    return plan;
  }
  plan.laneOffsets_m = stratifiedDraw(lanes, s.laser.wavelength / 2, offsetRng(seed));
  plan.drives = true;
  return plan;
}

/**
 * The settle and analysed windows of a driven run, s, and its analysed periods (null for a
 * still mirror): the settle one drive period and a few static response times; lanes that
 * start from the free-running state (lanesIndependent) settle at least
 * LANE_SETTLE_FROM_FREE_s, and of a drive period longer than FREE_START_MEMORY_TIMES memory
 * times (memory_s, when given) only those (docs/model.md §4.2);
 * the analysed window whole drive periods holding MIN_DETECTION_WINDOWS detection windows
 * (the first fills, then the rest count), at least simulation.periods.
 */
export function drivenWindows(
  s: Scenario,
  engine: DrivenEngine,
  tContStatic: number,
  memory_s: number | null = null,
): { settle_s: number; analysed_s: number; periods: number | null } {
  const f = driveMoves(s.drive) ? s.drive.frequency : null;
  const independent = lanesIndependent(engine);
  // a lane started from the free-running state forgets its start within a few memory times
  // (docs/model.md §4.2): a drive period longer than that need not be stepped to settle
  const driveSettle =
    f === null
      ? 0
      : independent && memory_s !== null
        ? Math.min(1 / f, FREE_START_MEMORY_TIMES * memory_s)
        : 1 / f;
  const settle_s =
    s.simulation.settle === 'auto'
      ? Math.max(3 * tContStatic, driveSettle, independent ? LANE_SETTLE_FROM_FREE_s : 0)
      : s.simulation.settle;
  const minWindow = MIN_DETECTION_WINDOWS / s.analysis.detection_bandwidth;
  if (f) {
    const periods = Math.max(s.simulation.periods, Math.ceil(minWindow * f));
    return { settle_s, analysed_s: periods / f, periods };
  }
  return { settle_s, analysed_s: Math.max(minWindow, 20 * tContStatic), periods: null };
}

/** The random stream the rest offsets are drawn from (first batch and every refinement, in order). */
function offsetRng(seed: number): Rng {
  return createRng(seed).fork(4);
}

/**
 * Settle time of a driven lane started from the free-running state, s: two regrowth times
 * of a suppressed mode (docs/model.md §4.2), so the modes' competition under the moving
 * mirror has found its periodic regime before the analysed window opens.
 */
export const LANE_SETTLE_FROM_FREE_s = 2 * STATIC_REGROWTH_s;

/**
 * Whether the driven lanes are independent of each other (docs/model.md §4.2): each starts
 * from the free-running state and draws its own noise stream, so any grouping of lanes
 * into engines, on any thread, gives the same result. On the round-trip engine, where a
 * lane is costly enough that the static reference and the lanes are worth spreading over
 * threads (parallel-run.ts).
 */
export function lanesIndependent(engine: DrivenEngine): boolean {
  return engine === 'roundtrip';
}

/** Lanes per engine when the lanes are independent: a batch's groups are what threads share out. */
export const LANE_GROUP = 4;

/** The lanes of a batch of n, in groups of LANE_GROUP (the last may be smaller), as indices. */
export function laneGroups(n: number): number[][] {
  const groups: number[][] = [];
  for (let i = 0; i < n; i += LANE_GROUP)
    groups.push(Array.from({ length: Math.min(LANE_GROUP, n - i) }, (_, k) => i + k));
  return groups;
}

/** The noise stream of lane `index` of batch `batch` when the lanes run alone. */
function laneRng(seed: number, batch: number, index: number): Rng {
  return createRng(seed)
    .fork(3)
    .fork(batch + 1)
    .fork(index + 1);
}

/** Lane-steps one batch of `lanes` offsets costs (the adiabatic path steps no fields). */
export function batchLaneSteps(plan: RunPlan, lanes: number): number {
  return plan.engine === 'adiabatic' || plan.engine === 'speedcurve'
    ? 0
    : (plan.settleSteps + plan.analysedSteps) * lanes;
}

/** Relative standard error of the mean gap power over the offsets of a driven result (Infinity if unknown). */
export function relativeStderr(driven: DrivenResult): number {
  const ordered = [...driven.offsets].sort((a, b) => a.offset_m - b.offset_m);
  const { mean, stderr } = stratifiedMeanAndStderr(ordered.map((o) => o.external.mean));
  if (stderr === null || !Number.isFinite(stderr)) return Infinity;
  if (stderr === 0) return 0;
  return stderr / Math.abs(mean);
}

/**
 * Batches of lanes as one driven result: the offsets of all, sorted by position; traces and
 * spectra of the first batch (its lane 0); the worst balance errors; the mismatch and the
 * returned-field ratio averaged over lanes; steps summed.
 */
export function mergeBatches(batches: DrivenResult[]): DrivenResult {
  if (batches.length === 1) return batches[0];
  const first = batches[0];
  const failedBatch = batches.find((b) => b.failed);
  if (failedBatch) return failedBatch;
  const lanes = batches.map((b) => b.offsets.length);
  const total = lanes.reduce((a, b) => a + b, 0);
  const weighted = (pick: (b: DrivenResult) => number) =>
    batches.reduce((a, b, k) => a + pick(b) * lanes[k], 0) / total;
  return {
    ...first,
    offsets: batches.flatMap((b) => b.offsets).sort((a, b) => a.offset_m - b.offset_m),
    balance: {
      laser: Math.max(...batches.map((b) => b.balance.laser)),
      external: Math.max(...batches.map((b) => b.balance.external)),
      mismatch: weighted((b) => b.balance.mismatch),
    },
    fieldRatio: Math.sqrt(weighted((b) => b.fieldRatio ** 2)),
    budget: combineBudgets(
      batches.map((b) => b.budget),
      lanes,
    ),
    steps: batches.reduce((a, b) => a + b.steps, 0),
    laneSteps: batches.reduce((a, b) => a + b.laneSteps, 0),
    failed: null,
  };
}

/** The driven result over every batch, and what ended the adding of offsets. */
export interface ConvergedRun {
  driven: DrivenResult;
  stoppedBy: 'target' | 'budget';
  /** relative standard error of the mean gap power at the end (Infinity if unknown) */
  relativeStderr: number;
}

/** One batch of rest offsets the converging loop asks to be stepped. */
export interface BatchRequest {
  offsets: number[];
  batch: number;
  label: string;
  /** the part [lo, lo + width) of the driven run's progress this batch fills */
  lo: number;
  width: number;
}

/**
 * The converging loop of the driven run (docs/model.md §3.6), as a generator that asks for
 * batches and is given their results: the first batch at the planned offsets, then, while
 * the relative standard error of the mean gap power is above the target, a batch doubling
 * the strata (one new offset in the empty half of each slice), as long as the lane-step
 * budget and MAX_DRIVE_OFFSETS allow. The same loop serves one thread (executeConverging)
 * and several (parallel-run.ts).
 */
export function* convergingBatches(
  s: Scenario,
  plan: RunPlan,
): Generator<BatchRequest, ConvergedRun, DrivenResult> {
  const half = s.laser.wavelength / 2;
  const rng = offsetRng(plan.seed);
  // replay the plan's draw on this stream, so that refinements continue the same sequence
  let offsets = stratifiedDraw(plan.laneOffsets_m.length, half, rng);
  const batches: DrivenResult[] = [];
  let used = 0;
  // progress: batch k fills [1 - 2^-k, 1 - 2^-(k+1)) of the driven part
  let batchOffsets = offsets;
  for (let k = 0; ; k++) {
    const label = k === 0 ? 'driven run' : `driven run, adding ${batchOffsets.length} offsets`;
    batches.push(yield { offsets: batchOffsets, batch: k, label, lo: 1 - 2 ** -k, width: 2 ** -(k + 1) });
    used += batchLaneSteps(plan, batchOffsets.length);
    const merged = mergeBatches(batches);
    if (merged.failed) return { driven: merged, stoppedBy: 'budget', relativeStderr: Infinity };
    const rel = relativeStderr(merged);
    // a target of 1 or more accepts any error, even the unknown error of a single offset
    if (rel <= plan.targetError || plan.targetError >= 1) {
      return { driven: merged, stoppedBy: 'target', relativeStderr: rel };
    }
    const next = offsets.length;
    if (used + batchLaneSteps(plan, next) > plan.maxLaneSteps || 2 * next > MAX_DRIVE_OFFSETS) {
      return { driven: merged, stoppedBy: 'budget', relativeStderr: rel };
    }
    batchOffsets = refineStrata(offsets, half, rng);
    offsets = [...offsets, ...batchOffsets];
  }
}

/** Step the planned run on this thread until its statistics converge (convergingBatches). */
export function executeConverging(
  s: Scenario,
  params: CoupledParams,
  derived: Derived,
  refs: References,
  plan: RunPlan,
  onProgress: (fraction: number, label: string) => void,
): ConvergedRun {
  const loop = convergingBatches(s, plan);
  let step = loop.next();
  while (!step.done) {
    const q = step.value;
    step = loop.next(
      executeRun(
        s,
        params,
        derived,
        refs,
        plan,
        q.offsets,
        (x) => onProgress(q.lo + q.width * x, q.label),
        q.batch,
      ),
    );
  }
  return step.value;
}

/** Largest excursion of a lane's mirror from the drive's zero over the whole run, m (sizes the engine's phase tables). */
function maxExcursion(drive: Scenario['drive'], half_m: number, duration_s: number): number {
  return (
    Math.abs(drive.offset) +
    half_m +
    drive.amplitude +
    drive.second_amplitude +
    Math.abs(drive.drift) * duration_s +
    5 * (drive.vibration?.rms ?? 0)
  );
}

/** The analysis settings every driven lane shares. */
function drivenCommon(s: Scenario, derived: Derived, refs: References, plan: RunPlan) {
  const { free, stat } = refs.data;
  const drive = s.drive;
  const f = driveMoves(drive) ? drive.frequency : null;
  const spread = Math.max(
    returnedLightSpread_Hz(derived.finesse_external, peakSpeed(drive), s.laser.wavelength),
    f ? 8 * f : 0,
    1e5,
  );
  const strongest = (powers: number[]) => powers.reduce((b, v, m) => (v > powers[b] ? m : b), 0);
  return {
    detectionBandwidth_Hz: s.analysis.detection_bandwidth,
    hopDwell_s: s.analysis.hop_dwell,
    hopMargin: s.analysis.hop_margin,
    driveFrequency_Hz: f,
    drivePhase_rad: drive.phase,
    traceBuckets: Math.floor(s.simulation.trace_points / 2),
    spectralSpread_Hz: spread,
    // mode slot of the optical spectrum: the strongest mode of the static reference (up
    // branch at position 0), or of the free-running laser when the lanes (or the slow
    // path's windows) start from it
    spectrumMode:
      lanesIndependent(plan.engine) || plan.engine === 'speedcurve' || !stat
        ? strongest(free.modePowers_W)
        : stat.up[0].dominant,
  };
}

/**
 * Driven lanes that are independent (lanesIndependent): lanes `indices` of batch `batch`,
 * from the free-running state, each on its own noise stream, so their results are the
 * same in whatever group and on whichever thread they run.
 */
export function executeLanes(
  s: Scenario,
  params: CoupledParams,
  derived: Derived,
  refs: References,
  plan: RunPlan,
  offsets_m: number[],
  batch: number,
  indices: number[],
  onProgress: (fraction: number) => void,
): DrivenResult {
  const half = s.laser.wavelength / 2;
  const rngs = indices.map((i) => laneRng(plan.seed, batch, i));
  return drivenRun(params, {
    engine: plan.engine as EngineKind,
    dt: plan.dt,
    motion: createDrive(s.drive, plan.seed),
    laneOffsets_m: offsets_m,
    start: null,
    initial: refs.data.free,
    settleSteps: plan.settleSteps,
    analysedSteps: plan.analysedSteps,
    ...drivenCommon(s, derived, refs, plan),
    // the engine draws from laneRngs alone; rng is the first of them, not a stream of its own
    rng: rngs[0],
    laneRngs: rngs,
    maxExcursion_m: maxExcursion(s.drive, half, plan.settle_s + plan.analysed_s),
    onProgress,
  });
}

/**
 * What the slow-drive path needs for one batch of lanes, on any thread (docs/model.md §3.6):
 * the stepping engines follow the scenario's request, the windows' noise the batch.
 */
export function slowInput(
  s: Scenario,
  params: CoupledParams,
  derived: Derived,
  refs: References,
  plan: RunPlan,
  laneOffsets_m: number[],
  batch: number,
): Omit<SlowDriveRunInput, 'prior' | 'onProgress'> {
  return {
    laneGroups: laneGroups(laneOffsets_m.length),
    batch,
    s,
    p: params,
    finesse: derived.finesse_external,
    regrowth_s: staticSettleTime(params),
    stat: refs.data.stat,
    free: refs.data.free,
    seed: plan.seed,
    requested: s.simulation.engine,
    laneOffsets_m,
    analysed_s: plan.analysed_s,
    common: drivenCommon(s, derived, refs, plan),
  };
}

/** Step the planned driven run (time-stepping engine or adiabatic path) for the given lanes; batch numbers the noise stream. */
export function executeRun(
  s: Scenario,
  params: CoupledParams,
  derived: Derived,
  refs: References,
  plan: RunPlan,
  laneOffsets_m: number[],
  onProgress: (fraction: number) => void,
  batch = 0,
): DrivenResult {
  const { free, stat } = refs.data;
  const drive = s.drive;
  const half = s.laser.wavelength / 2;
  const common = drivenCommon(s, derived, refs, plan);
  if (plan.engine === 'speedcurve' && stat) {
    // slow-drive path (docs/model.md §3.6): its own module, the same DrivenResult shape; the
    // speed curve is computed once and extended by later batches
    const slow = slowDriveRun({
      ...slowInput(s, params, derived, refs, plan, laneOffsets_m, batch),
      prior: plan.slow.curve ?? plan.slow.prior,
      onProgress,
    });
    plan.slow.curve = slow.curve;
    plan.slow.note = slow.note;
    plan.analysed_s = slow.analysed_s;
    return slow.driven;
  }
  if (plan.engine === 'adiabatic' && stat) {
    return drivenAdiabatic(params, stat, {
      ...common,
      motion: createDrive(drive, plan.seed),
      rest_m: drive.offset,
      laneOffsets_m,
      analysed_s: plan.analysed_s,
      halfWavelength_m: half,
      peakSpeed_m_s: peakSpeed(drive),
    });
  }
  if (lanesIndependent(plan.engine)) {
    const groups = laneGroups(laneOffsets_m.length);
    return mergeBatches(
      groups.map((indices, g) =>
        executeLanes(
          s,
          params,
          derived,
          refs,
          plan,
          indices.map((i) => laneOffsets_m[i]),
          batch,
          indices,
          (x) => onProgress((g + x) / groups.length),
        ),
      ),
    );
  }
  return drivenRun(params, {
    engine: plan.engine === 'adiabatic' || plan.engine === 'speedcurve' ? 'exact' : plan.engine,
    dt: plan.dt,
    motion: createDrive(drive, plan.seed),
    laneOffsets_m,
    start: stat && stat.store ? { store: stat.store, positions_m: stat.positions_m } : null,
    initial: free,
    settleSteps: plan.settleSteps,
    analysedSteps: plan.analysedSteps,
    ...common,
    // the first batch on stream 3 as before; later batches on their own streams, so no two lanes share noise
    rng: batch === 0 ? createRng(plan.seed).fork(3) : createRng(plan.seed).fork(3).fork(batch),
    maxExcursion_m: maxExcursion(drive, half, plan.settle_s + plan.analysed_s),
    onProgress,
  });
}

/** Run one scenario: plan, references (or reuse), driven run, summary and artifacts. */
export function runScenario(s: Scenario, opts: RunOptions = {}): RunArtifacts {
  const wall0 = Date.now();
  const seed = opts.seed ?? s.simulation.seed;
  const { derived, params } = deriveAll(s);
  const progress = opts.onProgress ?? (() => undefined);

  const reused =
    opts.references !== undefined &&
    opts.references.key === referenceKey(s, seed, staticEngineRequest(s, opts));
  const refs = reused
    ? opts.references!
    : computeReferences(s, { ...opts, seed, onProgress: (f) => progress(0.4 * f, 'references') });
  progress(0.4, 'driven run');

  const plan = planRun(s, params, derived, refs, { ...opts, seed });
  const converged = plan.drives
    ? executeConverging(s, params, derived, refs, plan, (x, label) => progress(0.4 + 0.6 * x, label))
    : null;
  const wall_s = (Date.now() - wall0) / 1000;
  return finishRun(s, refs, plan, converged, {
    wall_s,
    drivenWall_s: Math.max(1e-9, wall_s - (reused ? 0 : refs.data.wall_s)),
  });
}

/**
 * The summary and artifacts of a run from its references, plan and converged driven result
 * (the last, pure step of runScenario and of the threaded run).
 */
export function finishRun(
  s: Scenario,
  refs: References,
  plan: RunPlan,
  converged: ConvergedRun | null,
  time: { wall_s: number; drivenWall_s: number },
): RunArtifacts {
  const { derived, params } = deriveAll(s);
  const driven = converged ? converged.driven : null;
  if (plan.slow.note) plan.engineReason += plan.slow.note;
  const wall = time.wall_s;
  const { free, stat } = refs.data;
  const summary = summariseRun({
    scenario: s,
    derived,
    params,
    plan,
    free,
    stat,
    driven,
    convergence: converged
      ? { stoppedBy: converged.stoppedBy, relativeStderr: converged.relativeStderr }
      : null,
    toolVersion: TOOL_VERSION,
    timing: { wall_s: wall, drivenWall_s: time.drivenWall_s },
  });
  const ok = driven && !driven.failed ? driven : null;
  // power budget and peak intensities (docs/model.md §6)
  summary.budget = ok ? (ok.budget ?? null) : null;
  summary.peak_intensity = params.hasExternal
    ? peakIntensityOf(
        derived.beams,
        ok ? Math.max(...ok.offsets.map((o) => o.external.max)) : (summary.static?.external_W.max ?? NaN),
        ok
          ? Math.max(...ok.offsets.map((o) => o.intracavity.max))
          : (summary.static?.intracavity_W?.max ?? free.intracavity_W),
      )
    : null;
  const f = driveMoves(s.drive) ? s.drive.frequency : null;
  const spectra: SpectraSet | null = ok
    ? {
        rin: ok.rin,
        optical: ok.optical,
        drive_harmonics_Hz: f && ok.rin ? driveHarmonics(f, ok.rin.f_Hz[ok.rin.f_Hz.length - 1], 50) : [],
      }
    : null;
  return {
    summary,
    traces: ok ? ok.traces : null,
    spectra,
    static_curve: stat && !stat.failed ? staticCurveOf(stat) : null,
    speed_curve: plan.slow.curve,
  };
}
