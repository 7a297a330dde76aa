/**
 * Misalignment of the return mirror (docs/model.md §2.5): overlap of offset and tilted
 * Gaussian beams, the axis of a misaligned two-mirror cavity, the coupling and the tilt
 * that halves it.
 */
import { describe, expect, it } from 'vitest';
import {
  offsetTiltedOverlap,
  gapAxisShift,
  misalignmentOf,
  couplingLaw,
} from '../src/physics/optics/misalignment';
import { gaussianOverlap } from '../src/physics/optics/overlap';
import { qFromWaist } from '../src/physics/optics/gaussian';
import { computeBeams } from '../src/physics/optics/beams';
import { deriveAll } from '../src/physics/derive';
import { loadScenarioFile } from '../src/scenario/load';
import { scenarioSchema, Scenario } from '../src/scenario/schema';

const LAMBDA = 632.8e-9;

function demo(): Scenario {
  const loaded = loadScenarioFile('scenarios/demo.yaml');
  if (!loaded.scenario) throw new Error('demo scenario did not load');
  return loaded.scenario;
}

function withReturnMirror(
  s: Scenario,
  extra: Record<string, unknown>,
  actuatorExtra: Record<string, unknown> = {},
) {
  const input = JSON.parse(JSON.stringify(s, (_k, v) => (v === Infinity ? 'flat' : v)));
  input.external.return_mirror = { ...input.external.return_mirror, ...extra };
  input.actuator = { ...input.actuator, ...actuatorExtra };
  return scenarioSchema.parse(input);
}

describe('overlap of offset and tilted Gaussian beams', () => {
  it('equal waists on a common waist plane: exp(-(d/w0)^2 - (theta/theta0)^2)', () => {
    // Joyce and DeLoach, Appl. Opt. 23, 4187 (1984); Anderson, Appl. Opt. 23, 2944 (1984):
    // theta0 = lambda / (pi w0) is the far-field divergence half-angle
    const w0 = 300e-6;
    const q = qFromWaist(w0, 0, LAMBDA);
    const theta0 = LAMBDA / (Math.PI * w0);
    for (const [d, t] of [
      [100e-6, 0],
      [0, 4e-4],
      [150e-6, 3e-4],
      [-150e-6, 3e-4],
    ]) {
      const expected = Math.exp(-((d / w0) ** 2) - (t / theta0) ** 2);
      // closed form against a closed form: only round-off (1e-12 relative)
      expect(offsetTiltedOverlap(q, q, d, t, LAMBDA)).toBeCloseTo(expected, 12);
    }
  });

  it('unequal waists on a common waist plane: Kogelnik eta0 times the offset and tilt exponentials', () => {
    // Joyce and DeLoach (1984), eqs. for beams with waists w1, w2 in one plane:
    // eta = eta0 exp(-2 d^2 / (w1^2 + w2^2) - 2 pi^2 theta^2 w1^2 w2^2 / (lambda^2 (w1^2 + w2^2))),
    // eta0 = (2 w1 w2 / (w1^2 + w2^2))^2 (Kogelnik, Bell Syst. Tech. J. 44, 455 (1965))
    const w1 = 290e-6;
    const w2 = 180e-6;
    const q1 = qFromWaist(w1, 0, LAMBDA);
    const q2 = qFromWaist(w2, 0, LAMBDA);
    const s2 = w1 * w1 + w2 * w2;
    const eta0 = ((2 * w1 * w2) / s2) ** 2;
    for (const [d, t] of [
      [0, 0],
      [120e-6, 0],
      [0, 5e-4],
      [80e-6, 2e-4],
    ]) {
      const expected =
        eta0 *
        Math.exp((-2 * d * d) / s2 - (2 * Math.PI ** 2 * t * t * w1 * w1 * w2 * w2) / (LAMBDA * LAMBDA * s2));
      expect(offsetTiltedOverlap(q1, q2, d, t, LAMBDA) / expected).toBeCloseTo(1, 12);
    }
  });

  it('coaxial beams at any plane give Kogelnik overlap 4 Im q1 Im q2 / |q1 - q2*|^2', () => {
    // Kogelnik (1965); the reference is the project's separate q-form implementation
    const q1 = qFromWaist(250e-6, 0.12, LAMBDA);
    const q2 = qFromWaist(200e-6, -0.05, LAMBDA);
    // both closed forms, round-off only
    expect(offsetTiltedOverlap(q1, q2, 0, 0, LAMBDA)).toBeCloseTo(gaussianOverlap(q1, q2), 12);
  });

  it('the overlap is unchanged when both beams propagate together (offset grows by theta z)', () => {
    // free-space propagation is unitary, so the overlap integral is the same at every
    // plane (Siegman, Lasers, ch. 16); the displaced beam's axis moves by theta z
    const q1 = qFromWaist(250e-6, 0, LAMBDA);
    const q2 = qFromWaist(200e-6, 0.03, LAMBDA);
    const d = 60e-6;
    const t = 2e-4;
    const here = offsetTiltedOverlap(q1, q2, d, t, LAMBDA);
    for (const z of [0.05, 0.3, 1.2]) {
      const there = offsetTiltedOverlap(
        { re: q1.re + z, im: q1.im },
        { re: q2.re + z, im: q2.im },
        d + t * z,
        t,
        LAMBDA,
      );
      // round-off of the complex algebra only
      expect(there / here).toBeCloseTo(1, 10);
    }
  });
});

