/**
 * alpha as data sheets sign it (docs/model.md §3.1): a gain above its steady value raises
 * the optical frequency, so during a class-B turn-on the frequency chirp follows the
 * relaxation oscillation of the power with the sign of alpha, in both modal engines.
 */
import { describe, expect, it } from 'vitest';
import { ExactEngine } from '../src/physics/coupled/exact';
import { FastEngine } from '../src/physics/coupled/fast';
import type { CoupledParams } from '../src/physics/coupled/params';
import type { LaneEngine } from '../src/physics/coupled/lane-engine';
import { createRng } from '../src/numerics/rng';
import { laserOnlyStep } from '../src/simulate/references';
import { laserInput, paramsOf, scenario, STILL } from './fixtures/engine/build';

describe('turn-on chirp of a class-B laser with alpha', () => {
  for (const kind of ['exact', 'fast'] as const) {
    for (const alpha of [3, -2]) {
      it(`${kind} engine, alpha ${alpha}: phase - phase(0) = (alpha / 2) ln(P / P(0)); the frequency rises while the power rises`, () => {
        // Solid-state-like laser (10 cm, R2 0.95, photon lifetime 12.8 ns, tau_N 2 us,
        // p = 1.5): a well underdamped turn-on with spikes.
        const p: CoupledParams = paramsOf(
          scenario({
            laser: laserInput({
              cavity_length: '10 cm',
              R1: 0.999,
              R2: 0.95,
              gain: {
                pump_ratio: 1.5,
                inversion_lifetime: '2 us',
                saturation_power: '1 W',
                spontaneous_power: 1e-18,
                alpha,
              },
            }),
          }),
        );
        expect(p.classA).toBe(false);
        const dt = laserOnlyStep(p);
        const e: LaneEngine =
          kind === 'exact'
            ? new ExactEngine(p, 1, dt, STILL, createRng(5), 0)
            : new FastEngine(p, 1, dt, STILL, createRng(5));
        // start far below the steady power (0.5 W) at the cold inversion n = 1: the gain
        // then builds up above its steady value before the first spike
        const P0 = 1e-6;
        e.setLaserState([Math.sqrt(P0)], [0], [1]);
        let phase = 0;
        let prevR = e.Er[0];
        let prevI = e.Ei[0];
        let worst = 0;
        let rising = 0;
        let risingBlue = 0;
        let falling = 0;
        let fallingRed = 0;
        let prevP = P0;
        const steps = Math.ceil(20e-6 / dt);
        e.advance(steps, (en) => {
          const r = en.Er[0];
          const i = en.Ei[0];
          const dphi = Math.atan2(i * prevR - r * prevI, r * prevR + i * prevI);
          phase += dphi;
          prevR = r;
          prevI = i;
          const P = r * r + i * i;
          // Henry, IEEE J. Quantum Electron. 18, 259 (1982): d(phase)/dt = (alpha / 2)(G - gamma_c)
          // and dP/dt = (G - gamma_c) P, so the chirp is (alpha / 2) d ln P / dt (Koch and Linke,
          // Appl. Phys. Lett. 48, 613 (1986), without gain compression); integrated:
          const expected = 0.5 * alpha * Math.log(P / P0);
          worst = Math.max(worst, Math.abs(phase - expected));
          // sign: where the power rises the optical frequency is above its steady value for alpha > 0
          const dP = P - prevP;
          if (Math.abs(dP) > 1e-4 * P) {
            const blue = dphi > 0 === alpha > 0;
            if (dP > 0) {
              rising++;
              if (blue) risingBlue++;
            } else {
              falling++;
              if (!blue) fallingRed++;
            }
          }
          prevP = P;
        });
        // 1e-3 rad over a phase swing of (|alpha| / 2) ln(5e5) ~ 13-20 rad: the integration
        // error of the step (gamma_c dt = 0.02, RK4 or the exact exponential) accumulates to
        // far less; spontaneous emission at 1e-18 W against P >= 1e-6 W moves it by ~1e-6 rad
        expect(worst).toBeLessThan(1e-3);
        expect(rising).toBeGreaterThan(50);
        expect(falling).toBeGreaterThan(50);
        expect(risingBlue).toBe(rising);
        expect(fallingRed).toBe(falling);
      });
    }
  }
});
