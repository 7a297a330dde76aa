/**
 * Everything computed before any time stepping (docs/model.md §2), gathered for
 * `dithercav check`, the run summary and the engines.
 */
import type { Derived } from '../results/summary';
import type { Scenario } from '../scenario/schema';
import { SPEED_OF_LIGHT_m_s } from './constants';
import { buildCoupledParams, CoupledParams } from './coupled/params';
import { singleModePower } from './laser/saturation';
import { computeBeams } from './optics/beams';
import { finesse, linewidth_Hz, phaseAveragedPowerRatio } from './optics/airy';
import { couplingLaw, misalignmentOf } from './optics/misalignment';

export interface DerivedAll {
  derived: Derived;
  params: CoupledParams;
}

/** Derived quantities and the engine parameters of a scenario. */
export function deriveAll(s: Scenario): DerivedAll {
  const beams = computeBeams(s);
  // docs/model.md §2.5: the return mirror's tilt and decentre scale the aligned coupling
  const mis = misalignmentOf(s);
  const params = buildCoupledParams(s, {
    feedback: beams.feedbackEfficiency * mis.factor,
    roundtrip: beams.roundtripEfficiency,
    couplingAt: couplingLaw(s, mis),
  });
  if (mis.note) beams.beams.notes.push(mis.note);
  const c = SPEED_OF_LIGHT_m_s;
  const ext = s.external;
  const fsrExt = ext ? c / (2 * ext.length) : NaN;
  const F = ext ? finesse(params.r2, params.r3eff) : NaN;
  const incoherent = ext
    ? phaseAveragedPowerRatio(params.r2, params.t2, params.r3eff) * params.feedbackEfficiency
    : NaN;
  const m = params.modes;
  // Single-mode estimate of the strongest mode under the saturation law of docs/model.md
  // §3.2 (P_sat (p f - 1) / C_mm homogeneous, 2 P_sat [(p f)^2 - 1] / C_mm Doppler); the
  // free-running reference run gives the real multimode value.
  let best = 0;
  for (let k = 0; k < m.count; k++) {
    const Cmm = params.cross[k * m.count + k];
    best = Math.max(
      best,
      singleModePower(
        params.inhomogeneous,
        params.pump * params.gainRel[k],
        Cmm,
        s.laser.gain.saturation_power,
      ),
    );
  }
  const derived: Derived = {
    fsr_laser_Hz: m.fsr_Hz,
    fsr_external_Hz: fsrExt,
    roundtrip_laser_s: params.roundTripLaser_s,
    roundtrip_external_s: params.roundTripExternal_s,
    finesse_external: F,
    linewidth_external_Hz: ext ? linewidth_Hz(fsrExt, F) : NaN,
    photon_lifetime_s: 1 / params.gammaC,
    photon_decay_rate_per_s: params.gammaC,
    feedback_efficiency: params.feedbackEfficiency,
    roundtrip_efficiency: params.roundtripEfficiency,
    feedback_efficiency_source: beams.feedbackSource,
    roundtrip_efficiency_source: beams.roundtripSource,
    feedback_efficiency_basis: beams.feedbackBasis,
    roundtrip_efficiency_basis: beams.roundtripBasis,
    incoherent_enhancement: incoherent,
    laser_class: params.classA ? 'A' : 'B',
    modes: m.index.map((index, k) => ({
      index,
      frequency_Hz: m.frequency_Hz[k],
      detuning_Hz: m.detuning_Hz[k],
      gain_rel: m.gainRel[k],
    })),
    beams: beams.beams,
    alignment: {
      tilt_rad: ext ? ext.return_mirror.tilt : 0,
      decenter_m: ext ? ext.return_mirror.decenter : 0,
      tilt_per_stroke_rad_m: s.actuator?.tilt_per_stroke ?? 0,
      aligned_feedback_efficiency: beams.feedbackEfficiency,
      coupling_factor: mis.factor,
      half_coupling_tilt_rad: mis.halfCouplingTilt_rad,
      axis_offset_at_M2_m: mis.axisOffsetAtM2_m,
      axis_tilt_rad: mis.axisSlope_rad,
      basis: mis.basis,
    },
    free_running_estimate_W: best,
  };
  return { derived, params };
}
