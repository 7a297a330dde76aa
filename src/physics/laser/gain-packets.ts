/**
 * The gain medium of the round-trip engine as a bank of homogeneous packets (spectral
 * classes), docs/model.md §3.5. Packet j has a centre offset delta_j from the gain peak
 * (the carrier), a half width gamma_j and a weight c_j; its unit-peak single-pole
 * (Lorentzian) response is H_j(nu) = gamma_j / (gamma_j + i (nu - delta_j)) in the
 * envelope's e^{+i 2 pi nu t} convention, so Re H_j is the Lorentzian line
 * L_j(nu) = 1 / (1 + ((nu - delta_j) / gamma_j)^2) and Im H_j the dispersion that pulls a
 * mode towards the line centre.
 *
 * - Homogeneous broadening: every packet shares one inversion. A Lorentzian line is one
 *   packet of the line's half width (exact); a Gaussian or parabolic line is a row of
 *   narrow packets (half width FWHM / 16, spaced 0.75 half widths) weighted by the shape;
 *   the realised line is the shape convolved with that narrow Lorentzian.
 * - Inhomogeneous (Doppler) broadening: `linewidth` is the Gaussian FWHM, packets of half
 *   width `homogeneous_width` at most 0.75 of it apart, each with its own inversion;
 *   the two passes of a standing-wave tube see a velocity class at +delta_j and -delta_j
 *   (mirrored offsets), so a mode at line centre saturates one class with both waves
 *   (the Lamb dip). Classes whose weight is below 1e-3 of the peak are left out; what they
 *   would add at the lasing modes is below 1e-5 of the gain (their Lorentzian tails).
 *
 * Every filter is discretised by the bilinear transform with the centre and width
 * pre-warped to the sample rate, so its response is exactly zero at the band edge and
 * leaves no gain floor across the band (a forward-Euler step leaves about 2 % of the
 * peak everywhere). The weights are normalised on the discrete responses themselves:
 * with every inversion at 1 the small-signal power gain at the gain peak is exactly the
 * cold-cavity loss (threshold at p = 1).
 */
import type { GainSpec } from '../../scenario/schema';
import { gainShape } from './modes';

/** Smallest weight (relative to the strongest packet) kept in a Doppler bank. */
export const PACKET_WEIGHT_FLOOR = 1e-3;
/** Largest spacing of packets in units of their half width (coarser spacing ripples the gain). */
export const PACKET_SPACING = 0.75;
/** Half width of the packets that build a homogeneous non-Lorentzian line, in units of its FWHM. */
export const HOMOGENEOUS_PACKET_WIDTH = 1 / 16;

/**
 * A packet bank discretised for one time step. Each filter feeds the gain through two
 * (inversion, weight) pairs and is saturated into two inversions: in a Doppler bank the
 * filter at +delta is class +delta's forward pass and class -delta's backward pass (the
 * same centre, width and input), so one filter serves both and the bank costs one filter
 * per class; in a homogeneous bank the second pair has weight 0.
 */
export interface PacketBank {
  /** number of filters */
  filters: number;
  /** number of inversions: 1 (homogeneous) or one per class */
  inversions: number;
  /** the two inversions each filter's gain is weighted by, and the weights */
  invA: Int32Array;
  invB: Int32Array;
  weightA: Float64Array;
  weightB: Float64Array;
  /** share of each filter's |y|^2 in the saturating power of invA and invB */
  satA: Float64Array;
  satB: Float64Array;
  /** centre offset of each filter from the gain peak, Hz */
  centre_Hz: Float64Array;
  /** half width of each filter, Hz */
  halfWidth_Hz: Float64Array;
  /** bilinear coefficients: y_n = A y_{n-1} + B (x_n + x_{n-1}), complex */
  Ar: Float64Array;
  Ai: Float64Array;
  Br: Float64Array;
  Bi: Float64Array;
  dt: number;
  homogeneous: boolean;
}

