/**
 * The driven run's statistics (docs/model.md §3.6, §4.2): rest offsets by stratified
 * random sampling, the standard error of the driven means, and the loop that adds offsets
 * until the target error or the step budget stops it.
 */
import { describe, expect, it } from 'vitest';
import {
  refineStrata,
  stratifiedDraw,
  meanAndStderr,
  stratifiedMeanAndStderr,
} from '../src/analysis/stratified';
import { classifyRun } from '../src/analysis/classify';
import { createRng } from '../src/numerics/rng';
import { resolve } from 'node:path';
import { drivenWindows, LANE_SETTLE_FROM_FREE_s, runScenario, staticSettleTime } from '../src/simulate/run';
import { memoryTime } from '../src/simulate/speed-curve';
import { deriveAll } from '../src/physics/derive';
import { loadScenarioFile } from '../src/scenario/load';
import type { ScenarioInput } from '../src/scenario/schema';
import { laserInput, OPEN_LOOP_GAP, scenario } from './fixtures/engine/build';

const HALF = 632.8e-9 / 2;

describe('stratified rest offsets', () => {
  // Stratified sampling with one unit per stratum (Cochran, Sampling Techniques, 3rd ed.,
  // ch. 5): N equal slices of the span, one uniform draw in each.
  it('lie one per slice, in slice order, and repeat exactly for a seed', () => {
    const a = stratifiedDraw(16, HALF, createRng(7).fork(4));
    const b = stratifiedDraw(16, HALF, createRng(7).fork(4));
    const c = stratifiedDraw(16, HALF, createRng(8).fork(4));
    expect(b).toEqual(a);
    expect(c).not.toEqual(a);
    a.forEach((x, i) => {
      expect(x).toBeGreaterThanOrEqual((i * HALF) / 16);
      expect(x).toBeLessThan(((i + 1) * HALF) / 16);
    });
  });

  it('are uniform within their slices: the position in the slice averages 1/2 with variance 1/12', () => {
    // the fractional position of a uniform draw in its slice is U(0, 1): mean 1/2, variance
    // 1/12 (any probability text); 4096 draws give a standard error of 0.0045 on the mean,
    // so 0.02 is more than four standard errors
    const n = 4096;
    const x = stratifiedDraw(n, 1, createRng(3));
    const frac = x.map((v, i) => v * n - i);
    const mean = frac.reduce((a, b) => a + b, 0) / n;
    const variance = frac.reduce((a, u) => a + (u - mean) ** 2, 0) / n;
    expect(Math.abs(mean - 0.5)).toBeLessThan(0.02);
    expect(Math.abs(variance - 1 / 12)).toBeLessThan(0.01);
  });

  it('refine by doubling the strata: old points kept, one point per slice of 2N', () => {
    const rng = createRng(11).fork(4);
    const first = stratifiedDraw(8, HALF, rng);
    const added = refineStrata(first, HALF, rng);
    const all = [...first, ...added].sort((p, q) => p - q);
    expect(all).toHaveLength(16);
    all.forEach((x, i) => {
      expect(Math.floor((x / HALF) * 16)).toBe(i);
    });
    // each new point shares its old slice of 8 with the old point drawn there
    added.forEach((x, i) => expect(Math.floor((x / HALF) * 8)).toBe(i));
  });

  it('refuse to refine a set that is not one point per slice', () => {
    expect(() => refineStrata([0.1, 0.2], 1, createRng(1))).toThrow(/one per slice/);
  });
});

describe('standard error of a mean', () => {
  it('is s / sqrt(n) with the n - 1 sample variance, null below two samples', () => {
    // samples 1, 2, 3, 4: mean 5/2, sum of squared deviations 5, s^2 = 5/3, s^2 / n = 5/12
    const r = meanAndStderr([1, 2, 3, 4]);
    expect(r.mean).toBe(2.5);
    expect(r.stderr).toBeCloseTo(Math.sqrt(5 / 12), 14);
    expect(meanAndStderr([3]).stderr).toBeNull();
  });
});

