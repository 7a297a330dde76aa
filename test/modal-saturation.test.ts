/**
 * The one saturation law of the modal engines (docs/model.md §3.2) against closed forms:
 * homogeneous gain saturates as 1 / (1 + s), Doppler-broadened gain as 1 / sqrt(1 + s) with
 * the same P_sat, in both modal engines (delay line and mean field), class A and class B;
 * and spontaneous emission weighted by the gain line below threshold.
 */
import { describe, expect, it } from 'vitest';
import { ExactEngine } from '../src/physics/coupled/exact';
import { FastEngine } from '../src/physics/coupled/fast';
import type { CoupledParams } from '../src/physics/coupled/params';
import type { LaneEngine } from '../src/physics/coupled/lane-engine';
import { createRng } from '../src/numerics/rng';
import { laserOnlyStep } from '../src/simulate/references';
import { fastLaserStep } from '../src/simulate/engine-choice';
import { CHIP, laserInput, paramsOf, scenario, STILL } from './fixtures/engine/build';

// A gas-like laser: 10 cm, 1 % output coupler, photon lifetime 1/gamma_c = 60 ns.
const TUBE = { cavity_length: '10 cm', R1: 0.999, R2: 0.99 };
const PSAT = 1e-3; // W

/**
 * Settle one lane of the laser alone in the given engine from a small field (1e-3 of
 * P_sat) and return the mean one-way intracavity power of each mode over the last fifth.
 */
function settle(kind: 'exact' | 'fast', p: CoupledParams, lifetimes = 600): number[] {
  const q: CoupledParams = { ...p, hasExternal: false, returnToLaser: false, kappa: 0, couplingOut: 0 };
  const dt = kind === 'exact' ? laserOnlyStep(p) : fastLaserStep(p);
  const e: LaneEngine =
    kind === 'exact'
      ? new ExactEngine(q, 1, dt, STILL, createRng(3), 0)
      : new FastEngine(q, 1, dt, STILL, createRng(3));
  const M = p.M;
  e.setLaserState(
    Array.from({ length: M }, () => Math.sqrt(1e-3 * PSAT)),
    new Array(M).fill(0),
    new Array(M).fill(1),
  );
  const steps = Math.ceil(Math.max(lifetimes / p.gammaC, 60 * p.tauN) / dt);
  const { acc, n, ok } = modePowerSums(e, steps, 0.8);
  expect(ok).toBe(true);
  return Array.from(acc, (v) => v / n);
}

/**
 * Step lane 0 `steps` times and sum each mode's |E|^2 over the steps after the first
 * fraction `skip` (default 5 %): the sums, their count, and whether the engine stayed finite.
 */
function modePowerSums(
  e: LaneEngine,
  steps: number,
  skip = 0.05,
): { acc: Float64Array; n: number; ok: boolean } {
  const M = e.M;
  const from = Math.floor(skip * steps);
  const acc = new Float64Array(M);
  let k = 0;
  let n = 0;
  const ok = e.advance(steps, (en) => {
    if (k++ < from) return;
    n++;
    for (let m = 0; m < M; m++) acc[m] += en.Er[m] ** 2 + en.Ei[m] ** 2;
  });
  return { acc, n, ok };
}

describe('homogeneous gain: |E|^2 = P_sat (p - 1) at line centre', () => {
  for (const kind of ['exact', 'fast'] as const) {
    for (const tauN of ['10 ns', '1 us']) {
      it(`${kind} engine, tau_N ${tauN}`, () => {
        const p = paramsOf(
          scenario({
            laser: laserInput({
              ...TUBE,
              gain: { pump_ratio: 1.7, inversion_lifetime: tauN, saturation_power: '1 mW' },
            }),
          }),
        );
        expect(p.M).toBe(1);
        expect(p.inhomogeneous).toBe(false);
        const P = settle(kind, p)[0];
        // Homogeneous saturation, gain clamped at the loss: n = p f / (1 + |E|^2 / P_sat) = 1
        // (Siegman, Lasers (1986), ch. 12 homogeneous saturation, ch. 13 steady state).
        const expected = PSAT * (1.7 * p.gainRel[0] - 1);
        // 1e-4: > 30 e-folds of the slowest relaxation settle the mean to far below that;
        // spontaneous emission (1e-15 W against 0.7 mW) shifts it by ~1e-9
        expect(Math.abs(P / expected - 1)).toBeLessThan(1e-4);
      });
    }
  }
});