/** Build the packet bank of a gain line for time step dt (s). */
export function buildPacketBank(gain: GainSpec, dt: number): PacketBank {
  const homogeneous = gain.broadening === 'homogeneous';
  const fwhm = gain.linewidth;
  const centres: number[] = [];
  let width: number;
  const wA: number[] = [];
  const wB: number[] = [];
  const iA: number[] = [];
  const iB: number[] = [];
  if (homogeneous && gain.shape === 'lorentzian') {
    width = fwhm / 2;
    centres.push(0);
    wA.push(1);
  } else if (homogeneous) {
    width = fwhm * HOMOGENEOUS_PACKET_WIDTH;
    const step = PACKET_SPACING * width;
    const reach = gain.shape === 'parabolic' ? fwhm / Math.SQRT2 : 1.6 * fwhm;
    const n = Math.ceil(reach / step);
    for (let k = -n; k <= n; k++) {
      const f = gainShape(gain.shape, k * step, fwhm);
      if (f <= 0) continue;
      centres.push(k * step);
      wA.push(f);
    }
  } else {
    width = gain.homogeneous_width;
    // Doppler classes: Gaussian weight exp(-4 ln2 d^2 / FWHM^2) down to the floor
    const reach = fwhm * Math.sqrt(Math.log(1 / PACKET_WEIGHT_FLOOR) / (4 * Math.LN2));
    const n = Math.max(1, Math.ceil(reach / (PACKET_SPACING * width)));
    const step = reach / n;
    for (let k = -n; k <= n; k++) {
      centres.push(k * step);
      // filter k: class k's forward pass (+delta_k) and class -k's backward pass (-delta_{-k} = +delta_k)
      wA.push(gainShape('gaussian', k * step, fwhm) / 2);
      wB.push(gainShape('gaussian', -k * step, fwhm) / 2);
      iA.push(k + n);
      iB.push(-k + n);
    }
  }
  const F = centres.length;
  const bank: PacketBank = {
    filters: F,
    inversions: homogeneous ? 1 : F,
    invA: homogeneous ? new Int32Array(F) : Int32Array.from(iA),
    invB: homogeneous ? new Int32Array(F) : Int32Array.from(iB),
    weightA: Float64Array.from(wA),
    weightB: homogeneous ? new Float64Array(F) : Float64Array.from(wB),
    // Doppler: S_i = (|y_{+delta_i}|^2 + |y_{-delta_i}|^2) / 2, each filter half to each class it serves
    satA: new Float64Array(F).fill(homogeneous ? 0 : 0.5),
    satB: new Float64Array(F).fill(homogeneous ? 0 : 0.5),
    centre_Hz: Float64Array.from(centres),
    halfWidth_Hz: new Float64Array(F).fill(width),
    Ar: new Float64Array(F),
    Ai: new Float64Array(F),
    Br: new Float64Array(F),
    Bi: new Float64Array(F),
    dt,
    homogeneous,
  };
  for (let j = 0; j < F; j++) {
    const c = bilinearPole(centres[j], width, dt);
    bank.Ar[j] = c.Ar;
    bank.Ai[j] = c.Ai;
    bank.Br[j] = c.Br;
    bank.Bi[j] = c.Bi;
  }
  // normalise: small-signal gain Re sum_j w_j H_j(0) = 1 at the gain peak (all inversions 1)
  const peak = bankResponse(bank, 0, null).re;
  for (let j = 0; j < F; j++) {
    bank.weightA[j] /= peak;
    bank.weightB[j] /= peak;
  }
  // homogeneous: the shared inversion is saturated by the gain-weighted filtered power, so a
  // field at frequency nu saturates it in proportion to the line shape there (1 at the peak)
  if (homogeneous) for (let j = 0; j < F; j++) bank.satA[j] = bank.weightA[j];
  return bank;
}

/**
 * Bilinear-transform coefficients of y' = (-2 pi gamma + i 2 pi delta) y + 2 pi gamma x,
 * with delta and gamma pre-warped so the discrete response peaks at delta with half width
 * gamma: y_n = A y_{n-1} + B (x_n + x_{n-1}).
 */
export function bilinearPole(
  centre_Hz: number,
  halfWidth_Hz: number,
  dt: number,
): { Ar: number; Ai: number; Br: number; Bi: number } {
  // warp: the discrete frequency nu maps to the analog (1 / (pi dt)) tan(pi nu dt)
  const warp = (nu: number) => Math.tan(Math.PI * nu * dt) / (Math.PI * dt);
  const d = warp(centre_Hz);
  const sec2 = 1 / Math.cos(Math.PI * centre_Hz * dt) ** 2;
  const g = halfWidth_Hz * sec2;
  // p = -2 pi g + i 2 pi d ; q = 2 pi g
  const pr = -2 * Math.PI * g;
  const pi = 2 * Math.PI * d;
  const q = 2 * Math.PI * g;
  const h = dt / 2;
  // A = (1 + p h) / (1 - p h), B = q h / (1 - p h)
  const nr = 1 + pr * h;
  const ni = pi * h;
  const dr = 1 - pr * h;
  const di = -pi * h;
  const den = dr * dr + di * di;
  return {
    Ar: (nr * dr + ni * di) / den,
    Ai: (ni * dr - nr * di) / den,
    Br: (q * h * dr) / den,
    Bi: (-q * h * di) / den,
  };
}

/**
 * Discrete response sum_j w_j n_j H_j at frequency nu (Hz from the gain peak), complex;
 * inversions n (null: all 1). H_j(z) = B (1 + z^-1) / (1 - A z^-1), z = e^{i 2 pi nu dt}.
 */
export function bankResponse(
  bank: PacketBank,
  nu_Hz: number,
  inversions: ArrayLike<number> | null,
): { re: number; im: number } {
  const th = 2 * Math.PI * nu_Hz * bank.dt;
  const zr = Math.cos(th);
  const zi = -Math.sin(th); // z^-1
  let re = 0;
  let im = 0;
  for (let j = 0; j < bank.filters; j++) {
    // numerator B (1 + z^-1)
    const ur = 1 + zr;
    const ui = zi;
    const numr = bank.Br[j] * ur - bank.Bi[j] * ui;
    const numi = bank.Br[j] * ui + bank.Bi[j] * ur;
    // denominator 1 - A z^-1
    const denr = 1 - (bank.Ar[j] * zr - bank.Ai[j] * zi);
    const deni = -(bank.Ar[j] * zi + bank.Ai[j] * zr);
    const dd = denr * denr + deni * deni;
    const hr = (numr * denr + numi * deni) / dd;
    const hi = (numi * denr - numr * deni) / dd;
    const wn =
      inversions === null
        ? bank.weightA[j] + bank.weightB[j]
        : bank.weightA[j] * inversions[bank.invA[j]] + bank.weightB[j] * inversions[bank.invB[j]];
    re += wn * hr;
    im += wn * hi;
  }
  return { re, im };
}
