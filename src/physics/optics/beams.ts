/**
 * Gaussian-beam geometry of the three-mirror system (docs/model.md §2.4): the laser's
 * TEM00 eigenmode, the beam it sends into the gap, the feedback overlap eta_fb and the
 * per-round-trip efficiency eta_rt of the external cavity.
 */
import type { Scenario } from '../../scenario/schema';
import type { BeamInfo } from '../../results/summary';
import type { Complex } from './airy';
import {
  backsideMirrorRadius_m,
  beamRadius_m,
  cascade,
  curvedMirror,
  distanceToWaist_m,
  freeSpace,
  propagateQ,
  substrateFocalLength_m,
  thinLens,
  twoMirrorEigenmode,
  waistRadius_m,
} from './gaussian';
import { gaussianOverlap } from './overlap';

/**
 * Refractive index assumed for the output coupler's substrate (a common optical glass
 * such as fused silica or BK7 is 1.45-1.52 in the visible and near infrared; common
 * practice, no source). The scenario has no key for it.
 */
export const SUBSTRATE_INDEX = 1.5;

/** Below this feedback overlap the geometry is reported as badly matched. */
const POOR_MATCH = 0.5;

/** What computeBeams returns: the beam report and the two coupling efficiencies. */
export interface BeamsResult {
  beams: BeamInfo;
  /** eta_fb, power overlap of the returned beam with the laser mode, 0..1 */
  feedbackEfficiency: number;
  /** eta_rt, power kept in the external mode per round trip, 0..1 */
  roundtripEfficiency: number;
  feedbackSource: 'geometry' | 'scenario';
  roundtripSource: 'geometry' | 'scenario';
  /** how eta_fb was obtained, in words (printed by `check`) */
  feedbackBasis: string;
  /** how eta_rt was obtained, in words */
  roundtripBasis: string;
}

/** The bases `check` prints beside the two efficiencies (docs/model.md §2.4). */
export const EFFICIENCY_BASIS = {
  eigenmode: 'eigenmode overlap',
  eigenmodeKeeps: 'stable gap: its eigenmode loses nothing to mismatch',
  singleBounce: 'unstable gap: single-bounce overlap',
  geometricLoss: 'unstable gap: geometric loss per round trip',
  noLaserMode: 'no laser eigenmode',
  assumedMatched: 'stable gap, entry assumed matched',
  noGapMode: 'no eigenmode in either cavity',
  given: 'given',
  noGap: 'no gap',
} as const;

/**
 * Beam sizes and coupling efficiencies from the mirror geometry.
 *
 * Geometry and assumptions:
 * - Laser: M1 (rear_mirror.radius) and M2 (output_coupler.radius, > 0 concave towards the
 *   laser cavity), spacing L1 filled with index n. The medium is taken as a flat-faced
 *   slab between mirrors in air, so q propagates over the reduced length L1/n and
 *   g_i = 1 - (L1/n)/R_i (Siegman, Lasers, ch. 15). laser_g1g2 is that product.
 * - Out through M2: the coating is on the laser side of a plano substrate of index
 *   SUBSTRATE_INDEX, so the substrate is a thin lens f = -R2/(n_sub - 1) (diverging for a
 *   concave coating); flat M2: no lens.
 * - Gap: free space L2; the gap element is thin (only its transmission matters).
 * - External cavity: M2 seen from the gap is the coating seen through the substrate,
 *   radius -R2/n_sub (the sign flips: concave towards the laser is convex towards the
 *   gap; the reflection happens inside the glass). g2 = 1 - L2/(-R2/n_sub), g3 = 1 - L2/R3.
 * - Stable gap (0 < g2 g3 < 1, docs/model.md §2.4): the gap's own TEM00 eigenmode is what
 *   circulates. eta_fb = power overlap of the laser's beam (through the substrate) with
 *   that eigenmode at M2 (Kogelnik and Li, Appl. Opt. 5, 1550 (1966); Siegman, Lasers,
 *   ch. 17 and 19-20); it applies on the way in and, by reciprocity, on the way back. The
 *   rest of the injected light goes into other transverse modes, which resonate at other
 *   lengths and are booked as lost. eta_rt = 1: the eigenmode reproduces itself and loses
 *   nothing to mismatch on its round trips (counting the mismatch on every round trip
 *   would cut the finesse); a number given in the scenario stays a per-round-trip loss
 *   (clipping, scatter).
 * - Unstable or marginal gap (no eigenmode): eta_fb = overlap at M2 of the beam returned
 *   after one bounce (out L2, M3 as a lens f = R3/2, back L2) with the time-reversed laser
 *   beam (q -> -q*); the substrate lens multiplies both fields by the same phase, so the
 *   overlap is the same just inside M2. eta_rt = overlap of the injected beam with itself
 *   after one round trip M2 -> M3 -> M2, the geometric power kept per round trip.
 * - Gap waist: where the outgoing beam has its waist between M2 and M3 (ends included, so
 *   the waist on a flat M2 is reported at position 0); peak
 *   intensity per watt there is 2/(pi w0^2) (TEM00 peak over power, Siegman ch. 17).
 * - Scenario numbers for external.feedback_efficiency / roundtrip_efficiency replace the
 *   computed values (source 'scenario').
 * Special cases, all results with a sentence in beams.notes, never exceptions: no laser
 * eigenmode (flat/flat, unstable) gives eta_fb = 0 from geometry (and eta_rt = 1 if the
 * external cavity is stable, as if matched, else 0); no `external` section gives the
 * laser beam only, external fields null/false, external_g2g3 NaN and both efficiencies 0.
 */
