/**
 * A short semiconductor chip facing a 9 cm gap (scenarios/chip-gap.yaml, invented numbers):
 * its photon lifetime (2.9 ps) is a hundred times shorter than the gap's round trip, so
 * the delay-line engine's step must come from the laser, not from tau_E / substeps
 * (docs/model.md §3.3, §3.7). Small settings: a few nanoseconds of stepping.
 */
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadScenarioFile } from '../src/scenario/load';
import { deriveAll } from '../src/physics/derive';
import { balanceErrors, ExactEngine } from '../src/physics/coupled/exact';
import { FastEngine } from '../src/physics/coupled/fast';
import { createDrive } from '../src/physics/drive';
import { createRng } from '../src/numerics/rng';
import { freeRunning } from '../src/simulate/references';
import { exactEngineStep, planEngines } from '../src/simulate/engine-choice';
import { staticSettleTime } from '../src/simulate/run';

const s = loadScenarioFile(join(__dirname, '..', 'scenarios', 'chip-gap.yaml')).scenario;
const { params: p, derived } = deriveAll(s);

describe('short semiconductor chip: no step-size failure', () => {
  it('the delay-line step keeps RK4 inside its stability interval for the laser rates', () => {
    const dt = exactEngineStep(s, p);
    // RK4's stability interval on the negative real axis is |lambda dt| < 2.785 (Butcher,
    // Numerical Methods for Ordinary Differential Equations, 2nd ed. (2008), sec. 238;
    // Hairer and Wanner, Solving ODEs II, sec. IV.2). The field's fastest own rate in a
    // transient is (1/2) gamma_c sqrt(1 + alpha^2) max(1, p - 1) (docs/model.md §3.1): the
    // cold-cavity decay with the alpha rotation. The old step tau_E / substeps gave
    // |lambda dt| = 165 here.
    const lambda = 0.5 * p.gammaC * Math.sqrt(1 + p.alpha ** 2) * Math.max(1, p.pump - 1);
    expect(lambda * (p.roundTripExternal_s / s.simulation.substeps)).toBeGreaterThan(2.785);
    expect(lambda * dt).toBeLessThan(2.785);
    // the plan says why the step is short
    const plan = planEngines(s, p, derived.finesse_external, staticSettleTime(p), 'exact');
    expect(plan.driven.reason).toMatch(/set by the laser/);
  });

  it('the delay-line engine runs 2 ns from the free-running state with the drive on, fields finite', () => {
    const free = freeRunning(p, createRng(1), 2e-9);
    expect(free.intracavity_W).toBeGreaterThan(0);
    const dt = exactEngineStep(s, p);
    const lanes = 2;
    const half = s.laser.wavelength / 2;
    const e = new ExactEngine(p, lanes, dt, createDrive(s.drive, 1), createRng(2), half + s.drive.amplitude);
    for (let l = 0; l < lanes; l++) e.offset[l] = (l * half) / lanes;
    e.setLaserState(free.Er, free.Ei, free.N);
    e.resetEnergy();
    const ok = e.advance(Math.ceil(2e-9 / dt));
    expect(e.failMessage).toBe('');
    expect(ok).toBe(true);
    for (let l = 0; l < lanes; l++) {
      let P = 0;
      for (let m = 0; m < p.M; m++) P += e.Er[l * p.M + m] ** 2 + e.Ei[l * p.M + m] ** 2;
      expect(Number.isFinite(P)).toBe(true);
      // each subsystem's energy balance closes (docs/model.md §3.3: gain - cold loss +
      // injection + noise = change of stored laser energy; what enters the gap = what it
      // loses + change of stored energy): 1e-4, the integration tolerance the balance is
      // held to elsewhere; a step outside RK4's accuracy would show here first
      const b = balanceErrors(e, l);
      expect(b.laser).toBeLessThan(1e-4);
      expect(b.external).toBeLessThan(1e-4);
    }
  });

  it("the engine choice runs the mean-field engine at the plan's step for 30 ns without failure", () => {
    // asked for the modal family by name: with this chip's coupling `auto` takes the
    // round-trip engine (docs/model.md §3.7); this test is about the modal engines' step
    const plan = planEngines(s, p, derived.finesse_external, staticSettleTime(p), 'meanfield');
    expect(plan.driven.kind === 'fast' || plan.driven.kind === 'exact').toBe(true);
    const free = freeRunning(p, createRng(1), 2e-9);
    const dt = plan.driven.dt;
    const e =
      plan.driven.kind === 'fast'
        ? new FastEngine(p, 2, dt, createDrive(s.drive, 1), createRng(3))
        : new ExactEngine(p, 2, dt, createDrive(s.drive, 1), createRng(3), s.laser.wavelength);
    e.offset[1] = s.laser.wavelength / 4;
    e.setLaserState(free.Er, free.Ei, free.N);
    const ok = e.advance(Math.ceil(30e-9 / dt));
    expect(e.failMessage).toBe('');
    expect(ok).toBe(true);
    expect(Array.from(e.Er).every(Number.isFinite)).toBe(true);
  });
});