describe('axis of a misaligned two-mirror cavity', () => {
  it('passes through both centres of curvature (tilt and decentre of M3)', () => {
    // The axis of a cavity of two spherical mirrors is the line through their centres of
    // curvature (Siegman, Lasers, ch. 19). M2 at z = 0 (radius rho2, centre at z = rho2),
    // M3 at z = L tilted by theta about its vertex and moved by d: centre at
    // (x = d + rho3 theta, z = L - rho3).
    const L = 0.09;
    for (const [rho2, rho3, theta, d] of [
      [-0.8, 1.5, 1e-4, 0],
      [2.0, 0.5, 0, 50e-6],
      [5.0, 1.5, -3e-5, 20e-6],
    ]) {
      const g2 = 1 - L / rho2;
      const g3 = 1 - L / rho3;
      const sh = gapAxisShift(L, g2, g3, theta, d);
      const axisAt = (z: number) => sh.offsetAtM2_m + sh.slope_rad * z;
      const c2 = { x: 0, z: rho2 };
      const c3 = { x: d + rho3 * theta, z: L - rho3 };
      // small-angle geometry: rounding only
      expect(axisAt(c2.z)).toBeCloseTo(c2.x, 12);
      expect(axisAt(c3.z)).toBeCloseTo(c3.x, 12);
      // Siegman's closed form for a tilt of mirror 2 alone: offsets L theta / (1 - g1 g2) and g1 L theta / (1 - g1 g2)
      if (d === 0) {
        expect(sh.offsetAtM2_m).toBeCloseTo((L * theta) / (1 - g2 * g3), 15);
        expect(sh.offsetAtM3_m).toBeCloseTo((g2 * L * theta) / (1 - g2 * g3), 15);
      }
    }
  });
});

describe('coupling of a misaligned return mirror', () => {
  it('zero tilt and decentre give the aligned coupling of the beam geometry', () => {
    const s = demo();
    const { derived } = deriveAll(s);
    // the factor is exactly 1 at zero misalignment: same number to round-off
    expect(derived.feedback_efficiency).toBeCloseTo(computeBeams(s).feedbackEfficiency, 14);
    expect(derived.alignment?.coupling_factor).toBeCloseTo(1, 14);
  });

  it("the tilt that halves the coupling matches the closed form for the demo's gap", () => {
    // Demo: flat M2 (the laser's waist w1 is on it) and a concave M3 of radius R3 at L2:
    // the gap eigenmode has its waist on M2 too, w2^2 = (lambda / pi) sqrt(L2 (R3 - L2))
    // (Kogelnik and Li, Appl. Opt. 5, 1550 (1966), plano-concave resonator). A tilt theta
    // moves the axis by R3 theta parallel to itself (flat M2: g2 = 1, Siegman ch. 19), so
    // the coupling falls as exp(-2 (R3 theta)^2 / (w1^2 + w2^2)) (Joyce and DeLoach 1984),
    // and halves at theta = sqrt(ln 2 (w1^2 + w2^2) / 2) / R3.
    const s = demo();
    const ext = s.external!;
    const L2 = ext.length;
    const R3 = ext.return_mirror.radius;
    const lambda = s.laser.wavelength;
    const { derived } = deriveAll(s);
    const w1 = derived.beams.radius_at_M2_m!;
    const w2sq = (lambda / Math.PI) * Math.sqrt(L2 * (R3 - L2));
    const expected = Math.sqrt((Math.LN2 * (w1 * w1 + w2sq)) / 2) / R3;
    // closed form against the closed form through the general overlap: round-off (1e-9)
    expect(derived.alignment!.half_coupling_tilt_rad! / expected).toBeCloseTo(1, 9);
    // and a scenario tilted by that much has half the coupling
    const tilted = withReturnMirror(s, { tilt: expected });
    const d2 = deriveAll(tilted).derived;
    expect(d2.feedback_efficiency / derived.feedback_efficiency).toBeCloseTo(0.5, 9);
    // a decentre of a curved M3 acts as a tilt d / R3 (same axis shift)
    const moved = withReturnMirror(s, { decenter: expected * R3 });
    expect(deriveAll(moved).derived.alignment!.coupling_factor).toBeCloseTo(0.5, 9);
  });

  it('an actuator tilt makes the coupling follow the position: sqrt of the factor ratio', () => {
    // With theta(x) = tilt_per_stroke x from alignment on the demo's gap, the amplitude
    // factor is exp(-(R3 k x)^2 / (w1^2 + w2^2)) (the square root of the power overlap above)
    const s = demo();
    const k = 200; // rad/m = 200 urad/um
    const t = withReturnMirror(s, {}, { tilt_per_stroke: k });
    const law = couplingLaw(t, misalignmentOf(t));
    expect(law).not.toBeNull();
    const { derived } = deriveAll(s);
    const w1 = derived.beams.radius_at_M2_m!;
    const L2 = s.external!.length;
    const R3 = s.external!.return_mirror.radius;
    const w2sq = (s.laser.wavelength / Math.PI) * Math.sqrt(L2 * (R3 - L2));
    for (const x of [0, 300e-9, -600e-9, 1e-6]) {
      const expected = Math.exp(-((R3 * k * x) ** 2) / (w1 * w1 + w2sq));
      // round-off only
      expect(law!(x)).toBeCloseTo(expected, 9);
    }
    // without an actuator tilt there is no law: the engines skip it
    expect(couplingLaw(s)).toBeNull();
  });
});

