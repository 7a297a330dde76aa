/**
 * The laser alone (no external cavity) against the closed forms of the rate equations
 * (docs/model.md §3.2): threshold, steady state, relaxation oscillation, Lamb dip, and the
 * output-coupler ratio.
 */
import { describe, expect, it } from 'vitest';
import { ExactEngine } from '../src/physics/coupled/exact';
import { createRng } from '../src/numerics/rng';
import { laserOnlyStep } from '../src/simulate/references';
import { runScenario } from '../src/simulate/run';
import { freeOf, laserInput, paramsOf, scenario, STILL } from './fixtures/engine/build';

// A gas-like laser: 30 cm, 1 % output coupler, photon lifetime 1/gamma_c = 181 ns.
const GAS = { cavity_length: '30 cm', R1: 0.999, R2: 0.99 };

describe('threshold and homogeneous single-mode steady state', () => {
  // 10 ns is below a tenth of the photon lifetime: class A (adiabatic inversion);
  // 1 us integrates the inversion (class B) and so tests the other branch of the engine.
  for (const tauN of ['10 ns', '1 us']) {
    for (const pump of [1.5, 3]) {
      it(`|E|^2 = P_sat (p f - 1) at p = ${pump}, tau_N = ${tauN}`, () => {
        const s = scenario({
          laser: laserInput({
            ...GAS,
            gain: {
              pump_ratio: pump,
              inversion_lifetime: tauN,
              saturation_power: '1 mW',
              spontaneous_power: 1e-15,
            },
          }),
        });
        const p = paramsOf(s);
        expect(p.M).toBe(1);
        expect(p.classA).toBe(tauN === '10 ns');
        const free = freeOf(p);
        // Laser rate equations, steady state above threshold: gain clamped at the loss,
        // n = 1 = p f / (1 + |E|^2 / P_sat) (Siegman, Lasers, 1986, ch. 12-13).
        const f = p.gainRel[0];
        const expected = 1e-3 * (pump * f - 1);
        // 1e-5 (the claim is 1e-3): the run settles for >= 37 relaxation e-folds and the
        // spontaneous power (1e-15 W against ~1 mW) moves the mean by ~1e-7 (measured 1e-7 to 6e-7)
        expect(Math.abs(free.intracavity_W - expected) / expected).toBeLessThan(1e-5);
        expect(free.lasingModes).toEqual([p.modes.index[0]]);
      });
    }
  }

  it('no lasing below threshold (p = 0.9): the power stays at the spontaneous level P_sp f / (1 - p f)', () => {
    const Psp = 1e-15;
    const s = scenario({
      laser: laserInput({
        ...GAS,
        gain: { pump_ratio: 0.9, inversion_lifetime: '10 ns', spontaneous_power: Psp },
      }),
    });
    const p = paramsOf(s);
    // long settle: the average over the last fifth then spans ~80 field correlation times
    const free = freeOf(p, 3, 4000 / p.gammaC);
    // Below threshold the field is spontaneous emission filtered by the net loss
    // gamma_c (1 - p f): d<|E|^2>/dt = -gamma_c (1 - p f) <|E|^2> + P_sp gamma_c, so
    // <|E|^2> = P_sp / (1 - p f) (Siegman, Lasers, ch. 13, below threshold; the noise
    // term is docs/model.md §3.1's <|dE|^2> = P_sp f gamma_c dt, weighted by the gain line).
    const expected = (Psp * p.gainRel[0]) / (1 - 0.9 * p.gainRel[0]);
    // 40 %: |E|^2 of a Gaussian field is exponentially distributed; ~80 correlation times
    // give a relative standard error ~ 12 %, so this is a 3-sigma bound.
    expect(free.intracavity_W).toBeGreaterThan(0.6 * expected);
    expect(free.intracavity_W).toBeLessThan(1.4 * expected);
    expect(free.lasingModes).toEqual([]);
  });
});

