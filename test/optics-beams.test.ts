import { describe, expect, it } from 'vitest';
import { scenarioSchema } from '../src/scenario/schema';
import type { ScenarioInput } from '../src/scenario/schema';
import { computeBeams, returnOverlap, waistOverlap, qFromWaist } from '../src/physics/optics';
import { deriveAll } from '../src/physics/derive';

const LAMBDA = 1064e-9;

/** An invented demo geometry: flat output coupler, concave rear mirror, 30 cm gap. */
function scenario(over: { laser?: Record<string, unknown>; external?: Record<string, unknown> | null } = {}) {
  const input = {
    name: 'optics test',
    laser: {
      wavelength: LAMBDA,
      cavity_length: 0.2,
      rear_mirror: { reflectivity: 0.999, radius: 1 },
      output_coupler: { reflectivity: 0.9, radius: 'flat' },
      gain: { linewidth: 1e9, pump_ratio: 2, saturation_power: 1, inversion_lifetime: 1e-6 },
      ...(over.laser ?? {}),
    },
    ...(over.external === null
      ? {}
      : {
          external: {
            length: 0.3,
            return_mirror: { reflectivity: 0.99, radius: 1 },
            ...(over.external ?? {}),
          },
        }),
  } as ScenarioInput;
  return scenarioSchema.parse(input);
}

/** Laser mode with flat M2 from Kogelnik & Li (1966): waist on M2, w0^2 = (lambda L/pi) sqrt(g1/(1 - g1)). */
function flatOcWaist(L: number, R1: number) {
  const g1 = 1 - L / R1;
  return Math.sqrt(((LAMBDA * L) / Math.PI) * Math.sqrt(g1 / (1 - g1)));
}

