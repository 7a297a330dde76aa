/**
 * Longitudinal modes of the active cavity and the gain each one sees (docs/model.md §2 and §3.2).
 */
import type { GainSpec, LaserSpec } from '../../scenario/schema';
import { SPEED_OF_LIGHT_m_s } from '../constants';

/** The laser modes kept in a run, as parallel arrays (index m). */
export interface ModeSet {
  count: number;
  /** longitudinal order q of each mode */
  order: number[];
  /** mode number relative to the cold-cavity mode nearest the gain peak */
  index: number[];
  /** absolute optical frequency nu_m = q c / (2 n L1), Hz */
  frequency_Hz: number[];
  /** nu_m - nu_0 (gain peak), Hz */
  detuning_Hz: number[];
  /** vacuum wavelength c / nu_m, m */
  wavelength_m: number[];
  /** gain line shape f_m at the mode, 1 at the peak (dimensionless) */
  gainRel: number[];
  /** gain peak frequency nu_0 = c / lambda + center_offset, Hz */
  gainPeak_Hz: number;
  /** free spectral range c / (2 n L1), Hz */
  fsr_Hz: number;
}

/**
 * Gain line shape normalised to 1 at the peak, for detuning d from the peak and FWHM w.
 * Gaussian exp(-4 ln2 d^2 / w^2) (Doppler); Lorentzian 1 / (1 + (2 d / w)^2); parabolic
 * 1 - 2 d^2 / w^2, clipped at 0 (half maximum at d = w / 2 for all three).
 */
export function gainShape(shape: GainSpec['shape'], detuning_Hz: number, fwhm_Hz: number): number {
  const x = detuning_Hz / fwhm_Hz;
  switch (shape) {
    case 'gaussian':
      return Math.exp(-4 * Math.LN2 * x * x);
    case 'lorentzian':
      return 1 / (1 + 4 * x * x);
    case 'parabolic':
      return Math.max(0, 1 - 2 * x * x);
  }
}

/**
 * The cold-cavity modes that fall inside the gain curve: every q with pump_ratio * f_m at
 * or above gain.mode_floor (docs/model.md §3.2: reach well below free-running threshold, since
 * feedback lowers some modes' thresholds), at most gain.max_modes of them (the strongest),
 * and never fewer than the one mode nearest the peak.
 */
export function cavityModes(laser: LaserSpec): ModeSet {
  const c = SPEED_OF_LIGHT_m_s;
  const fsr = c / (2 * laser.refractive_index * laser.cavity_length);
  const nu0 = c / laser.wavelength + laser.gain.center_offset;
  const qPeak = Math.round(nu0 / fsr);
  const g = laser.gain;
  const floor = g.mode_floor;
  const candidates: { q: number; f: number; d: number }[] = [];
  // Search outwards until the shape stays below the floor on both sides (bounded search).
  const maxReach = 4096;
  for (let k = 0; k <= maxReach; k++) {
    let any = false;
    for (const q of k === 0 ? [qPeak] : [qPeak - k, qPeak + k]) {
      // Detuning formed from integer differences keeps full precision (nu ~ 5e14 Hz).
      const d = (q - qPeak) * fsr + (qPeak * fsr - nu0);
      const f = gainShape(g.shape, d, g.linewidth);
      if (g.pump_ratio * f >= floor || k === 0) {
        candidates.push({ q, f, d });
        any = any || g.pump_ratio * f >= floor;
      }
    }
    if (!any && k > 0 && Math.abs(k * fsr) > 3 * g.linewidth) break;
  }
  candidates.sort((a, b) => b.f - a.f);
  const kept = candidates.slice(0, Math.max(1, g.max_modes)).sort((a, b) => a.q - b.q);
  return {
    count: kept.length,
    order: kept.map((m) => m.q),
    index: kept.map((m) => m.q - qPeak),
    frequency_Hz: kept.map((m) => m.q * fsr),
    detuning_Hz: kept.map((m) => m.d),
    wavelength_m: kept.map((m) => c / (m.q * fsr)),
    gainRel: kept.map((m) => m.f),
    gainPeak_Hz: nu0,
    fsr_Hz: fsr,
  };
}

/** Lorentzian hole profile L(d) = 1 / (1 + (d / gamma_h)^2), gamma_h the hole half width. */
export function holeProfile(d_Hz: number, halfWidth_Hz: number): number {
  const x = d_Hz / halfWidth_Hz;
  return 1 / (1 + x * x);
}

/**
 * Cross-saturation matrix C_mk (row-major, count x count), docs/model.md §3.2.
 * Homogeneous: C_mk = 1 (one reservoir). Inhomogeneous (spectral hole burning):
 * C_mk = L(nu_m - nu_k) + L(nu_m + nu_k - 2 nu_0), the second term the mirror-image hole of
 * the standing wave (Lamb, Phys. Rev. 134, A1429 (1964)). Entries with k != m are
 * multiplied by gain.cross_saturation (spatial hole burning).
 */
export function crossSaturation(modes: ModeSet, gain: GainSpec): Float64Array {
  const n = modes.count;
  const C = new Float64Array(n * n);
  for (let m = 0; m < n; m++) {
    for (let k = 0; k < n; k++) {
      let v: number;
      if (gain.broadening === 'homogeneous') v = 1;
      else {
        const dm = modes.detuning_Hz[m];
        const dk = modes.detuning_Hz[k];
        v = holeProfile(dm - dk, gain.homogeneous_width) + holeProfile(dm + dk, gain.homogeneous_width);
      }
      C[m * n + k] = m === k ? v : v * gain.cross_saturation;
    }
  }
  return C;
}