describe('Doppler gain, holes far narrower than the line: the 1 / sqrt(1 + s) law', () => {
  // 10 MHz holes on a 1.5 GHz Doppler line (ratio 0.007); one mode kept, tuned by the
  // line's centre offset.
  const gain = (offset: number, pump: number, tauN: string) => ({
    broadening: 'inhomogeneous' as const,
    shape: 'gaussian' as const,
    linewidth: '1.5 GHz',
    homogeneous_width: '10 MHz',
    pump_ratio: pump,
    saturation_power: '1 mW',
    inversion_lifetime: tauN,
    center_offset: offset,
  });
  const mk = (detuning_Hz: number, pump: number, tauN = '10 ns'): CoupledParams => {
    const d0 = paramsOf(scenario({ laser: laserInput({ ...TUBE, gain: gain(0, pump, tauN) }) })).modes
      .detuning_Hz[0];
    const p = paramsOf(
      scenario({ laser: laserInput({ ...TUBE, gain: gain(d0 - detuning_Hz, pump, tauN) }) }),
    );
    expect(p.M).toBe(1);
    // Hz: the mode sits where intended (the offset is subtracted exactly up to round-off)
    expect(Math.abs(p.modes.detuning_Hz[0] - detuning_Hz)).toBeLessThan(1);
    return p;
  };

  for (const kind of ['exact', 'fast'] as const) {
    for (const tauN of ['10 ns', '1 us']) {
      it(`${kind} engine, tau_N ${tauN}: off line centre 2 P_sat [(p f)^2 - 1], at line centre P_sat [(p f)^2 - 1]`, () => {
        const off = mk(300e6, 1.8, tauN);
        const centre = mk(0, 1.8, tauN);
        expect(off.inhomogeneous).toBe(true);
        const pfOff = 1.8 * off.gainRel[0];
        const pfC = 1.8 * centre.gainRel[0];
        // Lamb, Phys. Rev. 134, A1429 (1964); Siegman, Lasers (1986), ch. 12 inhomogeneous
        // saturation: a standing-wave mode detuned by d burns holes at +d and -d of a
        // Doppler line much wider than the holes, and its gain falls as 1 / sqrt(1 + I / I_s):
        // off centre the two holes are apart and each wave saturates its own (I = P),
        // at line centre both waves burn one hole (I = 2 P, the Lamb dip).
        const expOff = 2 * PSAT * (pfOff * pfOff - 1);
        const expC = PSAT * (pfC * pfC - 1);
        const Poff = settle(kind, off)[0];
        const Pc = settle(kind, centre)[0];
        // 1e-3: the mirror hole of the off-centre mode still overlaps by L(600 MHz) =
        // 1 / (1 + 60^2) = 2.8e-4 (C_mm = 1.00028), the settle error is below 1e-5
        expect(Math.abs(Poff / expOff - 1)).toBeLessThan(1e-3);
        expect(Math.abs(Pc / expC - 1)).toBeLessThan(1e-4); // C_mm = 2 exactly at centre; settle error as above
      });
    }
  }

  it('threshold at p f = 1: just below it the mode holds only spontaneous emission, just above it 2 P_sat [(p f)^2 - 1]', () => {
    const f = mk(300e6, 1).gainRel[0];
    const below = mk(300e6, 0.98 / f);
    const above = mk(300e6, 1.02 / f);
    const Pb = settle('exact', below, 4000)[0];
    const Pa = settle('exact', above, 4000)[0];
    // Lamb (1964): lasing starts where the unsaturated gain p f meets the loss, p f = 1.
    // Below it the field is spontaneous emission, P_sp f / (1 - p f) = 5e-14 W here (2 % below
    // threshold); 1e-10 W is a bound far above that and far below the lasing level (6e-5 W).
    expect(Pb).toBeLessThan(1e-10);
    const exp = 2 * PSAT * (1.02 ** 2 - 1);
    // 1e-3: 2 % above threshold the relaxation is slow (rate gamma_c (p f - 1)), 4000 photon
    // lifetimes are ~80 of its e-folds; the mirror hole adds 2.8e-4 as above
    expect(Math.abs(Pa / exp - 1)).toBeLessThan(1e-3);
  });
});

