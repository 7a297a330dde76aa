/**
 * An estimate of how long the driven runs of a scenario (or of every point of a sweep)
 * take, for planning a batch: the engine each run would use and its number of lane-steps
 * follow from the plan alone (planEngines and the settle and analysed times of runScenario),
 * and the engine's speed on this machine is measured by a short calibration run: the base
 * scenario's driven engine stepped for a fixed budget of CPU time (so other load on a shared
 * machine does not count; the estimate assumes a free core per worker thread). The free-running and
 * still-mirror references are not in the estimate (their adaptive position grid has no
 * step count known in advance); the caller says so.
 */
import type { Scenario } from '../scenario/schema';
import { deriveAll } from '../physics/derive';
import { createLaneEngine, type EngineKind } from '../physics/coupled/factory';
import { createDrive } from '../physics/drive';
import { createRng } from '../numerics/rng';
import type { CoupledParams } from '../physics/coupled/params';
import type { Derived } from '../results/summary';
import { driveMoves } from '../analysis/summarise-run';
import { planEngines } from './engine-choice';
import type { DrivenEngine } from './engine-choice';
import { drivenWindows, staticSettleTime } from './run';
import { planSlow, slowSpeedRange, windowSpan } from './slow-drive';
import { memoryTime, speedBaseLattice, speedPointCost, steppingEngineFor } from './speed-curve';

/** The step plan of one driven run. */
export interface DrivenStepPlan {
  engine: DrivenEngine | 'none';
  /** time step, s (0 for the adiabatic path and for no driven run; the slow path: its windows' engine's step) */
  dt_s: number;
  /**
   * lane-steps of the driven run's first batch: (settle + analysed steps) x rest positions;
   * on the slow path its turning-point windows x rest positions plus the speed curve's base
   * points (its refinement, known only once the base points are in, is not counted)
   */
  lane_steps: number;
  /** the engine that steps those lanes (the slow path: the engine of its windows) */
  stepping: EngineKind | null;
  /** the slow path's share: its windows on every rest offset, and the speed curve's base points */
  slow?: { windows_lane_steps: number; curve_base_lane_steps: number };
  modes: number;
}

/**
 * The engine and lane-steps of the driven run of `s`, as runScenario plans them (the
 * settle and analysed windows of drivenWindows), times simulation.drive_offsets lanes. The
 * adiabatic path steps no lanes; the slow path (docs/model.md §3.6) steps its turning-point
 * windows (planSlow, windowSpan) and its speed curve (speedBaseLattice, speedPointCost).
 * The memory time is taken at the single-mode estimate of the free-running power (the run
 * takes the settled one; the memory time depends on it only through a logarithm).
 */
export function drivenStepPlan(s: Scenario): DrivenStepPlan {
  const { derived, params } = deriveAll(s);
  if (!params.hasExternal || !Number.isFinite(params.gammaC))
    return { engine: 'none', dt_s: 0, lane_steps: 0, stepping: null, modes: params.M };
  const tStatic = staticSettleTime(params);
  const free = { intracavity_W: derived.free_running_estimate_W };
  const memory_s = memoryTime(params, free);
  const plan = planEngines(s, params, derived.finesse_external, tStatic, s.simulation.engine, memory_s);
  const kind = plan.driven.kind;
  if (kind === 'adiabatic') return { engine: kind, dt_s: 0, lane_steps: 0, stepping: null, modes: params.M };
  const w = drivenWindows(s, kind, tStatic, memory_s);
  if (kind === 'speedcurve')
    return { ...slowStepPlan(s, params, derived, free, memory_s, w.analysed_s), modes: params.M };
  const dt = plan.driven.dt;
  const laneSteps = (Math.ceil(w.settle_s / dt) + Math.ceil(w.analysed_s / dt)) * s.simulation.drive_offsets;
  return { engine: kind, dt_s: dt, lane_steps: laneSteps, stepping: kind, modes: params.M };
}

/** The slow path's first batch: its turning-point windows on every rest offset, and its speed curve's base points. */
function slowStepPlan(
  s: Scenario,
  params: CoupledParams,
  derived: Derived,
  free: { intracavity_W: number },
  memory_s: number,
  analysed_s: number,
): Omit<DrivenStepPlan, 'modes'> {
  const regrowth_s = staticSettleTime(params);
  const requested = s.simulation.engine;
  const engineAt = (v: number) =>
    steppingEngineFor(s, params, derived.finesse_external, regrowth_s, v, requested);
  const step = {
    drive: s.drive,
    seed: s.simulation.seed,
    memory_s,
    windowEngine: engineAt,
  };
  const slow = planSlow({
    ...step,
    driveFrequency_Hz: driveMoves(s.drive) ? s.drive.frequency : null,
    detectionBandwidth_Hz: s.analysis.detection_bandwidth,
    hopDwell_s: s.analysis.hop_dwell,
    analysed_s,
    halfWavelength_m: s.laser.wavelength / 2,
  });
  let windows = 0;
  let stepping: EngineKind | null = null;
  let dt = 0;
  for (let i = 0; i < slow.chosen.length; i++) {
    const span = windowSpan(step, slow, i);
    windows += span.laneSteps;
    stepping = span.eng.kind;
    dt = span.eng.dt;
  }
  const { vLo, vHi } = slowSpeedRange({ s, p: params, free });
  const ctx = { s, p: params, finesse: derived.finesse_external, regrowth_s, requested };
  let curve = 0;
  for (const k of speedBaseLattice(vLo, vHi)) curve += 2 * speedPointCost(ctx, k, memory_s);
  const slowSteps = {
    windows_lane_steps: Math.ceil(windows) * s.simulation.drive_offsets,
    curve_base_lane_steps: Math.ceil(curve),
  };
  return {
    engine: 'speedcurve',
    dt_s: dt,
    lane_steps: slowSteps.windows_lane_steps + slowSteps.curve_base_lane_steps,
    stepping,
    slow: slowSteps,
  };
}

