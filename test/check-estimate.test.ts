/**
 * The run-time estimate `check` prints for a sweep: the step plan it rests on is the step
 * count the real run takes (checked against runScenario's own count on a tiny scenario),
 * and the CLI prints the number of points and an estimate labelled as one.
 */
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadScenarioFile } from '../src/scenario/load';
import { runScenario } from '../src/simulate/run';
import { drivenStepPlan, estimateDrivenTime } from '../src/simulate/estimate';
import type { SpeedCurve } from '../src/results/speed-curve';
import { slowDriveScenario } from './fixtures/engine/build';

/** The lattice indices of a curve's points (10^(k / 8) m/s, docs/model.md §3.6). */
function latticeIndicesOf(c: SpeedCurve): number[] {
  return [...c.forward, ...c.backward].map((q) => Math.round(8 * Math.log10(q.speed_m_s)));
}

const ROOT = resolve(__dirname, '..');

describe('run-time estimate', () => {
  it('plans the lane-steps the driven run then takes (its own count), with the same engine', () => {
    const s = loadScenarioFile(join(__dirname, 'fixtures', 'report', 'tiny-run.yaml')).scenario;
    const plan = drivenStepPlan(s);
    const a = runScenario(s);
    expect(plan.engine).toBe(a.summary.engine);
    // summary.timing.steps counts the time steps of the driven run, every lane stepping together
    expect(plan.lane_steps).toBe(a.summary.timing.steps * s.simulation.drive_offsets);
  });

  it('plans the slow path by its windows and speed curve, the lane-steps the run then takes', () => {
    // the slow-drive test system at 4 kHz (docs/model.md §3.6), one batch of 4 offsets
    const base = slowDriveScenario('4 kHz', 'speedcurve');
    const s = { ...base, analysis: { ...base.analysis, target_error: 1 } };
    const plan = drivenStepPlan(s);
    expect(plan.engine).toBe('speedcurve');
    const a = runScenario(s);
    expect(a.summary.engine).toBe('speedcurve');
    const curve = a.speed_curve!;
    // the windows: summary.timing.steps counts their time steps, every lane stepping together
    // (the plan rounds the sum of the windows' lengths once, the run each window: a step each)
    expect(
      Math.abs(plan.slow!.windows_lane_steps - a.summary.timing.steps * s.simulation.drive_offsets),
    ).toBeLessThanOrEqual(8 * s.simulation.drive_offsets);
    // the curve's base points: the run steps them and maybe a refinement on top
    const basePoints = new Set(latticeIndicesOf(curve)).size;
    expect(plan.slow!.curve_base_lane_steps).toBeLessThanOrEqual(Math.ceil(curve.lane_steps));
    if (curve.forward.length + curve.backward.length === 2 * basePoints)
      expect(plan.slow!.curve_base_lane_steps).toBeCloseTo(curve.lane_steps, -1);
    expect(plan.lane_steps).toBe(plan.slow!.windows_lane_steps + plan.slow!.curve_base_lane_steps);
  });

  it('an estimate is positive and the rate is measured, for a moving drive', () => {
    const s = loadScenarioFile(join(__dirname, 'fixtures', 'report', 'tiny-run.yaml')).scenario;
    const e = estimateDrivenTime([s], 50);
    expect(e.driven_s).toBeGreaterThan(0);
    const used = e.engines.find((x) => x.runs === 1)!;
    expect(used.lane_steps_per_s).toBeGreaterThan(0);
  });

  it('`check` of a sweep prints the number of points and an estimated run time, labelled as an estimate', () => {
    if (!existsSync(join(ROOT, 'dist', 'cli', 'main.js')))
      throw new Error('dist/ is missing: run `npm run build` (npm test does it)');
    const r = spawnSync(
      process.execPath,
      [join(ROOT, 'bin', 'dithercav.js'), 'check', join(__dirname, 'fixtures', 'sweep', 'tiny-sweep.yaml')],
      { cwd: ROOT, encoding: 'utf8', env: { ...process.env, NO_COLOR: '1' } },
    );
    expect(r.status, r.stderr).toBe(0);
    // tiny-sweep.yaml: 3 amplitudes x 2 listed frequencies
    expect(r.stdout).toMatch(/^ {2}points +6$/m);
    expect(r.stdout).toMatch(
      /^ {2}estimated run time +about \S+ for the driven runs on \d+ worker threads? \(an ESTIMATE\)$/m,
    );
    expect(r.stdout).toMatch(/references .*not included in the estimate/);
  });
});