describe('below threshold: spontaneous emission weighted by the gain line', () => {
  it('each mode holds P_sp f_m / (1 - p f_m) on average (p = 0.8, no gap)', () => {
    // Homogeneous Gaussian line 2 GHz wide on a 30 cm tube (FSR 500 MHz): modes at f = 1,
    // 0.84, 0.50, 0.21 ... Below threshold nothing saturates and each mode is an
    // Ornstein-Uhlenbeck field: d<|E|^2>/dt = -gamma_c (1 - p f) <|E|^2> + P_sp f gamma_c
    // (Siegman, Lasers (1986), ch. 13 below threshold; spontaneous emission into a mode
    // is proportional to the gain that mode sees, Siegman ch. 2 and 13, the Einstein relation).
    const Psp = 1e-12;
    const p = paramsOf(
      scenario({
        laser: laserInput({
          cavity_length: '30 cm',
          R1: 0.999,
          R2: 0.99,
          gain: {
            linewidth: '2 GHz',
            pump_ratio: 0.8,
            inversion_lifetime: '10 ns',
            spontaneous_power: Psp,
            max_modes: 5,
          },
        }),
      }),
    );
    expect(p.M).toBe(5);
    const T = 40000 / p.gammaC;
    const dt = laserOnlyStep(p);
    const q: CoupledParams = { ...p, hasExternal: false, returnToLaser: false, kappa: 0, couplingOut: 0 };
    const e = new ExactEngine(q, 1, dt, STILL, createRng(21), 0);
    e.setLaserState(new Array(p.M).fill(0), new Array(p.M).fill(0), new Array(p.M).fill(1));
    const { acc, n } = modePowerSums(e, Math.ceil(T / dt));
    for (let m = 0; m < p.M; m++) {
      const f = p.gainRel[m];
      const expected = (Psp * f) / (1 - 0.8 * f);
      const mean = acc[m] / n;
      // 3 standard errors: |E|^2 of a complex Gaussian field is exponential (std = mean); its
      // correlation time is 1 / (gamma_c (1 - p f)), so 38000 lifetimes hold at least 7600
      // independent samples (p f <= 0.8): relative standard error <= 1.2 %, 3 sigma 3.5 %; 5 %
      // leaves room for the noise being added every few steps rather than continuously
      expect(Math.abs(mean / expected - 1)).toBeLessThan(0.05);
    }
    // the weighting matters: the weakest mode is well below the strongest's level
    expect(Math.min(...p.gainRel)).toBeLessThan(0.6);
  });

  it('the mean-field engine at a step far longer than the photon lifetime keeps P_sp f_m / (1 - p f_m)', () => {
    // A 300 um chip (photon lifetime 2.9 ps) below threshold, stepped at the mean-field
    // engine's own step (gamma_c dt about 8): the kick then carries the variance an
    // Ornstein-Uhlenbeck field gathers over the step (Gardiner, Handbook of Stochastic
    // Methods, sec. 3.8.4), so the stationary level is the continuous one above.
    const Psp = 1e-9;
    const p = paramsOf(
      scenario({
        laser: laserInput({
          ...CHIP,
          gain: {
            shape: 'parabolic',
            linewidth: '1 THz',
            pump_ratio: 0.8,
            inversion_lifetime: '1 ns',
            spontaneous_power: Psp,
            max_modes: 5,
          },
        }),
      }),
    );
    const dt = fastLaserStep(p);
    expect(p.gammaC * dt).toBeGreaterThan(2);
    const e = new FastEngine(p, 1, dt, STILL, createRng(8));
    e.setLaserState(new Array(p.M).fill(0), new Array(p.M).fill(0), new Array(p.M).fill(0.8));
    const { acc, n } = modePowerSums(e, Math.ceil(200000 / p.gammaC / dt));
    for (let m = 0; m < p.M; m++) {
      const f = p.gainRel[m];
      const expected = (Psp * f) / (1 - 0.8 * f);
      // 5 %: samples one step apart are nearly independent here (correlation time 1 / (gamma_c
      // (1 - p f)) <= 1.2 steps), 23000 steps give a relative standard error <= 1 %
      expect(Math.abs(acc[m] / n / expected - 1)).toBeLessThan(0.05);
    }
  });
});
