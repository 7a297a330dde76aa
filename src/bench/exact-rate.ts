/**
 * Item a of the benchmark: mode-steps per second of ExactEngine.advance on the demo's
 * parameters, against the bare typed-array loop doing the same arithmetic (bare-loop.ts),
 * timed alternately in the same process so that both see the same machine state.
 */
import type { Scenario } from '../scenario/schema';
import { deriveAll } from '../physics/derive';
import { ExactEngine } from '../physics/coupled/exact';
import { createDrive } from '../physics/drive';
import { createRng } from '../numerics/rng';
import { freeRunning } from '../simulate/references';
import { exactEngineStep } from '../simulate/engine-choice';
import { runBareLoop, xoshiroState } from './bare-loop';
import type { BareLoopConfig } from './bare-loop';

export interface ExactRateOptions {
  lanes: number;
  /** steps run before timing starts (JIT warm-up, settling of the delay line) */
  warmupSteps: number;
  /** timed steps per round; rounds alternate engine and bare loop */
  stepsPerRound: number;
  rounds: number;
  /** steps of the bit-for-bit comparison of the two */
  checkSteps: number;
  log?: (line: string) => void;
}

export interface ExactRateResult {
  exact_mode_steps_per_s: number;
  bare_loop_mode_steps_per_s: number;
  exact_vs_bare_ratio: number;
  /** per round, mode-steps per second */
  exact_rounds: number[];
  bare_rounds: number[];
  lanes: number;
  modes: number;
  dt_s: number;
  timed_steps: number;
  /** largest |difference| of fields, inversions and energy sums after checkSteps, relative to each array's largest magnitude */
  bare_vs_engine_max_rel_diff: number;
  check_steps: number;
}

function maxRelDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let scale = 0;
  let d = 0;
  for (let i = 0; i < a.length; i++) {
    scale = Math.max(scale, Math.abs(a[i]), Math.abs(b[i]));
    d = Math.max(d, Math.abs(a[i] - b[i]));
  }
  return scale > 0 ? d / scale : d;
}

/** Energy sums of an engine in the bare loop's order (9 per lane). */
function engineEnergy(e: ExactEngine): Float64Array {
  const out = new Float64Array(e.L * 9);
  e.energy.forEach((x, l) => {
    out.set(
      [
        x.gain,
        x.coldLoss,
        x.injection,
        x.noise,
        x.externalIn,
        x.externalLost,
        x.externalScale,
        x.mismatch,
        x.mismatchScale,
      ],
      l * 9,
    );
  });
  return out;
}

/**
 * Measure the exact engine and the bare loop on scenario `s` (its drive, its step
 * tau_E / substeps, `lanes` rest offsets spread over half a wavelength, starting from the
 * free-running laser state). Returns the rates (mode-steps per second = steps x lanes x
 * modes / wall time), their ratio, and how far the bare loop's state is from the
 * engine's after checkSteps from the same start and noise seed (0 when bit-identical).
 */
export function measureExactVsBare(s: Scenario, o: ExactRateOptions): ExactRateResult {
  const log = o.log ?? (() => undefined);
  const { params } = deriveAll(s);
  const dt = exactEngineStep(s, params);
  const L = o.lanes;
  const M = params.M;
  const half = s.laser.wavelength / 2;
  const laneOffsets = Float64Array.from({ length: L }, (_, l) => (l * half) / L);
  const maxExcursion = Math.abs(s.drive.offset) + half + s.drive.amplitude;
  const free = freeRunning(params, createRng(s.simulation.seed).fork(1));
  const noiseSeed = 20240611;
  const drive = createDrive(s.drive, s.simulation.seed);
  const newEngine = () => {
    const e = new ExactEngine(params, L, dt, drive, createRng(noiseSeed), maxExcursion);
    e.setLaserState(free.Er, free.Ei, free.N);
    for (let l = 0; l < L; l++) e.offset[l] = laneOffsets[l];
    return e;
  };
  const probe = newEngine();
  const cfg: BareLoopConfig = {
    p: params,
    laneOffsets_m: laneOffsets,
    dt,
    maxExcursion_m: maxExcursion,
    drive: {
      offset_m: drive.offset_m,
      drift_m_s: drive.drift_m_s,
      amplitude_m: drive.amplitude_m,
      omega_rad_s: drive.omega_rad_s,
      phase_rad: drive.phase_rad,
    },
    noiseEvery: probe.noiseEvery,
    rngState: xoshiroState(noiseSeed),
  };
  if (s.drive.waveform !== 'sine' || drive.hasVibration)
    throw new Error('bench: the bare loop is written for a sine drive without vibration');

  // same start, same seed: the two must agree bit for bit (this also warms up the JIT)
  log(`a. checking the bare loop against ExactEngine over ${o.checkSteps} steps`);
  probe.advance(o.checkSteps);
  const bare = runBareLoop(cfg, free, 0, o.checkSteps);
  const diff = Math.max(
    maxRelDiff(probe.Er, bare.Er),
    maxRelDiff(probe.Ei, bare.Ei),
    maxRelDiff(probe.N, bare.N),
    maxRelDiff(engineEnergy(probe), bare.energy),
  );

  const modeSteps = o.stepsPerRound * L * M;
  const engine = newEngine();
  engine.advance(o.warmupSteps);
  const exactRounds: number[] = [];
  const bareRounds: number[] = [];
  let exactWall = 0;
  let bareWall = 0;
  for (let r = 0; r < o.rounds; r++) {
    const t0 = process.hrtime.bigint();
    const ok = engine.advance(o.stepsPerRound);
    const w = Number(process.hrtime.bigint() - t0) / 1e9;
    if (!ok) throw new Error(`bench: exact engine failed: ${engine.failMessage}`);
    exactWall += w;
    exactRounds.push(modeSteps / w);
    const b = runBareLoop(cfg, free, o.warmupSteps, o.stepsPerRound);
    bareWall += b.timed_s;
    bareRounds.push(modeSteps / b.timed_s);
    log(
      `a. round ${r + 1}/${o.rounds}: exact ${(exactRounds[r] / 1e6).toFixed(2)} M mode-steps/s, bare ${(bareRounds[r] / 1e6).toFixed(2)} M mode-steps/s`,
    );
  }
  const exactRate = (modeSteps * o.rounds) / exactWall;
  const bareRate = (modeSteps * o.rounds) / bareWall;
  return {
    exact_mode_steps_per_s: exactRate,
    bare_loop_mode_steps_per_s: bareRate,
    exact_vs_bare_ratio: exactRate / bareRate,
    exact_rounds: exactRounds,
    bare_rounds: bareRounds,
    lanes: L,
    modes: M,
    dt_s: dt,
    timed_steps: o.stepsPerRound * o.rounds,
    bare_vs_engine_max_rel_diff: diff,
    check_steps: o.checkSteps,
  };
}