describe('class B relaxation oscillation', () => {
  it('the turn-on ringing has the angular frequency sqrt(gamma_c (p - 1) / tau_N - Gamma^2)', () => {
    // Solid-state-like laser: 10 cm, R1 0.999, R2 0.95, photon lifetime 12.8 ns. tau_N = 10 us
    // instead of 100 us keeps it well underdamped (omega_R / Gamma = 26) while the transient
    // dies ten times sooner, which keeps the test short.
    const pump = 1.5;
    const s = scenario({
      laser: laserInput({
        cavity_length: '10 cm',
        R1: 0.999,
        R2: 0.95,
        gain: {
          pump_ratio: pump,
          inversion_lifetime: '10 us',
          saturation_power: '1 W',
          spontaneous_power: 1e-15,
        },
      }),
    });
    const p = paramsOf(s);
    expect(p.classA).toBe(false);
    const pf = pump * p.gainRel[0];
    const dt = laserOnlyStep(p);
    const e = new ExactEngine(p, 1, dt, STILL, createRng(5), 0);
    // start from a small field (1e-6 of the steady state) at the cold inversion n = 1
    e.setLaserState([Math.sqrt(1e-6 * (pf - 1))], [0], [1]);
    const Pss = pf - 1; // W (P_sat = 1 W), the closed form checked above
    // Linearising dP/dt = gamma_c (n - 1) P, dn/dt = [p f - n (1 + P/P_sat)] / tau_N about
    // the steady state gives lambda^2 + (p f / tau_N) lambda + gamma_c (p f - 1) / tau_N = 0
    // (Siegman, Lasers, ch. 25, relaxation oscillations): omega_R^2 = gamma_c (p f - 1) / tau_N,
    // damping Gamma = p f / (2 tau_N), ringing at omega_d = sqrt(omega_R^2 - Gamma^2). Here the
    // damping correction is 7e-4 relative; it is included anyway.
    const omegaR2 = (p.gammaC * (pf - 1)) / p.tauN;
    const Gamma = pf / (2 * p.tauN);
    const omegaD = Math.sqrt(omegaR2 - Gamma * Gamma);
    const period = (2 * Math.PI) / omegaD;
    // record P - P_ss every `every` steps, for 60 ringing periods
    const every = 8;
    const total = Math.ceil((60 * period) / dt);
    const samples = new Float64Array(Math.floor(total / every));
    let k = 0;
    e.advance(total, (en) => {
      if (k % every === 0 && k / every < samples.length)
        samples[k / every] = en.Er[0] * en.Er[0] + en.Ei[0] * en.Ei[0] - Pss;
      k++;
    });
    // Linear regime: after the first sample from which |P - P_ss| stays below 5 % of P_ss
    // (the early spikes of a turn-on are far from linear and ring slower), and before the
    // ringing has decayed to 0.1 % of P_ss (below that the crossings are no longer the
    // ringing's alone: round-off and spontaneous emission move them).
    let start = samples.length - 1;
    while (start > 0 && Math.abs(samples[start - 1]) < 0.05 * Pss) start--;
    let end = samples.length - 1;
    while (end > start && Math.abs(samples[end]) < 1e-3 * Pss) end--;
    const crossings: number[] = [];
    for (let i = start + 1; i <= end; i++) {
      const a = samples[i - 1];
      const b = samples[i];
      if (a !== 0 && Math.sign(a) !== Math.sign(b)) crossings.push((i - 1 + a / (a - b)) * every * dt);
    }
    expect(crossings.length).toBeGreaterThan(20); // at least 10 periods in the linear regime
    const measured = (Math.PI * (crossings.length - 1)) / (crossings[crossings.length - 1] - crossings[0]);
    // 1 %: the claim is 3 %; at <= 5 % amplitude the nonlinear frequency pull is of order
    // (amplitude)^2 ~ 1e-3 and the crossing interpolation errs by ~1e-4 of a period.
    expect(Math.abs(measured - omegaD) / omegaD).toBeLessThan(0.01);
  });
});

describe('inhomogeneous gain: the Lamb dip', () => {
  it('single-mode power tuned across the line follows 2 P_sat [(p f(d))^2 - 1] / (1 + L(2 d)), with its dip at line centre', () => {
    // Doppler-broadened gas laser, one mode kept (max_modes 1); 10 cm so the one mode can be
    // tuned +-600 MHz (FSR 1.5 GHz) across the 1.5 GHz line; class A (tau_N 10 ns).
    const base = {
      broadening: 'inhomogeneous' as const,
      shape: 'gaussian' as const,
      linewidth: '1.5 GHz',
      homogeneous_width: '100 MHz',
      pump_ratio: 2,
      saturation_power: '1 mW',
      inversion_lifetime: '10 ns',
      spontaneous_power: 1e-15,
    };
    const mk = (offset_Hz: number) =>
      paramsOf(
        scenario({
          laser: laserInput({
            cavity_length: '10 cm',
            R1: 0.999,
            R2: 0.99,
            gain: { ...base, center_offset: offset_Hz },
          }),
        }),
      );
    const d0 = mk(0).modes.detuning_Hz[0]; // mode minus c / lambda at zero offset
    const targets = [-450e6, -300e6, -150e6, -75e6, 0, 75e6, 150e6, 300e6, 450e6];
    const power: number[] = [];
    for (const d of targets) {
      const p = mk(d0 - d);
      expect(p.M).toBe(1);
      expect(Math.abs(p.modes.detuning_Hz[0] - d)).toBeLessThan(1); // Hz: the mode sits where intended
      const P = freeOf(p).intracavity_W;
      power.push(P);
      // Lamb, Phys. Rev. 134, A1429 (1964): a standing-wave mode detuned by d burns two holes,
      // at +d and at its mirror image -d; the self-saturation is C = L(0) + L(2 d) =
      // 1 + 1 / (1 + (2 d / gamma_h)^2), and Doppler gain saturates as 1 / sqrt(1 + C P / (2 P_sat))
      // (Siegman, Lasers, ch. 12 inhomogeneous saturation; docs/model.md §3.2), so the
      // steady state is |E|^2 = 2 P_sat [(p f(d))^2 - 1] / (1 + L(2 d)).
      const f = p.gainRel[0];
      const L2d = 1 / (1 + ((2 * d) / 100e6) ** 2);
      const expected = (2e-3 * ((2 * f) ** 2 - 1)) / (1 + L2d);
      // 1e-5: as for the homogeneous steady state (the same settle, class A)
      expect(Math.abs(P - expected) / expected).toBeLessThan(1e-5);
    }
    // the dip: at line centre the power is below that at +-75 and +-150 MHz
    const centre = power[4];
    for (const i of [2, 3, 5, 6]) expect(power[i]).toBeGreaterThan(1.2 * centre);
  });
});

describe('output coupler ratio', () => {
  it('with a 1 % output coupler the one-way intracavity power is about 100 times the output', () => {
    // common practice, no source: P_out = T2 P_intracavity for the one-way power at M2
    const s = scenario({
      laser: laserInput({ ...GAS, gain: { pump_ratio: 2, inversion_lifetime: '10 ns' } }),
    });
    const fr = runScenario(s).summary.free_running;
    expect(fr.intracavity_W).toBeGreaterThan(0);
    // 1e-9: a ratio of two numbers the run computes from the same field; 1 - R2 = 0.01 exactly
    // with no coating loss, so the ratio is 100 to round-off
    expect(Math.abs(fr.intracavity_W / fr.output_W - 100)).toBeLessThan(1e-7);
  });
});
