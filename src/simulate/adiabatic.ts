/**
 * The adiabatic path of docs/model.md §3.4: when the mirror crosses each resonance slowly
 * compared with every response time of the coupled system, the state follows the static
 * power-versus-position curve (on its up branch while the mirror moves forward, its down
 * branch while it moves back), so the driven statistics follow from that curve sampled
 * along x(t), drive offsets included. No time stepping of the fields.
 */
import type { CoupledParams } from '../physics/coupled/params';
import type { MirrorMotion } from '../physics/coupled/lane-engine';
import type { StaticResult, LaneMeans } from './references';
import { AnalysisOptions, DrivenAnalysis, DrivenResult } from './driven';

export interface AdiabaticOptions extends AnalysisOptions {
  motion: MirrorMotion;
  /** the drive's own rest offset (static positions are relative to it), m */
  rest_m: number;
  laneOffsets_m: number[];
  analysed_s: number;
  halfWavelength_m: number;
  peakSpeed_m_s: number;
}

/** Largest sample count per lane of the adiabatic path. */
export const ADIABATIC_MAX_SAMPLES = 2_000_000;

/** Sample the static curve along the motion; see the file comment. */
export function drivenAdiabatic(p: CoupledParams, stat: StaticResult, o: AdiabaticOptions): DrivenResult {
  const N = stat.positions_m.length;
  const L = o.laneOffsets_m.length;
  const M = p.M;
  const cell = o.halfWavelength_m / N;
  // resolve the curve (half a cell per sample at peak speed), the drive cycle and the band
  const f = o.driveFrequency_Hz ?? 0;
  let dt = Math.min(
    o.peakSpeed_m_s > 0 ? (0.5 * cell) / o.peakSpeed_m_s : Infinity,
    f > 0 ? 1 / (2000 * f) : Infinity,
    1 / (100 * o.detectionBandwidth_Hz),
  );
  let samples = Math.ceil(o.analysed_s / dt);
  if (samples > ADIABATIC_MAX_SAMPLES) {
    samples = ADIABATIC_MAX_SAMPLES;
    dt = o.analysed_s / samples;
  }
  const an = new DrivenAnalysis(p, L, dt, samples, 0, { ...o, motion: o.motion }, false);
  const row = an.row;
  const lerp = (branch: LaneMeans[], u: number, pick: (v: LaneMeans) => number) => {
    const j = Math.floor(u);
    const w = u - j;
    const a = branch[((j % N) + N) % N];
    const b = branch[(((j + 1) % N) + N) % N];
    return pick(a) * (1 - w) + pick(b) * w;
  };
  for (let k = 0; k < samples; k++) {
    const t = k * dt;
    const x = o.motion.position(t) - o.rest_m;
    const branch = o.motion.velocity(t) >= 0 ? stat.up : stat.down;
    for (let l = 0; l < L; l++) {
      let rel = (o.laneOffsets_m[l] + x) % o.halfWavelength_m;
      if (rel < 0) rel += o.halfWavelength_m;
      const u = rel / cell;
      const pe = lerp(branch, u, (v) => v.external_W);
      const po = lerp(branch, u, (v) => v.laserOutput_W);
      const pi = lerp(branch, u, (v) => v.intracavity_W);
      const near = branch[Math.round(u) % N];
      an.returned2 += lerp(branch, u, (v) => v.returned_W);
      if (l === 0) for (let m = 0; m < M; m++) row[5 + m] = lerp(branch, u, (v) => v.modePowers_W[m]);
      an.push(l, pe, po, pi, near.dominant, t, o.laneOffsets_m[0], 0, 0, near.modePowers_W);
    }
  }
  return {
    ...an.result(o.laneOffsets_m),
    balance: { laser: stat.worstBalance, external: stat.worstBalance, mismatch: stat.mismatch },
    steps: samples,
    laneSteps: samples * L,
    failed: null,
  };
}