/** Lane-steps per CPU second of one engine kind on the scenario's parameters, measured over about `budget_ms` of CPU time after a warm-up as long. */
export function calibrateLaneSteps(s: Scenario, kind: EngineKind, dt: number, budget_ms = 400): number {
  const { params } = deriveAll(s);
  const lanes = s.simulation.drive_offsets;
  const drive = createDrive(s.drive, s.simulation.seed);
  const engine = createLaneEngine(
    {
      kind,
      dt,
      maxExcursion_m:
        Math.abs(s.drive.offset) +
        s.laser.wavelength / 2 +
        2 * Math.abs(s.drive.amplitude) +
        2 * Math.abs(s.drive.second_amplitude),
    },
    params,
    lanes,
    drive,
    createRng(s.simulation.seed).fork(9),
  );
  // start from a lasing state so the arithmetic is that of a real run
  const M = params.M;
  const Er = new Float64Array(lanes * M).fill(1e-3);
  const Ei = new Float64Array(lanes * M);
  const N = new Float64Array(lanes).fill(1);
  engine.setLaserState(Er, Ei, N);
  const chunk = 200;
  // CPU time of this process, not wall time: other load on a shared machine must not make
  // the engine look slower than it is on a free core (the estimate assumes one per worker)
  const cpu = () => {
    const u = process.cpuUsage();
    return (u.user + u.system) / 1000;
  };
  // Warm-up as long as the measurement: the JIT's optimising tiers arrive late on the
  // round-trip engine (its first 0.4 s of CPU ran at a quarter of its settled speed on the
  // demo), and a run steps far longer than any warm-up.
  const stepFor = (ms: number): { steps: number; cpu_ms: number } => {
    const c0 = cpu();
    const w0 = performance.now();
    let steps = 0;
    while (cpu() - c0 < ms && performance.now() - w0 < 20 * ms) {
      engine.advance(chunk);
      steps += chunk;
    }
    return { steps, cpu_ms: Math.max(cpu() - c0, 1e-3) };
  };
  stepFor(budget_ms);
  const m = stepFor(budget_ms);
  return (m.steps * lanes) / (m.cpu_ms / 1000);
}

export interface RunTimeEstimate {
  /** estimated wall time of the driven runs, s, on one worker thread */
  driven_s: number;
  /** per engine: runs, lane-steps, measured lane-steps per second (the slow path: of the engine that steps its windows) */
  engines: { engine: string; runs: number; lane_steps: number; lane_steps_per_s: number | null }[];
  /** the calibration's own wall time, s */
  calibration_s: number;
}

/**
 * Estimated wall time of the driven runs of `points` (scenarios), one worker thread: for
 * each the step plan, divided by the lane-step rate of its engine measured once on the
 * first scenario using that engine (calibrateLaneSteps). Adiabatic runs count as 0 (they
 * step no lanes). The first batch of offsets only: the batches a run adds to meet
 * analysis.target_error (docs/model.md §3.6) come on top.
 */
export function estimateDrivenTime(points: readonly Scenario[], budget_ms = 400): RunTimeEstimate {
  const t0 = performance.now();
  const rates = new Map<string, number>();
  const byEngine = new Map<string, { runs: number; lane_steps: number; rate: number | null }>();
  let total = 0;
  for (const s of points) {
    const plan = drivenStepPlan(s);
    const e = byEngine.get(plan.engine) ?? { runs: 0, lane_steps: 0, rate: null };
    e.runs++;
    e.lane_steps += plan.lane_steps;
    byEngine.set(plan.engine, e);
    if (plan.stepping === null || plan.lane_steps === 0) continue;
    if (!rates.has(plan.stepping)) {
      // the slow path steps short windows around the turning points: calibrate on a stroke of
      // that size (an engine sized for a millimetre stroke carries delay lines it never uses)
      const c =
        plan.engine === 'speedcurve'
          ? {
              ...s,
              drive: {
                ...s.drive,
                amplitude: Math.min(Math.abs(s.drive.amplitude), 2 * s.laser.wavelength),
                second_amplitude: 0,
              },
            }
          : s;
      rates.set(plan.stepping, calibrateLaneSteps(c, plan.stepping, plan.dt_s, budget_ms));
    }
    e.rate = rates.get(plan.stepping)!;
    total += plan.lane_steps / e.rate;
  }
  return {
    driven_s: total,
    engines: [...byEngine.entries()].map(([engine, v]) => ({
      engine,
      runs: v.runs,
      lane_steps: v.lane_steps,
      lane_steps_per_s: v.rate,
    })),
    calibration_s: (performance.now() - t0) / 1000,
  };
}
