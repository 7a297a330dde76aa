/**
 * Item b of the benchmark: wall time per simulated second of the accelerated (mean-field)
 * engine against the exact one, on the same drive at one peak speed and several drive
 * frequencies, with the planner's own choice recorded beside each.
 */
import type { Scenario } from '../scenario/schema';
import { withOverrides } from '../scenario/validate';
import { deriveAll } from '../physics/derive';
import { createLaneEngine } from '../physics/coupled/factory';
import type { EngineKind } from '../physics/coupled/factory';
import { createDrive } from '../physics/drive';
import { createRng } from '../numerics/rng';
import { freeRunning } from '../simulate/references';
import { FAST_VALID_FRACTION, planEngines } from '../simulate/engine-choice';
import { staticSettleTime } from '../simulate/run';

/**
 * The peak mirror speed at which the planner's validity limit for the mean-field engine
 * is met with a factor `margin` to spare: the round-trip phase change 4 pi v tau_E / lambda
 * equals margin x FAST_VALID_FRACTION x the resonance width 2 pi / F (engine-choice.ts),
 * so v = margin FAST_VALID_FRACTION lambda / (2 F tau_E). Speed in m/s.
 */
export function fastValidSpeed(s: Scenario, margin: number): number {
  const { derived, params } = deriveAll(s);
  return (
    (margin * FAST_VALID_FRACTION * s.laser.wavelength) /
    (2 * derived.finesse_external * params.roundTripExternal_s)
  );
}

export interface SpeedupOptions {
  frequencies_Hz: number[];
  /** peak mirror speed 2 pi f A of every case, m/s */
  peakSpeed_m_s: number;
  /** simulated time each engine advances per timing, s */
  simulated_s: number;
  /** the fast engine's timing is repeated (fresh engine, same start) until this much wall time has passed, s */
  minFastWall_s: number;
  lanes: number;
  log?: (line: string) => void;
}

export interface SpeedupCase {
  frequency_Hz: number;
  amplitude_m: number;
  exact_dt_s: number;
  fast_dt_s: number;
  exact_wall_per_sim_s: number;
  fast_wall_per_sim_s: number;
  /** exact wall per simulated second over fast wall per simulated second */
  speedup: number;
  fast_repeats: number;
  planner_choice: string;
  planner_reason: string;
  /** the planner's own validity measure: round-trip phase change over the resonance width */
  phase_per_roundtrip_over_width: number;
}

/**
 * Time one engine kind advancing `simulated_s` from the free-running laser state (lanes
 * spread over half a wavelength) after a warm-up of one tenth of that; returns wall
 * seconds per simulated second.
 */
function timeEngine(kind: EngineKind, s: Scenario, dt: number, simulated_s: number, lanes: number): number {
  const { params } = deriveAll(s);
  const half = s.laser.wavelength / 2;
  const free = freeRunning(params, createRng(s.simulation.seed).fork(1));
  const e = createLaneEngine(
    { kind, dt, maxExcursion_m: Math.abs(s.drive.offset) + half + s.drive.amplitude },
    params,
    lanes,
    createDrive(s.drive, s.simulation.seed),
    createRng(s.simulation.seed).fork(3),
  );
  e.setLaserState(free.Er, free.Ei, free.N);
  for (let l = 0; l < lanes; l++) e.offset[l] = (l * half) / lanes;
  const steps = Math.max(1, Math.round(simulated_s / dt));
  e.advance(Math.max(1, Math.round(steps / 10)));
  const t0 = process.hrtime.bigint();
  const ok = e.advance(steps);
  const wall = Number(process.hrtime.bigint() - t0) / 1e9;
  if (!ok) throw new Error(`bench: ${kind} engine failed: ${e.failMessage}`);
  return wall / (steps * dt);
}

/**
 * For each drive frequency f: amplitude A = v / (2 pi f), both engines on the same drive
 * and start for the same simulated time (the exact step tau_E / substeps, the fast step
 * the planner's for a requested mean-field run), the ratio of their wall times per
 * simulated second, and what planEngines picks with engine auto.
 */
export function measureFastSpeedup(base: Scenario, o: SpeedupOptions): SpeedupCase[] {
  const log = o.log ?? (() => undefined);
  const out: SpeedupCase[] = [];
  for (const f of o.frequencies_Hz) {
    const A = o.peakSpeed_m_s / (2 * Math.PI * f);
    const s = withOverrides(base, { 'drive.amplitude': A, 'drive.frequency': f });
    const { derived, params } = deriveAll(s);
    const regrowth = staticSettleTime(params);
    const auto = planEngines(s, params, derived.finesse_external, regrowth, 'auto');
    const exactDt = planEngines(s, params, derived.finesse_external, regrowth, 'exact').driven.dt;
    const fastDt = planEngines(s, params, derived.finesse_external, regrowth, 'fast').driven.dt;
    const exactRate = timeEngine('exact', s, exactDt, o.simulated_s, o.lanes);
    let fastWall = 0;
    let repeats = 0;
    let fastSum = 0;
    while (fastWall < o.minFastWall_s || repeats < 3) {
      const r = timeEngine('fast', s, fastDt, o.simulated_s, o.lanes);
      fastSum += r;
      fastWall += r * o.simulated_s;
      repeats++;
    }
    const fastRate = fastSum / repeats;
    const c: SpeedupCase = {
      frequency_Hz: f,
      amplitude_m: A,
      exact_dt_s: exactDt,
      fast_dt_s: fastDt,
      exact_wall_per_sim_s: exactRate,
      fast_wall_per_sim_s: fastRate,
      speedup: exactRate / fastRate,
      fast_repeats: repeats,
      planner_choice: auto.driven.kind,
      planner_reason: auto.driven.reason,
      phase_per_roundtrip_over_width: auto.basis.phasePerRoundTrip_rad / auto.basis.resonanceWidth_rad,
    };
    log(
      `b. ${f} Hz: exact ${exactRate.toFixed(0)} s/s, fast ${fastRate.toFixed(1)} s/s, speed-up ${c.speedup.toFixed(1)}x; planner: ${c.planner_choice}`,
    );
    out.push(c);
  }
  return out;
}
