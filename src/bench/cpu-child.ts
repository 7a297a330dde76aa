/**
 * `node dist/bench/cpu-child.js`: the bare loop (bare-loop.ts) on the demo for a fixed
 * number of steps in a process of its own; prints one JSON line with the timed wall
 * time. Two of these at once against one alone show how much of a second core this
 * machine actually gives, whatever the tool does.
 */
import { deriveAll } from '../physics/derive';
import { ExactEngine } from '../physics/coupled/exact';
import { createRng } from '../numerics/rng';
import { createDrive } from '../physics/drive';
import { freeRunning } from '../simulate/references';
import { exactEngineStep } from '../simulate/engine-choice';
import { runBareLoop, xoshiroState } from './bare-loop';
import { loadDemo } from './profile';

/** Steps each child times (after 30 000 warm-up steps). */
export const CPU_CHILD_STEPS = 200_000;

function main(): void {
  const s = loadDemo();
  const { params } = deriveAll(s);
  const dt = exactEngineStep(s, params);
  const L = 8;
  const half = s.laser.wavelength / 2;
  const d = createDrive(s.drive, s.simulation.seed);
  const free = freeRunning(params, createRng(s.simulation.seed).fork(1));
  const r = runBareLoop(
    {
      p: params,
      laneOffsets_m: Float64Array.from({ length: L }, (_, l) => (l * half) / L),
      dt,
      maxExcursion_m: Math.abs(s.drive.offset) + half + s.drive.amplitude,
      drive: {
        offset_m: d.offset_m,
        drift_m_s: d.drift_m_s,
        amplitude_m: d.amplitude_m,
        omega_rad_s: d.omega_rad_s,
        phase_rad: d.phase_rad,
      },
      noiseEvery: new ExactEngine(params, 1, dt, d, createRng(7), half + s.drive.amplitude).noiseEvery,
      rngState: xoshiroState(7),
    },
    free,
    30_000,
    CPU_CHILD_STEPS,
  );
  process.stdout.write(`${JSON.stringify({ timed_s: r.timed_s, steps: r.timedSteps })}\n`);
}

main();