describe('standard error of a stratified mean (second-order neighbour differences)', () => {
  it('is sqrt(sum of squared second differences / (6 n^2)), the circle closed', () => {
    // y = 1, 2, 4, 3 around the circle: second differences (3 - 2 + 2), (1 - 4 + 4),
    // (2 - 8 + 3), (4 - 6 + 1) = 3, 1, -3, -1, squares sum 20, n = 4: v = 20 / 96
    const r = stratifiedMeanAndStderr([1, 2, 4, 3]);
    expect(r.mean).toBe(2.5);
    expect(r.stderr).toBeCloseTo(Math.sqrt(20 / 96), 14);
    // a constant: no scatter
    expect(stratifiedMeanAndStderr([2, 2, 2, 2, 2]).stderr).toBe(0);
    // two strata: s / sqrt(n)
    expect(stratifiedMeanAndStderr([1, 3]).stderr).toBeCloseTo(meanAndStderr([1, 3]).stderr!, 14);
  });

  it('matches the scatter of the stratified mean over independent draws, and s / sqrt(n) does not', () => {
    // Monte Carlo against the definition of the error: the spread of the stratified mean
    // over many independent draws, for a smooth periodic curve plus independent noise in
    // each stratum (the drive periods' own scatter). Locally linear curve: v is unbiased;
    // curvature over three slices (here (2 pi)^2 / n^2 of the amplitude) adds a positive
    // bias of some per cent to some tens of per cent (docs/model.md §4.2). 4000 replicates
    // give the variance ratio to about 2.2 % (sqrt(2 / 4000)): the bounds 0.93 and 1.35
    // leave three of those below 1 and room for the curvature bias above.
    const n = 16;
    const reps = 4000;
    const rng = createRng(21);
    const g = (x: number) => 1 + 0.5 * Math.cos(2 * Math.PI * x) + 0.2 * Math.sin(4 * Math.PI * x);
    const means: number[] = [];
    let vSum = 0;
    for (let k = 0; k < reps; k++) {
      const xs = stratifiedDraw(n, 1, rng);
      const ys = xs.map((x) => g(x) + 0.05 * rng.normal());
      const r = stratifiedMeanAndStderr(ys);
      means.push(r.mean);
      vSum += r.stderr! ** 2;
    }
    const mu = means.reduce((a, b) => a + b, 0) / reps;
    const trueVar = means.reduce((a, m) => a + (m - mu) ** 2, 0) / (reps - 1);
    const ratio = vSum / reps / trueVar;
    expect(ratio).toBeGreaterThan(0.93);
    expect(ratio).toBeLessThan(1.35);
    // the same draws judged as independent samples overstate the error several-fold
    const ys = stratifiedDraw(n, 1, createRng(22)).map((x) => g(x));
    expect(meanAndStderr(ys).stderr!).toBeGreaterThan(3 * stratifiedMeanAndStderr(ys).stderr!);
  });
});