describe('beams of the three-mirror system', () => {
  it('eta_fb = 1 when M3 fits the wavefront of the laser beam arriving at it (phase-conjugate return), and eta_rt = 1', () => {
    // laser waist on the flat M2 from Kogelnik & Li (1966); R(z) = z (1 + (zR/z)^2) (Siegman, Lasers, ch. 17);
    // a mirror fitting the phase front sends the beam back on itself (Kogelnik & Li 1966: mirrors as phase fronts)
    const w0 = flatOcWaist(0.2, 1);
    const zR = (Math.PI * w0 * w0) / LAMBDA;
    const R3 = 0.3 * (1 + (zR / 0.3) ** 2);
    const res = computeBeams(scenario({ external: { return_mirror: { reflectivity: 0.99, radius: R3 } } }));
    // round-off only: 1e-10
    expect(Math.abs(res.feedbackEfficiency - 1)).toBeLessThan(1e-10);
    // the external cavity flat M2 + R3 has the same waist on M2 (zR^2 = L2 (R3 - L2), Kogelnik & Li 1966): matched
    expect(res.beams.external_stable).toBe(true);
    expect(Math.abs(res.roundtripEfficiency - 1)).toBeLessThan(1e-10);
    expect(res.feedbackSource).toBe('geometry');
    expect(res.roundtripSource).toBe('geometry');
    // beam sizes: waist on M2, w(L2) = w0 sqrt(1 + (L2/zR)^2) on M3 (Siegman ch. 17)
    expect(res.beams.radius_at_M2_m!).toBeCloseTo(w0, 12);
    expect(Math.abs(res.beams.radius_at_M3_m! / (w0 * Math.sqrt(1 + (0.3 / zR) ** 2)) - 1)).toBeLessThan(
      1e-10,
    );
    // gap waist on M2 itself, peak intensity 2/(pi w0^2) per watt (TEM00 peak, Siegman ch. 17)
    expect(res.beams.gap_waist_position_m).toBe(0);
    expect(Math.abs(res.beams.gap_waist_m! / w0 - 1)).toBeLessThan(1e-10);
    expect(Math.abs(res.beams.peak_intensity_per_W_m2! * Math.PI * w0 * w0 - 2)).toBeLessThan(1e-9);
    expect(res.beams.laser_stable).toBe(true);
    expect(res.beams.laser_g1g2).toBeCloseTo(0.8, 12);
  });

  it('eta_fb < 1 for any other M3; with a flat M3 it is the overlap of the beam with itself after 2 L2', () => {
    // flat M3 returns the beam unchanged after 2 L2 of free space: Kogelnik (1965) formula with d = 2 L2
    const w0 = flatOcWaist(0.2, 1);
    const flat = computeBeams(
      scenario({ external: { return_mirror: { reflectivity: 0.99, radius: 'flat' } } }),
    );
    expect(Math.abs(flat.feedbackEfficiency - waistOverlap(w0, w0, 0.6, LAMBDA))).toBeLessThan(1e-12);
    expect(flat.feedbackEfficiency).toBeLessThan(1);
    // flat/flat external cavity: no eigenmode, eta_rt from one round trip, the same beam after 2 L2 here
    expect(flat.beams.external_stable).toBe(false);
    expect(flat.beams.external_g2g3).toBe(1);
    expect(Math.abs(flat.roundtripEfficiency - waistOverlap(w0, w0, 0.6, LAMBDA))).toBeLessThan(1e-12);
    expect(flat.beams.notes.join(' ')).toMatch(/no Gaussian eigenmode/);
    expect(flat.feedbackBasis).toBe('unstable gap: single-bounce overlap');
    expect(flat.roundtripBasis).toBe('unstable gap: geometric loss per round trip');
    for (const R3 of [0.2, 0.5, 2, 10, -1]) {
      const r = computeBeams(scenario({ external: { return_mirror: { reflectivity: 0.99, radius: R3 } } }));
      expect(r.feedbackEfficiency).toBeGreaterThan(0);
      expect(r.feedbackEfficiency).toBeLessThan(1);
    }
  });

  it('stable gap: eta_fb is the overlap of the laser beam with the gap eigenmode at M2, eta_rt = 1', () => {
    // Flat M2 (flat substrate, no lens) and M3 of radius R3 at L2: the gap's eigenmode has its
    // waist on M2 with z_R^2 = L2 (R3 - L2) (Kogelnik and Li, Appl. Opt. 5, 1550 (1966); Siegman,
    // Lasers, ch. 19), the laser's waist also sits on M2. Two coaxial beams with waists at the
    // same plane overlap by 4 / (w1/w2 + w2/w1)^2 (Kogelnik, Bell Syst. Tech. J. 44, 455 (1965);
    // Siegman, Lasers, ch. 17, mode matching).
    const w0 = flatOcWaist(0.2, 1);
    for (const R3 of [0.5, 2, 10]) {
      const res = computeBeams(scenario({ external: { return_mirror: { reflectivity: 0.99, radius: R3 } } }));
      expect(res.beams.external_stable).toBe(true);
      const wGap = Math.sqrt((LAMBDA / Math.PI) * Math.sqrt(0.3 * (R3 - 0.3)));
      const expected = 4 / (w0 / wGap + wGap / w0) ** 2;
      // two routes (ABCD q algebra against the waist formula): round-off, 1e-10
      expect(Math.abs(res.feedbackEfficiency / expected - 1)).toBeLessThan(1e-10);
      expect(res.feedbackEfficiency).toBeLessThan(1);
      // docs/model.md §2.4: the eigenmode reproduces itself; mismatch is not a per-round-trip loss
      expect(res.roundtripEfficiency).toBe(1);
      expect(res.feedbackBasis).toBe('eigenmode overlap');
      expect(res.feedbackSource).toBe('geometry');
    }
    // a given round-trip efficiency stays a per-round-trip loss and is reported as given
    const given = computeBeams(scenario({ external: { roundtrip_efficiency: 0.97 } }));
    expect(given.roundtripEfficiency).toBe(0.97);
    expect(given.roundtripBasis).toBe('given');
    expect(given.feedbackBasis).toBe('eigenmode overlap');
  });

  it('the finesse of a stable, mismatched gap counts no mismatch per round trip: pi sqrt(rho) / (1 - rho), rho = r2 r3', () => {
    // Airy finesse (Siegman, Lasers, ch. 11; Hecht, Optics, sec. 9.6) with r3' = r3 (empty gap,
    // eta_rt = 1), whatever the mode match: R2 0.9, R3 0.99 here
    const s = scenario({ external: { return_mirror: { reflectivity: 0.99, radius: 2 } } });
    const d = deriveAll(s).derived;
    expect(d.feedback_efficiency).toBeLessThan(0.999);
    const rho = Math.sqrt(0.9 * 0.99);
    // round-off: the same formula from the same mirror numbers, 1e-12
    expect(Math.abs(d.finesse_external / ((Math.PI * Math.sqrt(rho)) / (1 - rho)) - 1)).toBeLessThan(1e-12);
    expect(d.feedback_efficiency_basis).toBe('eigenmode overlap');
  });

  it('returnOverlap: 1 for the phase-conjugating radius, falling either side of it', () => {
    // phase-conjugate return (Kogelnik & Li 1966) vs the Kogelnik (1965) overlap; a mirror of any other radius
    // mismatches curvature
    const q = qFromWaist(0.4e-3, 0.1, LAMBDA); // 10 cm past a 0.4 mm waist
    const zAtMirror = 0.1 + 0.5;
    const zR = q.im;
    const Rfit = zAtMirror * (1 + (zR / zAtMirror) ** 2);
    expect(Math.abs(returnOverlap(q, 0.5, Rfit) - 1)).toBeLessThan(1e-12);
    expect(returnOverlap(q, 0.5, Rfit * 1.2)).toBeLessThan(1);
    expect(returnOverlap(q, 0.5, Rfit * 0.8)).toBeLessThan(1);
  });

  it('a refractive index n uses the reduced length L1/n: n = 2, L1 = 0.4 m gives the n = 1, L1 = 0.2 m mode', () => {
    // Siegman, Lasers, ch. 15: a flat-faced slab of index n is free space of reduced length d/n
    const a = computeBeams(scenario());
    const b = computeBeams(scenario({ laser: { cavity_length: 0.4, refractive_index: 2 } }));
    expect(b.beams.radius_at_M2_m!).toBeCloseTo(a.beams.radius_at_M2_m!, 15);
    expect(b.beams.laser_g1g2).toBeCloseTo(a.beams.laser_g1g2, 14);
    expect(b.beams.notes.join(' ')).toMatch(/reduced length/);
  });

  it('curved output coupler: the substrate lens and the backside radius -R2/n_sub keep a matched system matched', () => {
    // consistency of the two substrate models (Hecht, Optics, sec. 5.2 refraction; Siegman ch. 15 reduced slopes):
    // symmetric laser R1 = R2 = 1 m; choose M3 to fit the beam leaving the substrate, the external
    // eigenmode must then be the injected beam (eta_rt = 1) and eta_fb = 1
    const base = scenario({ laser: { output_coupler: { reflectivity: 0.9, radius: 1 } } });
    const probe = computeBeams(base);
    expect(probe.beams.laser_stable).toBe(true);
    // Kogelnik & Li symmetric resonator, g = 0.8: w at the mirrors^2 = (lambda L/pi)/sqrt(1 - g^2)
    const wM = Math.sqrt((LAMBDA * 0.2) / Math.PI / Math.sqrt(1 - 0.64));
    expect(Math.abs(probe.beams.radius_at_M2_m! / wM - 1)).toBeLessThan(1e-10);
    // beam leaving the substrate: wavefront 1/R = 1/1 m + (n_sub - 1)/1 m = 1.5/m (R = R2/n_sub), w = wM;
    // free propagation to M3 by the waist formulas (Siegman ch. 17)
    const Rw = 1 / 1.5;
    const zR = (Math.PI * wM * wM) / LAMBDA;
    // q = 1 / (1/R - i lambda/(pi w^2)): z = Re q past the waist, b = Im q its Rayleigh range (Siegman ch. 17)
    const invRe = 1 / Rw;
    const invIm = -LAMBDA / (Math.PI * wM * wM);
    const d2 = invRe * invRe + invIm * invIm;
    const z = invRe / d2;
    const b = -invIm / d2;
    expect(b).toBeLessThan(zR); // the diverging substrate lens shrinks the Rayleigh range
    const zAt3 = z + 0.3;
    const R3 = zAt3 * (1 + (b / zAt3) ** 2);
    const res = computeBeams(
      scenario({
        laser: { output_coupler: { reflectivity: 0.9, radius: 1 } },
        external: { return_mirror: { reflectivity: 0.99, radius: R3 } },
      }),
    );
    expect(Math.abs(res.feedbackEfficiency - 1)).toBeLessThan(1e-9);
    expect(res.beams.external_stable).toBe(true);
    // g2 for M2 seen from the gap: 1 - L2/(-R2/n_sub) = 1 + 1.5 * 0.3
    expect(res.beams.external_g2g3).toBeCloseTo((1 + 1.5 * 0.3) * (1 - 0.3 / R3), 12);
    expect(Math.abs(res.roundtripEfficiency - 1)).toBeLessThan(1e-9);
    // the waist of the outgoing beam is virtual (behind M2): no gap waist
    expect(res.beams.gap_waist_m).toBeNull();
    expect(res.beams.peak_intensity_per_W_m2).toBeNull();
  });

  it('a real waist inside the gap (convex M2, converging substrate lens) is reported with position, size and peak intensity', () => {
    // laser L1 = 0.2 m, R1 = 1 m, R2 = -2 m (convex towards the laser): g1 = 0.8, g2 = 1.1, g1 g2 = 0.88, stable.
    // Kogelnik & Li (1966): w2^2 = (lambda L/pi) sqrt(g1/(g2(1 - g1 g2))); the wavefront arriving at M2 fits it, R = -2 m.
    // substrate lens f = -R2/(n_sub - 1) = 4 m (Hecht, Optics, sec. 5.2): 1/R' = 1/R - 1/f = -0.75 /m.
    // waist from (w, R') (Siegman, Lasers, ch. 17): distance -R'/(1 + (lambda R'/(pi w^2))^2),
    // w0 = w / sqrt(1 + (pi w^2/(lambda R'))^2)
    const res = computeBeams(scenario({ laser: { output_coupler: { reflectivity: 0.9, radius: -2 } } }));
    const g1 = 0.8;
    const g2 = 1.1;
    const w = Math.sqrt(((LAMBDA * 0.2) / Math.PI) * Math.sqrt(g1 / (g2 * (1 - g1 * g2))));
    expect(Math.abs(res.beams.radius_at_M2_m! / w - 1)).toBeLessThan(1e-10);
    const Rp = 1 / (1 / -2 - 1 / 4);
    const a = (LAMBDA * Rp) / (Math.PI * w * w);
    const distance = -Rp / (1 + a * a);
    const w0 = w / Math.sqrt(1 + 1 / (a * a));
    expect(distance).toBeGreaterThan(0);
    expect(distance).toBeLessThan(0.3);
    // two routes to the same numbers (q algebra vs waist formulas): round-off, 1e-9
    expect(Math.abs(res.beams.gap_waist_position_m! / distance - 1)).toBeLessThan(1e-9);
    expect(Math.abs(res.beams.gap_waist_m! / w0 - 1)).toBeLessThan(1e-9);
    expect(Math.abs(res.beams.peak_intensity_per_W_m2! / (2 / (Math.PI * w0 * w0)) - 1)).toBeLessThan(1e-9);
  });

  it('unstable laser (g1 g2 < 0): feedback 0 with a note', () => {
    // M1 concave 0.15 m, flat M2, L1 = 0.2 m: g1 = -1/3, g2 = 1, outside 0 < g1 g2 < 1 (Kogelnik & Li 1966)
    const unstable = computeBeams(
      scenario({ laser: { rear_mirror: { reflectivity: 0.999, radius: 0.15 } } }),
    );
    expect(unstable.beams.laser_stable).toBe(false);
    expect(unstable.feedbackEfficiency).toBe(0);
    expect(unstable.beams.notes.join(' ')).toMatch(/unstable/);
  });

  it('flat/flat laser: no eigenmode is a result (eta_fb 0, eta_rt 1 for a stable external cavity, notes), not an exception', () => {
    // plane-parallel resonator g1 g2 = 1 is marginal (Kogelnik & Li 1966)
    const res = computeBeams(scenario({ laser: { rear_mirror: { reflectivity: 0.999, radius: 'flat' } } }));
    expect(res.beams.laser_stable).toBe(false);
    expect(res.beams.laser_g1g2).toBe(1);
    expect(res.beams.radius_at_M1_m).toBeNull();
    expect(res.beams.radius_at_M3_m).toBeNull();
    expect(res.feedbackEfficiency).toBe(0);
    expect(res.beams.external_stable).toBe(true); // flat M2 + R3 = 1 m at 0.3 m: g2 g3 = 0.7
    expect(res.roundtripEfficiency).toBe(1);
    expect(res.beams.notes.join(' ')).toMatch(/plane-parallel/);
  });

  it('scenario numbers replace the computed efficiencies (source scenario)', () => {
    // MODEL.md section 2 / schema: external.feedback_efficiency and roundtrip_efficiency override 'auto'
    const res = computeBeams(
      scenario({ external: { feedback_efficiency: 0.42, roundtrip_efficiency: 0.9 } }),
    );
    expect(res.feedbackEfficiency).toBe(0.42);
    expect(res.roundtripEfficiency).toBe(0.9);
    expect(res.feedbackSource).toBe('scenario');
    expect(res.roundtripSource).toBe('scenario');
    const half = computeBeams(scenario({ external: { roundtrip_efficiency: 0.5 } }));
    expect(half.feedbackSource).toBe('geometry');
    expect(half.roundtripSource).toBe('scenario');
  });

  it('no external section: laser beam only, external fields null/false, efficiencies 0', () => {
    // MODEL.md section 1: the free-running laser alone
    const res = computeBeams(scenario({ external: null }));
    expect(res.feedbackEfficiency).toBe(0);
    expect(res.roundtripEfficiency).toBe(0);
    expect(res.beams.external_stable).toBe(false);
    expect(res.beams.external_g2g3).toBeNaN();
    expect(res.beams.radius_at_M3_m).toBeNull();
    expect(res.beams.gap_waist_m).toBeNull();
    expect(res.beams.radius_at_M1_m).not.toBeNull();
  });
});
