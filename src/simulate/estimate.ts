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
import { planEngines } from './engine-choice';
import type { DrivenEngine } from './engine-choice';
import { drivenWindows, staticSettleTime } from './run';

/** The step plan of one driven run. */
export interface DrivenStepPlan {
  engine: DrivenEngine | 'none';
  /** time step, s (0 for the adiabatic path and for no driven run) */
  dt_s: number;
  /** lane-steps of the driven run: (settle + analysed steps) x rest positions */
  lane_steps: number;
  modes: number;
}

/**
 * The engine and lane-steps of the driven run of `s`, as runScenario plans them (the
 * settle and analysed windows of drivenWindows), times simulation.drive_offsets lanes.
 * The adiabatic path steps no lanes.
 */
export function drivenStepPlan(s: Scenario): DrivenStepPlan {
  const { derived, params } = deriveAll(s);
  if (!params.hasExternal || !Number.isFinite(params.gammaC))
    return { engine: 'none', dt_s: 0, lane_steps: 0, modes: params.M };
  const tStatic = staticSettleTime(params);
  const plan = planEngines(s, params, derived.finesse_external, tStatic, s.simulation.engine);
  const kind = plan.driven.kind;
  // the adiabatic and slow-drive paths step no lanes for the whole window (the slow path's
  // turning-point windows and speed curve are not counted: an estimate from below)
  if (kind === 'adiabatic' || kind === 'speedcurve')
    return { engine: kind, dt_s: 0, lane_steps: 0, modes: params.M };
  const w = drivenWindows(s, kind, tStatic);
  const dt = plan.driven.dt;
  const laneSteps = (Math.ceil(w.settle_s / dt) + Math.ceil(w.analysed_s / dt)) * s.simulation.drive_offsets;
  return { engine: kind, dt_s: dt, lane_steps: laneSteps, modes: params.M };
}

/** Lane-steps per CPU second of one engine kind on the scenario's parameters, measured over about `budget_ms` of CPU time. */
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
  engine.advance(chunk); // warm-up (JIT)
  // CPU time of this process, not wall time: other load on a shared machine must not make
  // the engine look slower than it is on a free core (the estimate assumes one per worker)
  const cpu = () => {
    const u = process.cpuUsage();
    return (u.user + u.system) / 1000;
  };
  const c0 = cpu();
  const w0 = performance.now();
  let steps = 0;
  while (cpu() - c0 < budget_ms && performance.now() - w0 < 20 * budget_ms) {
    engine.advance(chunk);
    steps += chunk;
  }
  const elapsed = Math.max(cpu() - c0, 1e-3) / 1000;
  return (steps * lanes) / elapsed;
}

export interface RunTimeEstimate {
  /** estimated wall time of the driven runs, s, on one worker thread */
  driven_s: number;
  /** per engine: runs, lane-steps, measured lane-steps per second */
  engines: { engine: string; runs: number; lane_steps: number; lane_steps_per_s: number | null }[];
  /** the calibration's own wall time, s */
  calibration_s: number;
}

/**
 * Estimated wall time of the driven runs of `points` (scenarios), one worker thread: for
 * each the step plan, divided by the lane-step rate of its engine measured once on the
 * first scenario using that engine (calibrateLaneSteps). Adiabatic runs count as 0 (they
 * step no lanes).
 */
export function estimateDrivenTime(points: readonly Scenario[], budget_ms = 400): RunTimeEstimate {
  const t0 = performance.now();
  const rates = new Map<string, number>();
  const byEngine = new Map<string, { runs: number; lane_steps: number }>();
  let total = 0;
  for (const s of points) {
    const plan = drivenStepPlan(s);
    const e = byEngine.get(plan.engine) ?? { runs: 0, lane_steps: 0 };
    e.runs++;
    e.lane_steps += plan.lane_steps;
    byEngine.set(plan.engine, e);
    if (plan.engine !== 'exact' && plan.engine !== 'fast' && plan.engine !== 'roundtrip') continue;
    if (!rates.has(plan.engine))
      rates.set(plan.engine, calibrateLaneSteps(s, plan.engine, plan.dt_s, budget_ms));
    total += plan.lane_steps / rates.get(plan.engine)!;
  }
  return {
    driven_s: total,
    engines: [...byEngine.entries()].map(([engine, v]) => ({
      engine,
      runs: v.runs,
      lane_steps: v.lane_steps,
      lane_steps_per_s: rates.get(engine) ?? null,
    })),
    calibration_s: (performance.now() - t0) / 1000,
  };
}