export function computeBeams(s: Scenario): BeamsResult {
  const wavelength = s.laser.wavelength;
  const n = s.laser.refractive_index;
  const r1 = s.laser.rear_mirror.radius;
  const r2 = s.laser.output_coupler.radius;
  const laser = twoMirrorEigenmode(s.laser.cavity_length / n, r1, r2, wavelength);
  const notes: string[] = [];
  if (n !== 1) {
    notes.push(
      `laser mode computed over the reduced length L1/n = ${fmt(s.laser.cavity_length / n)} m (gain medium taken as a flat-faced slab between the mirrors)`,
    );
  }
  if (laser.reason) notes.push(`laser cavity: ${laser.reason}.`);

  const beams: BeamInfo = {
    laser_stable: laser.stability === 'stable',
    laser_g1g2: laser.g1g2,
    external_stable: false,
    external_g2g3: NaN,
    radius_at_M1_m: laser.spotAtMirror1_m,
    radius_at_M2_m: laser.spotAtMirror2_m,
    radius_at_M3_m: null,
    gap_waist_m: null,
    gap_waist_position_m: null,
    peak_intensity_per_W_m2: null,
    notes,
  };

  const ext = s.external;
  if (!ext) {
    notes.push('no external cavity: feedback and round-trip efficiencies are 0.');
    return {
      beams,
      feedbackEfficiency: 0,
      roundtripEfficiency: 0,
      feedbackSource: 'geometry',
      roundtripSource: 'geometry',
      feedbackBasis: EFFICIENCY_BASIS.noGap,
      roundtripBasis: EFFICIENCY_BASIS.noGap,
    };
  }

  const l2 = ext.length;
  const r3 = ext.return_mirror.radius;
  const r2Back = backsideMirrorRadius_m(r2, SUBSTRATE_INDEX);
  const external = twoMirrorEigenmode(l2, r2Back, r3, wavelength);
  beams.external_stable = external.stability === 'stable';
  beams.external_g2g3 = external.g1g2;
  if (external.reason) notes.push(`external cavity: ${external.reason}.`);

  let etaFb: number;
  let etaRt: number;
  let fbBasis: string;
  let rtBasis: string;
  if (laser.qAtMirror2) {
    const qOut = propagateQ(laser.qAtMirror2, thinLens(substrateFocalLength_m(r2, SUBSTRATE_INDEX)));
    const qAtM3 = propagateQ(qOut, freeSpace(l2));
    beams.radius_at_M3_m = beamRadius_m(qAtM3, wavelength);
    // a waist on M2 itself (flat output coupler, to round-off) counts as in the gap
    const edge = 1e-9 * l2;
    const waistAt = distanceToWaist_m(qOut);
    if (waistAt >= -edge && waistAt <= l2 + edge) {
      const w0 = waistRadius_m(qOut, wavelength);
      beams.gap_waist_m = w0;
      beams.gap_waist_position_m = Math.min(Math.max(waistAt, 0), l2);
      beams.peak_intensity_per_W_m2 = 2 / (Math.PI * w0 * w0);
    }
    if (external.qAtMirror1) {
      etaFb = gaussianOverlap(qOut, external.qAtMirror1);
      etaRt = 1;
      fbBasis = EFFICIENCY_BASIS.eigenmode;
      rtBasis = EFFICIENCY_BASIS.eigenmodeKeeps;
      if (etaFb < POOR_MATCH)
        notes.push(
          `the laser's beam matches the gap's eigenmode by only ${fmt(etaFb)} (mode mismatch at M2).`,
        );
    } else {
      etaFb = returnOverlap(qOut, l2, r3);
      const roundTrip = cascade(freeSpace(l2), curvedMirror(r3), freeSpace(l2), curvedMirror(r2Back));
      etaRt = gaussianOverlap(qOut, propagateQ(qOut, roundTrip));
      fbBasis = EFFICIENCY_BASIS.singleBounce;
      rtBasis = EFFICIENCY_BASIS.geometricLoss;
      if (etaFb < POOR_MATCH)
        notes.push(
          `the beam returned by M3 overlaps the laser mode by only ${fmt(etaFb)} (mode mismatch at M2).`,
        );
      notes.push(
        `the external cavity has no Gaussian eigenmode: feedback efficiency ${fmt(etaFb)} is the single-bounce overlap, round-trip efficiency ${fmt(etaRt)} the overlap of the injected beam with itself after one round trip.`,
      );
    }
  } else {
    etaFb = 0;
    etaRt = external.hasMode ? 1 : 0;
    fbBasis = EFFICIENCY_BASIS.noLaserMode;
    rtBasis = external.hasMode ? EFFICIENCY_BASIS.assumedMatched : EFFICIENCY_BASIS.noGapMode;
    notes.push(
      'the laser has no Gaussian eigenmode, so no feedback efficiency follows from geometry (0); give external.feedback_efficiency for a guided or thermally lensed mode.',
    );
    notes.push(
      external.hasMode
        ? 'round-trip efficiency 1 assumes the light enters the external mode matched.'
        : 'the external cavity has no Gaussian eigenmode either: round-trip efficiency 0.',
    );
  }

  let feedbackSource: 'geometry' | 'scenario' = 'geometry';
  let roundtripSource: 'geometry' | 'scenario' = 'geometry';
  if (typeof ext.feedback_efficiency === 'number') {
    notes.push(
      `feedback efficiency ${fmt(ext.feedback_efficiency)} taken from the scenario (geometry gives ${fmt(etaFb)}).`,
    );
    etaFb = ext.feedback_efficiency;
    feedbackSource = 'scenario';
    fbBasis = EFFICIENCY_BASIS.given;
  }
  if (typeof ext.roundtrip_efficiency === 'number') {
    notes.push(
      `round-trip efficiency ${fmt(ext.roundtrip_efficiency)} taken from the scenario (geometry gives ${fmt(etaRt)}).`,
    );
    etaRt = ext.roundtrip_efficiency;
    roundtripSource = 'scenario';
    rtBasis = EFFICIENCY_BASIS.given;
  }
  return {
    beams,
    feedbackEfficiency: etaFb,
    roundtripEfficiency: etaRt,
    feedbackSource,
    roundtripSource,
    feedbackBasis: fbBasis,
    roundtripBasis: rtBasis,
  };
}

/**
 * Power overlap of the beam returned by a mirror at distance L with the time-reversed
 * outgoing beam at the starting plane: eta = overlap(q_back, -q_out*), where
 * q_back = propagate(q_out, free(L), mirror(R), free(L)). Time reversal keeps w and flips
 * the wavefront curvature, q -> -q*. Dimensionless, 1 for a phase-conjugating mirror
 * (R equal to the wavefront radius at the mirror).
 * Reference: Kogelnik, Bell Syst. Tech. J. 44, 455 (1965); Siegman, Lasers, ch. 17.
 * @param qOut q of the outgoing beam at the plane, m
 * @param distance_m distance to the mirror, m
 * @param mirrorRadius_m mirror radius, > 0 concave towards the beam, Infinity flat
 */
export function returnOverlap(qOut: Complex, distance_m: number, mirrorRadius_m: number): number {
  const back = propagateQ(
    qOut,
    cascade(freeSpace(distance_m), curvedMirror(mirrorRadius_m), freeSpace(distance_m)),
  );
  return gaussianOverlap(back, { re: -qOut.re, im: qOut.im });
}

function fmt(v: number): string {
  return v.toPrecision(4);
}
