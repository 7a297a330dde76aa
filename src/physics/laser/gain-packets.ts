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

/**
 * Slots of the packet state of one (sheet, lane, filter): the filter output y (re, im),
 * the effective gain weight w = wA n[iA] + wB n[iB] of its lane, and the sum of |y|^2
 * since the lane's last inversion update (kept in sheet 0 only). One interleaved array
 * keeps what a filter step reads in one cache line.
 */
export const PACKET_SLOTS = 4;
export const SLOT_YR = 0;
export const SLOT_YI = 1;
export const SLOT_W = 2;
export const SLOT_YSQ = 3;

/** The bank's bilinear coefficients interleaved per filter: Ar, Ai, Br, Bi. */
export function packetCoefficients(bank: PacketBank): Float64Array {
  const c = new Float64Array(4 * bank.filters);
  for (let j = 0; j < bank.filters; j++) {
    c[4 * j] = bank.Ar[j];
    c[4 * j + 1] = bank.Ai[j];
    c[4 * j + 2] = bank.Br[j];
    c[4 * j + 3] = bank.Bi[j];
  }
  return c;
}

/**
 * One sample of every filter of `n` (1 to 4) consecutive lanes of one sheet:
 * y_j <- A_j y_j + B_j s, s = x_n + x_{n-1} the lane's input pair sum, and the lane's
 * gain sum G = sum_j w_j y_j. `state` holds PACKET_SLOTS per filter, lane after lane
 * (`first` is the slot index of the first lane's filter 0); `io` holds per lane
 * [s re, s im, G re, G im] from `ioFirst`. With `accumulate` each |y_j|^2 is added to its
 * SLOT_YSQ. The lanes share each coefficient load (which is what makes this loop about
 * twice as fast as one lane at a time); every lane's arithmetic, in order, is the same
 * whatever n is, so results do not depend on how lanes are grouped.
 */
// the kernels below index the state with the literal stride 4 and offsets 2 (weight) and 3
// (sum of |y|^2): keep them in step with the slots above
if (PACKET_SLOTS !== 4 || SLOT_W !== 2 || SLOT_YSQ !== 3)
  throw new Error('packet slots out of step with the kernels');

export function stepPacketLanes(
  state: Float64Array,
  coef: Float64Array,
  filters: number,
  first: number,
  n: number,
  io: Float64Array,
  ioFirst: number,
  accumulate: boolean,
): void {
  if (n === 4) stepPackets4(state, coef, filters, first, io, ioFirst, accumulate);
  else if (n === 2) stepPackets2(state, coef, filters, first, io, ioFirst, accumulate);
  else if (n === 1) stepPackets1(state, coef, filters, first, io, ioFirst, accumulate);
  else if (n === 3) {
    stepPackets2(state, coef, filters, first, io, ioFirst, accumulate);
    stepPackets1(state, coef, filters, first + 2 * PACKET_SLOTS * filters, io, ioFirst + 8, accumulate);
  } else throw new Error(`stepPacketLanes: ${n} lanes (1 to 4)`);
}

function stepPackets1(
  S: Float64Array,
  C: Float64Array,
  F: number,
  first: number,
  io: Float64Array,
  o: number,
  acc: boolean,
): void {
  const sr = io[o];
  const si = io[o + 1];
  let gr = 0;
  let gi = 0;
  for (let j = 0, q = first, c = 0; j < F; j++, q += 4, c += 4) {
    const ar = C[c];
    const ai = C[c + 1];
    const br = C[c + 2];
    const bi = C[c + 3];
    const y0r = S[q];
    const y0i = S[q + 1];
    const y1r = ar * y0r - ai * y0i + br * sr - bi * si;
    const y1i = ar * y0i + ai * y0r + br * si + bi * sr;
    S[q] = y1r;
    S[q + 1] = y1i;
    const w = S[q + 2];
    gr += w * y1r;
    gi += w * y1i;
    if (acc) S[q + 3] += y1r * y1r + y1i * y1i;
  }
  io[o + 2] = gr;
  io[o + 3] = gi;
}

