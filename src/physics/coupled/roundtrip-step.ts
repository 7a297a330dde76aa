/**
 * The time step of the round-trip engine, docs/model.md §3.5: the laser's round trip
 * tau_L is a whole number of steps (its delay needs no interpolation); the band
 * +-1/(2 dt) holds the gain line with margin; the gap's delay is at least 4.5 steps
 * (the centred 8-point interpolator needs four nodes on each side); and among the step counts that
 * satisfy this, the one that puts the gap's rest delay closest to a whole number of steps
 * is taken, because the interpolator's small loss and dispersion vanish at whole delays
 * (a dithered mirror moves the delay by femtoseconds, so the fraction stays where it is).
 */
import type { GainSpec } from '../../scenario/schema';
import { lagrangeCentredGain, MIN_CENTRED_DELAY, READ_POINTS } from '../../numerics/delay-line';
import { PACKET_WEIGHT_FLOOR } from '../laser/gain-packets';

export interface RoundTripStep {
  /** time step, s */
  dt: number;
  /** laser round trip in steps (whole) */
  laserSteps: number;
  /** gap rest delay in steps (fractional) */
  gapSteps: number;
  /** half width of the band, Hz */
  bandHalf_Hz: number;
  /** largest detuning from the gain peak the band must hold, Hz */
  needHalf_Hz: number;
  /**
   * power lost per gap round trip to the interpolator at the outermost mode of the run
   * (1 - |H|^2 at the rest fraction): its effect on the gap is this over the gap's own
   * round-trip loss
   */
  interpolationLoss: number;
}

/** How far past the outermost mode or gain packet the band reaches (fraction of that detuning). */
export const BAND_MARGIN = 0.5;

/** Half the extent of the gain line the packets cover, Hz. */
export function gainExtent_Hz(gain: GainSpec): number {
  const fwhm = gain.linewidth;
  if (gain.broadening === 'inhomogeneous')
    return fwhm * Math.sqrt(Math.log(1 / PACKET_WEIGHT_FLOOR) / (4 * Math.LN2)) + 3 * gain.homogeneous_width;
  if (gain.shape === 'parabolic') return fwhm / Math.SQRT2;
  if (gain.shape === 'gaussian') return 1.6 * fwhm;
  return 2 * fwhm; // Lorentzian: f = 0.06 at 2 FWHM
}

/**
 * Choose the step. tauL and tauE in s (tauE 0: no gap), the largest mode detuning in Hz,
 * the gap's round-trip power loss (1 - R2 R3') for the interpolation figure.
 */
export function chooseRoundTripStep(
  tauL: number,
  tauE: number,
  gain: GainSpec,
  maxModeDetuning_Hz: number,
  fsr_Hz: number,
  gapLoss: number,
): RoundTripStep {
  // the band holds the gain line and the modes reported, plus one laser mode spacing (modes
  // at the band's edge alias) and a margin
  const need = Math.max(gainExtent_Hz(gain), maxModeDetuning_Hz + fsr_Hz);
  let dtMax = 1 / (2 * need * (1 + BAND_MARGIN));
  if (tauE > 0) dtMax = Math.min(dtMax, tauE / (MIN_CENTRED_DELAY + 0.5));
  const n0 = Math.max(2, Math.ceil(tauL / dtMax));
  let best = n0;
  let bestFrac = 1;
  if (tauE > 0) {
    // search up to 25 % more steps per round trip for a near-whole gap delay
    const nMax = Math.max(n0, Math.ceil(n0 * 1.25));
    for (let n = n0; n <= nMax; n++) {
      const g = (tauE * n) / tauL;
      const f = Math.abs(g - Math.round(g));
      if (f < bestFrac - 1e-12) {
        best = n;
        bestFrac = f;
      }
      if (f < 0.02) break;
    }
  }
  const dt = tauL / best;
  const gapSteps = tauE > 0 ? tauE / dt : 0;
  const frac = gapSteps - Math.floor(gapSteps);
  const w = 2 * Math.PI * maxModeDetuning_Hz * dt;
  const h = tauE > 0 ? lagrangeCentredGain(frac, w, READ_POINTS) : 1;
  return {
    dt,
    laserSteps: best,
    gapSteps,
    bandHalf_Hz: 1 / (2 * dt),
    needHalf_Hz: need,
    interpolationLoss: tauE > 0 && gapLoss > 0 ? 1 - h * h : 0,
  };
}