describe('the class judged with the standard error in mind', () => {
  const thresholds = {
    lasing_power: 1e-6,
    max_hops_per_period: 0,
    min_gain_over_static: 1.1,
    min_incoherent_fraction: 0.3,
    ripple_limit: 0.1,
  };
  const base = {
    freeRunningIntracavity_W: 0.1,
    hopsPerPeriod: 0,
    gainOverStatic: 2,
    rippleRel: 0.05,
    incoherentFraction: 0.8,
  };
  it('a gain within one standard error of its minimum says the class could flip; one far from it does not', () => {
    const close = classifyRun(
      { ...base, gainOverStatic: 1.12, stderr: { gainOverStatic: 0.05 } },
      thresholds,
    );
    expect(close.class).toBe('decoupled');
    expect(close.reason).toMatch(/gain over static 1\.12 >= minimum 1\.1 \(within one standard error 0\.05/);
    const below = classifyRun(
      { ...base, gainOverStatic: 1.08, stderr: { gainOverStatic: 0.05 } },
      thresholds,
    );
    expect(below.class).toBe('no-gain');
    expect(below.reason).toMatch(/could flip/);
    const far = classifyRun({ ...base, stderr: { gainOverStatic: 0.05, rippleRel: 0.01 } }, thresholds);
    expect(far.reason).not.toMatch(/standard error/);
  });
  it('a ripple within one standard error of its limit says so', () => {
    const r = classifyRun({ ...base, rippleRel: 0.105, stderr: { rippleRel: 0.01 } }, thresholds);
    expect(r.class).toBe('modulated');
    expect(r.reason).toMatch(/ripple 0\.105 > limit 0\.1 \(within one standard error 0\.01/);
  });
});

/**
 * A laser that ignores its feedback, facing a gap of modest finesse (R2 0.99, R3 0.9:
 * F about 29, photon lifetime about 18 ns) with one homogeneous mode: cheap to step.
 */
function feedbackOff(drive: ScenarioInput['drive'], sim: ScenarioInput['simulation'], analysis = {}) {
  return scenario({
    laser: laserInput({
      cavity_length: '30 cm',
      R1: 0.999,
      R2: 0.99,
      gain: { pump_ratio: 2, inversion_lifetime: '10 ns', spontaneous_power: 1e-15 },
    }),
    external: OPEN_LOOP_GAP,
    drive,
    simulation: { engine: 'exact', static_positions: 16, ...sim },
    analysis: { detection_bandwidth: '1 MHz', ...analysis },
  });
}

describe('driven runs over stratified offsets, feedback ignored', () => {
  it('agree with the Airy phase average within their stated standard error', () => {
    // With the feedback ignored the laser's power is the free-running one and the gap's
    // one-way power at round-trip phase phi is eta_fb T2 / |1 - r2 r3 e^{i phi}|^2 times it;
    // averaged over phi this is eta_fb T2 / (1 - R2 R3) (the incoherent sum of the round
    // trips; Siegman, Lasers, ch. 11, Fabry-Perot; Born & Wolf, Principles of Optics, 7.6.1).
    // A rest offset uniform over half a wavelength shifts phi uniformly over 2 pi, so the
    // mean over stratified offsets estimates that average without bias whatever the stroke.
    // A triangle drive moves the mirror at constant speed, so each offset's time average is
    // the phase average over the positions it sweeps; a stroke 2A = 1.1 lambda covers 2.2
    // half wavelengths, and the extra 0.2 holds the resonance at some offsets and not at
    // others: the offsets disagree by some per cent, and that spread is what the error
    // measures. Slow enough to be quasi-static: 4 f A = 70 mm/s moves the mirror 1.3 nm in a
    // photon lifetime, against a resonance 11 nm wide; the shortfall after each turning
    // point is of the order lifetime / half period = 0.2 % (run-incoherent-level.test.ts).
    const s = feedbackOff(
      { waveform: 'triangle', amplitude: '348 nm', frequency: '50 kHz' },
      { drive_offsets: 16, periods: 2, seed: 5 },
      { target_error: 0.5 },
    );
    const r = runScenario(s).summary;
    expect(r.status).toBe('ok');
    const d = r.driven!;
    const airy = ((0.8 * 0.01) / (1 - 0.99 * 0.9)) * r.free_running.intracavity_W;
    expect(d.external_mean_stderr_W).not.toBeNull();
    const e = d.external_mean_stderr_W!;
    // the error is real (the offsets disagree; far above the 0.2 % turning-point shortfall)
    // and a few per cent of the mean
    expect(e / d.external_mean_W).toBeGreaterThan(0.005);
    expect(e / d.external_mean_W).toBeLessThan(0.1);
    // 2.5 standard errors: a two-sided 99 % band for a normal estimate; the estimator with
    // per-offset means as samples overstates the stratified error (docs/model.md §4.2), so
    // an honest error passes this with room
    expect(Math.abs(d.external_mean_W - airy)).toBeLessThan(2.5 * e);
    // the offsets are one per slice of half a wavelength (stratified), as many as were used
    const n = d.offsets_used;
    const pos = d.offset_positions_m;
    expect(pos).toHaveLength(n);
    pos.forEach((x, i) => expect(Math.floor((x / HALF) * n)).toBe(i));
  });
});

describe('statistics that stop when converged', () => {
  const drive = { waveform: 'sine' as const, amplitude: '60 nm', frequency: '200 kHz' };
  const sim = { drive_offsets: 4, periods: 2, seed: 2 };

  it('a loose target stops after the first batch and says the target stopped it', () => {
    const r = runScenario(feedbackOff(drive, sim, { target_error: 0.9 })).summary;
    expect(r.status).toBe('ok');
    const d = r.driven!;
    expect(d.stopped_by).toBe('target');
    expect(d.offsets_used).toBe(4);
    expect(d.external_mean_stderr_W! / d.external_mean_W).toBeLessThanOrEqual(0.9);
    expect(d.periods_used).toBeGreaterThanOrEqual(2);
    expect(r.warnings.map((w) => w.code)).not.toContain('target-error-not-met');
    // timing keys of CONTRACT 0.2: lanes x simulated seconds per wall second
    expect(r.timing.lanes).toBe(4);
    expect(r.timing.dt_s).toBeGreaterThan(0);
    expect(r.timing.simulated_lane_s_per_s).toBeCloseTo(
      (r.timing.steps * r.timing.lanes * r.timing.dt_s!) / (r.timing.steps / r.timing.engine_steps_per_s),
      6,
    );
  });

  it('a tiny budget stops it before the target and says the budget did', () => {
    const loose = runScenario(feedbackOff(drive, sim, { target_error: 0.9 })).summary;
    // room for the first batch only: its own lane-steps, and not one more batch of 4
    const firstBatch = loose.timing.steps * 4;
    const r = runScenario(
      feedbackOff(drive, { ...sim, max_steps: firstBatch + 10 }, { target_error: 1e-6 }),
    ).summary;
    expect(r.status).toBe('ok');
    expect(r.driven!.stopped_by).toBe('budget');
    expect(r.driven!.offsets_used).toBe(4);
    expect(r.warnings.map((w) => w.code)).toContain('target-error-not-met');
  });

  it('a target the first batch misses doubles the offsets, one per slice of the finer strata', () => {
    const loose = runScenario(feedbackOff(drive, sim, { target_error: 0.9 })).summary;
    const rel = loose.driven!.external_mean_stderr_W! / loose.driven!.external_mean_W;
    // a target just below what 4 offsets reach: the error falls as 1 / sqrt(N) (or faster,
    // for stratified sampling), so 8 offsets are expected to meet it; the budget allows
    // batches up to 32 offsets so that an unlucky draw still ends on the target
    const firstBatch = loose.timing.steps * 4;
    const r = runScenario(
      feedbackOff(drive, { ...sim, max_steps: 8 * firstBatch + 10 }, { target_error: 0.9 * rel }),
    ).summary;
    const d = r.driven!;
    expect(d.offsets_used).toBeGreaterThan(4);
    expect(d.stopped_by).toBe('target');
    expect(d.external_mean_stderr_W! / d.external_mean_W).toBeLessThanOrEqual(0.9 * rel);
    // the first batch's offsets are kept
    for (const x of loose.driven!.offset_positions_m) expect(d.offset_positions_m).toContain(x);
    d.offset_positions_m.forEach((x, i) => expect(Math.floor((x / HALF) * d.offsets_used)).toBe(i));
  });
});

describe('settle of a driven lane (docs/model.md §4.2)', () => {
  // A lane started from the free-running state forgets its start within a few memory times
  // (the measurement in docs/model.md §4.2: one period against four memory times agreed
  // within 0.3 combined standard errors at 1 and 2.7 kHz); lanes started from the static
  // states keep one whole drive period.
  const s = loadScenarioFile(resolve(__dirname, '..', 'scenarios', 'demo-sweep.yaml')).scenario;
  const at = (f: number) => ({ ...s, drive: { ...s.drive, frequency: f } });
  const { derived, params } = deriveAll(s);
  const tStatic = staticSettleTime(params);
  const tau = memoryTime(params, { intracavity_W: derived.free_running_estimate_W });

  it('a round-trip lane settles four memory times of a long period, not the period', () => {
    const w = drivenWindows(at(1000), 'roundtrip', tStatic, tau);
    expect(w.settle_s).toBeCloseTo(Math.max(3 * tStatic, LANE_SETTLE_FROM_FREE_s, 4 * tau), 12);
    expect(w.settle_s).toBeLessThan(0.1 / 1000);
    // the analysed window stays whole periods
    expect(w.analysed_s).toBeCloseTo(w.periods! / 1000, 12);
    // without a memory time (no free-running reference) the period is kept
    expect(drivenWindows(at(1000), 'roundtrip', tStatic).settle_s).toBeGreaterThanOrEqual(1 / 1000);
  });

  it('a short period is settled as before, and a modal lane always settles a whole period', () => {
    const fast = drivenWindows(at(200e3), 'roundtrip', tStatic, tau);
    expect(fast.settle_s).toBeCloseTo(Math.max(3 * tStatic, LANE_SETTLE_FROM_FREE_s, 1 / 200e3), 12);
    expect(drivenWindows(at(1000), 'exact', tStatic, tau).settle_s).toBeGreaterThanOrEqual(1 / 1000);
  });
});