function stepPackets2(
  S: Float64Array,
  C: Float64Array,
  F: number,
  first: number,
  io: Float64Array,
  o: number,
  acc: boolean,
): void {
  const d = 4 * F;
  const s0r = io[o];
  const s0i = io[o + 1];
  const s1r = io[o + 4];
  const s1i = io[o + 5];
  let g0r = 0;
  let g0i = 0;
  let g1r = 0;
  let g1i = 0;
  for (let j = 0, q = first, c = 0; j < F; j++, q += 4, c += 4) {
    const ar = C[c];
    const ai = C[c + 1];
    const br = C[c + 2];
    const bi = C[c + 3];
    let y0r = S[q];
    let y0i = S[q + 1];
    let y1r = ar * y0r - ai * y0i + br * s0r - bi * s0i;
    let y1i = ar * y0i + ai * y0r + br * s0i + bi * s0r;
    S[q] = y1r;
    S[q + 1] = y1i;
    let w = S[q + 2];
    g0r += w * y1r;
    g0i += w * y1i;
    if (acc) S[q + 3] += y1r * y1r + y1i * y1i;
    const p = q + d;
    y0r = S[p];
    y0i = S[p + 1];
    y1r = ar * y0r - ai * y0i + br * s1r - bi * s1i;
    y1i = ar * y0i + ai * y0r + br * s1i + bi * s1r;
    S[p] = y1r;
    S[p + 1] = y1i;
    w = S[p + 2];
    g1r += w * y1r;
    g1i += w * y1i;
    if (acc) S[p + 3] += y1r * y1r + y1i * y1i;
  }
  io[o + 2] = g0r;
  io[o + 3] = g0i;
  io[o + 6] = g1r;
  io[o + 7] = g1i;
}

function stepPackets4(
  S: Float64Array,
  C: Float64Array,
  F: number,
  first: number,
  io: Float64Array,
  o: number,
  acc: boolean,
): void {
  const d = 4 * F;
  const s0r = io[o];
  const s0i = io[o + 1];
  const s1r = io[o + 4];
  const s1i = io[o + 5];
  const s2r = io[o + 8];
  const s2i = io[o + 9];
  const s3r = io[o + 12];
  const s3i = io[o + 13];
  let g0r = 0;
  let g0i = 0;
  let g1r = 0;
  let g1i = 0;
  let g2r = 0;
  let g2i = 0;
  let g3r = 0;
  let g3i = 0;
  for (let j = 0, q = first, c = 0; j < F; j++, q += 4, c += 4) {
    const ar = C[c];
    const ai = C[c + 1];
    const br = C[c + 2];
    const bi = C[c + 3];
    let p = q;
    let y0r = S[p];
    let y0i = S[p + 1];
    let y1r = ar * y0r - ai * y0i + br * s0r - bi * s0i;
    let y1i = ar * y0i + ai * y0r + br * s0i + bi * s0r;
    S[p] = y1r;
    S[p + 1] = y1i;
    let w = S[p + 2];
    g0r += w * y1r;
    g0i += w * y1i;
    if (acc) S[p + 3] += y1r * y1r + y1i * y1i;
    p += d;
    y0r = S[p];
    y0i = S[p + 1];
    y1r = ar * y0r - ai * y0i + br * s1r - bi * s1i;
    y1i = ar * y0i + ai * y0r + br * s1i + bi * s1r;
    S[p] = y1r;
    S[p + 1] = y1i;
    w = S[p + 2];
    g1r += w * y1r;
    g1i += w * y1i;
    if (acc) S[p + 3] += y1r * y1r + y1i * y1i;
    p += d;
    y0r = S[p];
    y0i = S[p + 1];
    y1r = ar * y0r - ai * y0i + br * s2r - bi * s2i;
    y1i = ar * y0i + ai * y0r + br * s2i + bi * s2r;
    S[p] = y1r;
    S[p + 1] = y1i;
    w = S[p + 2];
    g2r += w * y1r;
    g2i += w * y1i;
    if (acc) S[p + 3] += y1r * y1r + y1i * y1i;
    p += d;
    y0r = S[p];
    y0i = S[p + 1];
    y1r = ar * y0r - ai * y0i + br * s3r - bi * s3i;
    y1i = ar * y0i + ai * y0r + br * s3i + bi * s3r;
    S[p] = y1r;
    S[p + 1] = y1i;
    w = S[p + 2];
    g3r += w * y1r;
    g3i += w * y1i;
    if (acc) S[p + 3] += y1r * y1r + y1i * y1i;
  }
  io[o + 2] = g0r;
  io[o + 3] = g0i;
  io[o + 6] = g1r;
  io[o + 7] = g1i;
  io[o + 10] = g2r;
  io[o + 11] = g2i;
  io[o + 14] = g3r;
  io[o + 15] = g3i;
}
