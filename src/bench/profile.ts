/**
 * The scenario the benchmark runs and its "bench profile": the demo at shorter settings
 * for the timings that would take minutes per point at the demo's own (a map point at
 * 100 Hz analyses 20 ms at 8 rest offsets). Every figure measured on the profile says so.
 */
import * as path from 'node:path';
import { loadScenarioFile } from '../scenario/load';
import { BENCH_FILE } from '../results/files';
import type { Scenario } from '../scenario/schema';
import { withOverrides } from '../scenario/validate';

/** scenarios/demo.yaml of the package (dist/bench -> ../../scenarios). */
export const DEMO_FILE = path.resolve(__dirname, '..', '..', 'scenarios', 'demo.yaml');

/** reports/bench.json of the package. */
export const BENCH_JSON = path.resolve(__dirname, '..', '..', BENCH_FILE);

/**
 * Overrides of the bench profile: two analysed drive periods (raised by the run itself to
 * four detection windows where the drive is fast) and one rest offset of the mirror, with
 * no offsets added for the statistics (a target error of 1 accepts any error).
 */
export const BENCH_PROFILE: Readonly<Record<string, number>> = {
  'simulation.periods': 2,
  'simulation.drive_offsets': 1,
  'analysis.target_error': 1,
};

/** The demo scenario, validated (SI). */
export function loadDemo(): Scenario {
  return loadScenarioFile(DEMO_FILE).scenario;
}

/** The demo with the bench profile and `extra` overrides applied (dot paths, SI numbers). */
export function benchScenario(extra: Record<string, number> = {}): Scenario {
  return withOverrides(loadDemo(), { ...BENCH_PROFILE, ...extra });
}