describe('the engines follow the coupling law', () => {
  it('with an actuator tilt, the gap power of a blind laser falls by the closed-form overlap at the mirror position', async () => {
    const { laserInput, engineFrom, freeOf, paramsOf, scenario, STILL } =
      await import('./fixtures/engine/build');
    const { FastEngine } = await import('../src/physics/coupled/fast');
    const { createRng } = await import('../src/numerics/rng');
    const { externalPowerOf } = await import('../src/simulate/references');
    // a plano-concave laser (so it has a Gaussian mode) facing the demo-like gap; the laser
    // ignores its feedback, so the gap power is eta_fb T2 |E|^2 / |1 + r2 r3' e^{-i phi}|^2
    // (docs/model.md §2.2) and scales with eta_fb alone at a fixed mirror position
    const laser = laserInput({ cavity_length: '22 cm', R2: 0.99, gain: { pump_ratio: 1.8 } });
    laser.rear_mirror = { reflectivity: 0.999, loss: 0, radius: '1 m' };
    const k = 150; // rad/m
    const x0 = 1e-6; // m: tilt k x0 = 150 urad, near the half-coupling tilt
    const mk = (tiltPerStroke: number) =>
      scenario({
        laser,
        external: {
          length: '9 cm',
          return_mirror: { reflectivity: 0.9995, radius: '1.5 m' },
          roundtrip_efficiency: 1,
          return_to_laser: false,
        },
        actuator: { stroke_per_volt: '10 nm/V', tilt_per_stroke: tiltPerStroke },
      });
    const aligned = paramsOf(mk(0));
    const tilting = paramsOf(mk(k));
    expect(tilting.couplingAt).not.toBeNull();
    const s = mk(k);
    const { derived } = deriveAll(s);
    const w1 = derived.beams.radius_at_M2_m!;
    const w2sq = (s.laser.wavelength / Math.PI) * Math.sqrt(0.09 * (1.5 - 0.09));
    // Joyce and DeLoach (1984) at a common waist plane (flat M2), axis moved by R3 theta
    const expected = Math.exp((-2 * (1.5 * k * x0) ** 2) / (w1 * w1 + w2sq));
    const free = freeOf(aligned);
    for (const kind of ['exact', 'fast'] as const) {
      const gap = (p: typeof aligned) => {
        const dt = p.roundTripExternal_s / 2;
        const e =
          kind === 'exact'
            ? engineFrom(p, dt, STILL, [x0], free, 2e-6)
            : new FastEngine(p, 1, 20 * dt, STILL, createRng(5));
        if (kind === 'fast') {
          e.offset[0] = x0;
          e.setLaserState(free.Er, free.Ei, free.N);
        }
        e.advance(Math.round(30e-6 / e.dt)); // > 20 photon lifetimes of the gap (~1 us)
        let sum = 0;
        const n = 200;
        e.advance(n, (en) => (sum += externalPowerOf(en, 0)));
        return sum / n;
      };
      // the laser is the same in both (blind to its feedback): only the coupling differs;
      // 1e-6 covers the spontaneous-emission noise (1e-15 W against mW)
      expect(gap(tilting) / gap(aligned)).toBeCloseTo(expected, 5);
    }
  });
});

describe('canonical form with the misalignment keys', () => {
  it('leaves them out at their default (earlier hashes stay valid) and round-trips either way', async () => {
    const { normaliseScenarioForJson } = await import('../src/scenario/canonical');
    const s = demo();
    const plain = normaliseScenarioForJson(s) as { external: { return_mirror: Record<string, unknown> } };
    expect('tilt' in plain.external.return_mirror).toBe(false);
    expect(scenarioSchema.parse(plain)).toEqual(s);
    const tilted = withReturnMirror(s, { tilt: 2e-5, decenter: 1e-5 }, { tilt_per_stroke: 3 });
    const n = normaliseScenarioForJson(tilted) as typeof plain & { actuator: Record<string, unknown> };
    expect(n.external.return_mirror.tilt).toBe(2e-5);
    expect(n.actuator.tilt_per_stroke).toBe(3);
    expect(scenarioSchema.parse(n)).toEqual(tilted);
  });
});
