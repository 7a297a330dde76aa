/**
 * The round-trip engine (reference), docs/model.md §3.5: the whole three-mirror system
 * as two delay lines sampled every dt on the full band around the gain peak (the carrier
 * nu_c), one complex envelope per travelling wave, every longitudinal mode, Doppler
 * sideband and cross-mode injection in that one signal. At the plane of M2:
 *
 *   e(t) = r1 (1 - l) exp(-i 2 pi nu_c tau_L) v(t - tau_L) + w(t)   inside, arriving from M1
 *   u(t) = r2 e(t) + t2 sqrt(eta_fb) b(t)                          inside, leaving towards M1
 *   a(t) = t2 sqrt(eta_fb) e(t) - r2 b(t)                          gap, leaving towards M3
 *   b(t) = r3' a(t - tau(t)) exp(-i 2 pi nu_c tau(t)),  tau(t) = 2 (L2 + x(t)) / c
 *   v(t) = Amp[u](t)                                               the gain medium, both passes
 *
 * Amp is the packet bank of gain-packets.ts: with G0[x] = (chi0 / 2) sum_j w_j n_j y_j
 * (y_j the packet-filtered x, chi0 = gamma_c tau_L the cold-cavity round-trip loss), the
 * round trip's field gain exp(G0) is applied as exp(chi0 / 2) (1 + D / K)^K with
 * D = G0 - chi0 / 2: D vanishes where the saturated gain meets the loss, so the error
 * (D^2 / 2K per round trip) is nil at the lasing lines, and K sheets (each with its own
 * filters) keep |D / K| <= 0.1 for high-gain media. The amplitude-phase coupling adds the
 * phase (alpha / 2) chi0 (n - 1) per round trip (n the peak-normalised inversion), so a
 * gain above its steady value raises the optical frequency (data-sheet sign, Henry 1982).
 *
 * Spontaneous emission w(t): white complex kicks shaped by a short FIR filter whose
 * power response is the small-signal gain shape, scaled so that a cold-cavity mode below
 * threshold holds P_sp f / (1 - p f) (first order in chi0).
 *
 * Mode powers (Er, Ei): e demodulated at every cold-cavity mode frequency and averaged
 * over one laser round trip (a sliding window: adjacent modes are orthogonal over
 * tau_L). Gap and intracavity powers are |a|^2 and |e|^2 averaged over the same window
 * (which removes the beat notes between modes).
 *
 * Lanes (static positions or rest offsets) advance in lockstep; the step loop allocates
 * nothing.
 */
import { SPEED_OF_LIGHT_m_s } from '../constants';
import {
  ComplexDelayLines,
  lagrangeCentredN,
  MIN_CENTRED_DELAY,
  READ_POINTS,
} from '../../numerics/delay-line';
import {
  bankResponse,
  buildPacketBank,
  PacketBank,
  PACKET_SLOTS,
  packetCoefficients,
  SLOT_W,
  SLOT_YI,
  SLOT_YR,
  SLOT_YSQ,
  stepPacketLanes,
} from '../laser/gain-packets';
import type { CoupledParams } from './params';
import { emptyEnergy, FIELD_FLUSH, LaneStore } from './lane-engine';
import type { LaneEngine, LaneEnergy, MirrorMotion, NormalSource } from './lane-engine';
import { chooseRoundTripStep, RoundTripStep } from './roundtrip-step';
import {
  FLOW_COUNT,
  FLOW_GAP_CLIPPING,
  FLOW_GAP_ELEMENT,
  FLOW_GAP_ONE_WAY,
  FLOW_INTERNAL_LOSS,
  FLOW_LASER_OUTPUT,
  FLOW_MIRROR_LOSS,
  FLOW_REAR_THROUGH,
  FLOW_RETURN_THROUGH,
  FLOW_RETURNED_LOST,
  FLOW_SUPPLY,
  FLOW_UNMATCHED,
} from './power-flows';

const ACC_GAIN = 0;
const ACC_COLD = 1;
const ACC_INJ = 2;
const ACC_NOISE = 3;
const ACC_EXT_IN = 4;
const ACC_EXT_LOST = 5;
const ACC_EXT_SCALE = 6;
const ACC = 7;
/** Largest |D / K| per gain sheet. */
export const SHEET_LIMIT = 0.1;

/** Stands in for the gap's delay line where there is no gap (never read). */
const NO_LINE = new Float64Array(0);

/** Fraction of 2 pi of x (x may be large): keeps carrier phases exact. */
function frac(x: number): number {
  return x - Math.floor(x);
}

export class RoundTripEngine extends LaneStore implements LaneEngine {
  readonly kind = 'roundtrip' as const;
  readonly step: RoundTripStep;
  readonly bank: PacketBank;
  /** gain sheets per round trip */
  readonly sheets: number;
  /**
   * powers of the last step per lane (W), for the power budget: |e|^2, |u|^2, |v|^2,
   * |v_old|^2, |a|^2, |b|^2, |a_del|^2 and the coupling factor (docs/model.md §6)
   */
  private readonly last: Float64Array;
  /** worst relative error of the M2 scattering identity seen per lane since the last reset */
  readonly m2Closure: Float64Array;

  /** energy accumulators per lane (ACC slots, see ACC_*), J: typed storage keeps the loop free of allocation */
  private readonly acc: Float64Array;
  /** stored laser and gap energy at the start of the bookkeeping, per lane */
  private readonly start: Float64Array;
  private readonly NL: number;
  private readonly laser: ComplexDelayLines;
  private readonly gap: ComplexDelayLines | null;
  /** rings of |e|^2, |a|^2, |b|^2, |u|^2 over the last laser round trip, per lane */
  private readonly pE: Float64Array;
  private readonly pA: Float64Array;
  private readonly pB: Float64Array;
  private readonly sumE: Float64Array;
  private readonly sumA: Float64Array;
  private readonly sumB: Float64Array;
  private readonly sumV: Float64Array;
  /** ring of e over the last laser round trip, per lane (for the sliding demodulation) */
  private readonly eRe: Float64Array;
  private readonly eIm: Float64Array;
  private readonly aRe: Float64Array;
  private readonly aIm: Float64Array;
  private slot = 0;
  /**
   * packet state per (sheet, lane, filter), PACKET_SLOTS each (gain-packets.ts): filter
   * output, the lane's effective gain weight wA n[iA] + wB n[iB] (refreshed with the
   * inversions, the same in every sheet) and, in sheet 0, the sum of |y|^2 since the
   * lane's last inversion update; and the previous inputs per (sheet, lane)
   */
  private readonly pk: Float64Array;
  /** the bank's coefficients interleaved per filter (Ar, Ai, Br, Bi) */
  private readonly coef: Float64Array;
  /** per lane: the medium's input x (re, im) through the sheets */
  private readonly gx: Float64Array;
  /** per lane: [s re, s im, G re, G im] of the sheet being stepped */
  private readonly gio: Float64Array;
  private readonly xpr: Float64Array;
  private readonly xpi: Float64Array;
  /** inversions (lane, inversion) */
  private readonly inv: Float64Array;
  private readonly nInv: number;
  private readonly invSat: Float64Array;
  /** per lane: the peak-normalised mean inversion (for alpha) */
  private readonly nbar: Float64Array;
  /**
   * filter j serves inversions j and F - 1 - j (a Doppler bank; also the one-packet
   * Lorentzian bank, F = 1): the inversion update's fast path
   */
  private readonly mirrored: boolean;
  /** inversions are advanced every invEvery steps with the mean saturating power of those steps */
  readonly invEvery: number;
  private invCount = 0;
  /** inversion index nearest each mode (for the N array of the interface) */
  private readonly modeInv: Int32Array;
  /** demodulation phasors phi_m = exp(-i 2 pi delta_m t) and the per-step rotation */
  private readonly phr: Float64Array;
  private readonly phi: Float64Array;
  private readonly rotR: Float64Array;
  private readonly rotI: Float64Array;
  /** exp(-i 2 pi delta_m tau_L): the phasor of the sample leaving the window */
  private readonly oldR: Float64Array;
  private readonly oldI: Float64Array;
  private stepCount = 0;
  /** noise: FIR taps and the add-ahead ring per lane */
  private readonly firR: Float64Array;
  private readonly firI: Float64Array;
  private readonly ahead: Float64Array;
  private readonly aheadMask: number;
  private readonly noiseEvery: number;
  private noiseCount = 0;
  private readonly kickSigma: number;
  // constants of the loop
  private readonly rho1: number;
  private readonly pcR: number;
  private readonly pcI: number;
  private readonly gapPhase0: number;
  private readonly gapPhasePerMetre: number;
  private readonly delayPerMetre: number;
  private readonly halfChi0: number;
  private readonly expHalfChi0: number;
  private readonly satScale: number;
  /** weights of the gap's centred read (delay-line.ts), filled per lane and step */
  private readonly gw = new Float64Array(READ_POINTS);
  /** a weak external probe arriving at M2 from the gap side: amplitude (W^0.5) and detuning (Hz) */
  private probeAmp = 0;
  private probeDet = 0;

  /** one noise stream per lane (setLaneNoise), else null: every lane draws from `rng` in turn */
  private laneNoise: readonly NormalSource[] | null = null;

  constructor(
    p: CoupledParams,
    lanes: number,
    readonly motion: MirrorMotion,
    readonly rng: NormalSource,
    maxExcursion_m: number,
    step?: RoundTripStep,
  ) {
    const chosen = step ?? roundTripStepFor(p);
    super(p, lanes, chosen.dt);
    const c = SPEED_OF_LIGHT_m_s;
    this.step = chosen;
    const dt = this.dt;
    this.NL = this.step.laserSteps;
    this.acc = new Float64Array(lanes * ACC);
    this.start = new Float64Array(lanes * 2);
    this.m2Closure = new Float64Array(lanes);
    this.last = new Float64Array(lanes * 8);
    this.laser = new ComplexDelayLines(lanes, 2 * this.NL);
    if (p.hasExternal) {
      const maxDelay = (2 * (p.externalLength_m + Math.abs(maxExcursion_m))) / c / dt;
      const minDelay = (2 * (p.externalLength_m - Math.abs(maxExcursion_m))) / c / dt;
      if (minDelay < MIN_CENTRED_DELAY)
        throw new Error(
          `round-trip engine: the gap delay (${minDelay.toFixed(2)} steps) is too short for the step ${dt} s`,
        );
      this.gap = new ComplexDelayLines(lanes, maxDelay + 2);
    } else this.gap = null;
    const NL = this.NL;
    this.pE = new Float64Array(lanes * NL);
    this.pA = new Float64Array(lanes * NL);
    this.pB = new Float64Array(lanes * NL);
    this.sumE = new Float64Array(lanes);
    this.sumA = new Float64Array(lanes);
    this.sumB = new Float64Array(lanes);
    this.sumV = new Float64Array(lanes);
    this.eRe = new Float64Array(lanes * NL);
    this.eIm = new Float64Array(lanes * NL);
    this.aRe = new Float64Array(lanes * NL);
    this.aIm = new Float64Array(lanes * NL);
    this.bank = buildPacketBank(p.gain, dt);
    const chi0 = p.gammaC * p.roundTripLaser_s;
    this.halfChi0 = 0.5 * chi0;
    this.expHalfChi0 = Math.exp(0.5 * chi0);
    // largest |D| over the band: where there is no gain (chi0 / 2) or at the small-signal peak
    const dMax = Math.max(this.halfChi0, this.halfChi0 * Math.abs(p.pump - 1));
    this.sheets = Math.max(1, Math.ceil(dMax / SHEET_LIMIT));
    const F = this.bank.filters;
    this.pk = new Float64Array(this.sheets * lanes * F * PACKET_SLOTS);
    this.coef = packetCoefficients(this.bank);
    this.gx = new Float64Array(2 * lanes);
    this.gio = new Float64Array(4 * lanes);
    this.xpr = new Float64Array(this.sheets * lanes);
    this.xpi = new Float64Array(this.sheets * lanes);
    this.nInv = this.bank.inversions;
    this.inv = new Float64Array(lanes * this.nInv).fill(1);
    this.invSat = new Float64Array(this.nInv);
    this.nbar = new Float64Array(lanes).fill(1);
    // 3 % of tau_N between inversion updates (at most 8 steps): the inversion relaxes over
    // tau_N / (1 + S), and what it integrates, the saturating power, is summed every step
    this.invEvery = Math.max(1, Math.min(8, Math.floor((0.03 * p.tauN) / dt)));
    const bk = this.bank;
    let mirrored = bk.inversions === F;
    for (let j = 0; j < F && mirrored; j++) mirrored = bk.invA[j] === j && bk.invB[j] === F - 1 - j;
    this.mirrored = mirrored;
    this.modeInv = Int32Array.from(p.modes.detuning_Hz, (_, m) => this.nearestInversion(m));
    for (let l = 0; l < lanes; l++) this.refreshWeights(l);
    // demodulation at the cold-cavity modes (detuning from the gain peak = carrier)
    const M = p.M;
    this.phr = new Float64Array(M).fill(1);
    this.phi = new Float64Array(M);
    this.rotR = new Float64Array(M);
    this.rotI = new Float64Array(M);
    this.oldR = new Float64Array(M);
    this.oldI = new Float64Array(M);
    for (let m = 0; m < M; m++) {
      const d = p.modes.detuning_Hz[m];
      this.rotR[m] = Math.cos(2 * Math.PI * d * dt);
      this.rotI[m] = -Math.sin(2 * Math.PI * d * dt);
      // phi(n - NL) = phi(n) exp(+i 2 pi d tau_L): the leaving sample's phasor from the current one
      this.oldR[m] = Math.cos(2 * Math.PI * frac(d * NL * dt));
      this.oldI[m] = Math.sin(2 * Math.PI * frac(d * NL * dt));
    }
    // constants
    this.rho1 = Math.sqrt(p.R1) * (1 - p.internalLoss);
    const nuC = p.modes.gainPeak_Hz;
    const cyc = frac(nuC * p.roundTripLaser_s);
    this.pcR = Math.cos(2 * Math.PI * cyc);
    this.pcI = -Math.sin(2 * Math.PI * cyc);
    this.gapPhase0 = frac((2 * p.externalLength_m * nuC) / c);
    this.gapPhasePerMetre = (2 * nuC) / c;
    this.delayPerMetre = 2 / c / dt;
    // the inversion is saturated by the power arriving at M2 from the medium: |u|^2 / R2 when
    // nothing returns from the gap (so a free-running mode at line centre holds P_sat (p - 1))
    this.satScale = p.R2 > 0 ? p.invPsat / p.R2 : p.invPsat;
    // noise
    const fir = noiseFir(this.bank, dt);
    this.firR = fir.re;
    this.firI = fir.im;
    let cap = 8;
    while (cap < fir.re.length + 2) cap *= 2;
    this.ahead = new Float64Array(lanes * cap * 2);
    this.aheadMask = cap - 1;
    this.noiseEvery = Math.max(1, Math.min(64, Math.floor(0.02 / (p.gammaC * dt))));
    // per-sample variance at the gain peak sigma0^2 = P_sp gamma_c NL^2 dt; a kick every
    // noiseEvery steps carries that many samples' variance (independent kicks stay white)
    const s2 = p.spontaneous_W * p.gammaC * NL * NL * dt * this.noiseEvery;
    this.kickSigma = Math.sqrt(0.5 * s2);
  }

  /**
   * Add a monochromatic probe field of amplitude `amp` (sqrt W) at detuning `detuning_Hz`
   * from the carrier to the light arriving at M2 from the gap, in every lane (a seed laser
   * shone in from outside; with the return mirror's reflectivity 0 it is all that arrives).
   * Used to measure the laser cavity's reflectance seen from the gap (docs/model.md §3.5).
   */
  setProbe(amp: number, detuning_Hz: number): void {
    this.probeAmp = amp;
    this.probeDet = detuning_Hz;
  }

  // ---- LaneEngine -------------------------------------------------------------------

  /**
   * Start every lane from mode amplitudes (the fields of a modal state): the laser line is
   * filled with sum_m E_m exp(i 2 pi delta_m t) over one round trip (consistent with the
   * cold-cavity round trip), inversions at threshold, the gap empty.
   */
  setLaserState(Er: ArrayLike<number>, Ei: ArrayLike<number>, N: ArrayLike<number>): void {
    for (let l = 0; l < this.L; l++) this.seedLane(l, Er, Ei, N);
  }

  private seedLane(l: number, Er: ArrayLike<number>, Ei: ArrayLike<number>, N: ArrayLike<number>): void {
    const p = this.p;
    const M = this.M;
    const dt = this.dt;
    // the ring holds v (after the medium) for the last NL steps: v(t_k) such that
    // rho1 Pc v(t_k - tau_L) = e(t_k) for a steady cold-cavity mode; fill with e / rho1 at steady gain
    for (let k = 0; k < this.laser.cap; k++) {
      const tk = this.t - k * dt;
      let re = 0;
      let im = 0;
      for (let m = 0; m < M; m++) {
        const th = 2 * Math.PI * frac(p.modes.detuning_Hz[m] * tk);
        re += Er[m] * Math.cos(th) - Ei[m] * Math.sin(th);
        im += Er[m] * Math.sin(th) + Ei[m] * Math.cos(th);
      }
      const i = this.laser.index(l, k);
      // e(t_k + tau_L) = rho1 Pc v(t_k) and exp(i 2 pi delta_m tau_L) = Pc for a cold-cavity
      // mode, so v(t_k) = e(t_k) / rho1
      const s = this.rho1 > 0 ? 1 / this.rho1 : 0;
      this.laser.re[i] = s * re;
      this.laser.im[i] = s * im;
    }
    this.inv.fill(1, l * this.nInv, (l + 1) * this.nInv);
    this.refreshWeights(l);
    this.setSatSums(l, null, 0, 0);
    for (let m = 0; m < M; m++) {
      this.N[l * M + m] = N[m] ?? 1;
      this.Er[l * M + m] = Er[m];
      this.Ei[l * M + m] = Ei[m];
    }
    if (this.gap) this.gap.fill(l, 0, 0);
    this.clearLaneFilters(l);
    this.refreshWindows(l);
  }

  private clearLaneFilters(l: number): void {
    const F = this.bank.filters;
    for (let s = 0; s < this.sheets; s++) {
      const base = (s * this.L + l) * F * PACKET_SLOTS;
      for (let j = 0; j < F; j++) {
        this.pk[base + PACKET_SLOTS * j + SLOT_YR] = 0;
        this.pk[base + PACKET_SLOTS * j + SLOT_YI] = 0;
      }
      this.xpr[s * this.L + l] = 0;
      this.xpi[s * this.L + l] = 0;
    }
  }

  /** Recompute a lane's window sums from its rings (after a state change). */
  private refreshWindows(l: number): void {
    const NL = this.NL;
    let sE = 0;
    let sV = 0;
    for (let k = 0; k < NL; k++) {
      const iw = this.laser.index(l, k);
      sV += this.laser.re[iw] * this.laser.re[iw] + this.laser.im[iw] * this.laser.im[iw];
      // e over the window from the laser ring: e(t_n - k dt) = rho1 Pc v(t_n - k dt - tau_L)
      const iv = this.laser.index(l, k + NL);
      const vr = this.laser.re[iv];
      const vi = this.laser.im[iv];
      const j = l * NL + ((this.slot - k + NL * 4) % NL);
      const er = this.rho1 * (vr * this.pcR - vi * this.pcI);
      const ei = this.rho1 * (vr * this.pcI + vi * this.pcR);
      this.eRe[j] = er;
      this.eIm[j] = ei;
      this.pE[j] = er * er + ei * ei;
      this.pA[j] = 0;
      this.pB[j] = 0;
      this.aRe[j] = 0;
      this.aIm[j] = 0;
      sE += this.pE[j];
    }
    this.sumE[l] = sE;
    this.sumV[l] = sV;
    this.sumA[l] = 0;
    this.sumB[l] = 0;
    this.demodulateWindow(l);
  }

  /**
   * The mode amplitudes E_m and a_m of a lane demodulated from its window rings at this
   * engine's time: the mean over the last round trip of e and a times exp(-i 2 pi delta_m t).
   */
  private demodulateWindow(l: number): void {
    const NL = this.NL;
    const M = this.M;
    const p = this.p;
    for (let m = 0; m < M; m++) {
      let xr = 0;
      let xi = 0;
      let yr = 0;
      let yi = 0;
      for (let k = 0; k < NL; k++) {
        const j = l * NL + ((this.slot - k + NL * 4) % NL);
        const th = -2 * Math.PI * frac(p.modes.detuning_Hz[m] * (this.t - k * this.dt));
        const c = Math.cos(th);
        const s = Math.sin(th);
        xr += this.eRe[j] * c - this.eIm[j] * s;
        xi += this.eRe[j] * s + this.eIm[j] * c;
        yr += this.aRe[j] * c - this.aIm[j] * s;
        yi += this.aRe[j] * s + this.aIm[j] * c;
      }
      this.Er[l * M + m] = xr / NL;
      this.Ei[l * M + m] = xi / NL;
      this.ar[l * M + m] = yr / NL;
      this.ai[l * M + m] = yi / NL;
    }
  }

  copyLane(src: LaneEngine, from: number, to: number): void {
    if (
      !(src instanceof RoundTripEngine) ||
      src.NL !== this.NL ||
      src.bank.filters !== this.bank.filters ||
      src.sheets !== this.sheets
    ) {
      const M = this.M;
      const er: number[] = [];
      const ei: number[] = [];
      const n: number[] = [];
      for (let m = 0; m < M; m++) {
        er.push(src.Er[from * M + m]);
        ei.push(src.Ei[from * M + m]);
        n.push(src.N[from * M + m]);
      }
      this.seedLane(to, er, ei, n);
      return;
    }
    this.laser.copyLine(src.laser, from, to);
    if (this.gap && src.gap) this.gap.copyLine(src.gap, from, to);
    this.copyFilters(src, from, to);
    const nI = this.nInv;
    for (let i = 0; i < nI; i++) this.inv[to * nI + i] = src.inv[from * nI + i];
    this.refreshWeights(to);
    // the saturating power summed since the source's last update, rescaled to this engine's count
    this.setSatSums(to, src, from, src.invCount > 0 ? this.invCount / src.invCount : 0);
    this.copyWindows(src, from, to);
  }

  private copyFilters(src: RoundTripEngine, from: number, to: number): void {
    const F = this.bank.filters;
    for (let s = 0; s < this.sheets; s++) {
      const bs = (s * src.L + from) * F * PACKET_SLOTS;
      const bd = (s * this.L + to) * F * PACKET_SLOTS;
      for (let j = 0; j < F; j++) {
        this.pk[bd + PACKET_SLOTS * j + SLOT_YR] = src.pk[bs + PACKET_SLOTS * j + SLOT_YR];
        this.pk[bd + PACKET_SLOTS * j + SLOT_YI] = src.pk[bs + PACKET_SLOTS * j + SLOT_YI];
      }
      this.xpr[s * this.L + to] = src.xpr[s * src.L + from];
      this.xpi[s * this.L + to] = src.xpi[s * src.L + from];
    }
  }

  /**
   * Set lane `to`'s sums of |y|^2 since its last inversion update to lane `from` of `src`
   * times `scale` (src null: to zero).
   */
  private setSatSums(to: number, src: RoundTripEngine | null, from: number, scale: number): void {
    const F = this.bank.filters;
    const bd = to * F * PACKET_SLOTS + SLOT_YSQ;
    const bs = from * F * PACKET_SLOTS + SLOT_YSQ;
    for (let j = 0; j < F; j++)
      this.pk[bd + PACKET_SLOTS * j] = src === null ? 0 : src.pk[bs + PACKET_SLOTS * j] * scale;
  }

  /**
   * Copy the window rings aligned at the newest sample, and rebuild the demodulated
   * amplitudes at this engine's time (its phasors may differ from the source's).
   */
  private copyWindows(src: RoundTripEngine, from: number, to: number): void {
    const NL = this.NL;
    let sE = 0;
    let sA = 0;
    let sB = 0;
    for (let k = 0; k < NL; k++) {
      const js = from * NL + ((src.slot - k + NL * 4) % NL);
      const jd = to * NL + ((this.slot - k + NL * 4) % NL);
      this.eRe[jd] = src.eRe[js];
      this.eIm[jd] = src.eIm[js];
      this.aRe[jd] = src.aRe[js];
      this.aIm[jd] = src.aIm[js];
      this.pE[jd] = src.pE[js];
      this.pA[jd] = src.pA[js];
      this.pB[jd] = src.pB[js];
      sE += this.pE[jd];
      sA += this.pA[jd];
      sB += this.pB[jd];
    }
    this.sumE[to] = sE;
    this.sumA[to] = sA;
    this.sumB[to] = sB;
    this.sumV[to] = src.sumV[from];
    this.demodulateWindow(to);
    const M = this.M;
    for (let m = 0; m < M; m++) {
      this.N[to * M + m] = src.N[from * M + m];
      this.br[to * M + m] = src.br[from * M + m];
      this.bi[to * M + m] = src.bi[from * M + m];
    }
  }

  resetEnergy(): void {
    this.acc.fill(0);
    for (let l = 0; l < this.L; l++) {
      this.start[2 * l] = this.laserEnergy(l);
      this.start[2 * l + 1] = this.externalEnergy(l);
      this.m2Closure[l] = 0;
    }
  }

  /** Per-lane energy bookkeeping (docs/model.md §3.5), J; no interface mismatch (M2 is exact). */
  get energy(): LaneEnergy[] {
    return Array.from({ length: this.L }, (_, l) => this.laneEnergy(l));
  }

  /** The energy bookkeeping of lane l, J. */
  laneEnergy(l: number): LaneEnergy {
    const a = l * ACC;
    const e = emptyEnergy();
    e.laserStart = this.start[2 * l];
    e.externalStart = this.start[2 * l + 1];
    e.gain = this.acc[a + ACC_GAIN];
    e.coldLoss = this.acc[a + ACC_COLD];
    e.injection = this.acc[a + ACC_INJ];
    e.noise = this.acc[a + ACC_NOISE];
    e.externalIn = this.acc[a + ACC_EXT_IN];
    e.externalLost = this.acc[a + ACC_EXT_LOST];
    e.externalScale = this.acc[a + ACC_EXT_SCALE];
    return e;
  }

  /** Light stored in the laser's delay line: dt sum |v|^2 over one round trip, J. */
  laserEnergy(l: number): number {
    return this.sumV[l] * this.dt;
  }

  /** Light stored in the gap's delay line: integral of |a|^2 over [t - tau, t], J. */
  externalEnergy(l: number): number {
    if (!this.gap) return 0;
    const D = this.delayPerMetre * (this.p.externalLength_m + this.offset[l] + this.motion.position(this.t));
    return this.gap.addStored(l, D, 0) * this.dt;
  }

  externalPower(l: number): number {
    return this.sumA[l] / this.NL;
  }

  intracavityPower(l: number): number {
    return this.sumE[l] / this.NL;
  }

  returnedPower(l: number): number {
    return this.sumB[l] / this.NL;
  }

  /**
   * Net power leaving through M2 on the outside, window-averaged: |a|^2 - |b|^2 of the
   * matched part plus the unmatched share (1 - eta_fb) T2 |e|^2 (docs/model.md §3.3).
   */
  laserOutput(l: number): number {
    const p = this.p;
    const e2 = this.sumE[l] / this.NL;
    if (!p.hasExternal) return p.T2 * e2;
    return (1 - p.feedbackEfficiency) * p.T2 * e2 + (this.sumA[l] - this.sumB[l]) / this.NL;
  }

  /**
   * Power flows of the last step of lane l into the slots of power-flows.ts: the exact M2
   * splits what arrives (|e|^2 inside, |b|^2 outside) into what leaves (|u|^2, |a|^2), its
   * loss A2 and the light outside the coupled modes; the laser's round trip loses
   * (1 - R1 (1 - l)^2) |v_old|^2, shared as M1's transmission and loss and the two passes'
   * internal loss; the gap loses (1 - r3'^2) |a_del|^2 at M3, in its element and per round
   * trip. Supply is the gain's work |v|^2 - |u|^2. These close exactly but for the change of
   * stored light (docs/model.md §6).
   */
  powerFlows(l: number, out: Float64Array): void {
    const p = this.p;
    const lb = 8 * l;
    const e2 = this.last[lb];
    const u2 = this.last[lb + 1];
    const v2 = this.last[lb + 2];
    const vOld2 = this.last[lb + 3];
    const a2 = this.last[lb + 4];
    const b2 = this.last[lb + 5];
    const ad2 = this.last[lb + 6];
    const fc = this.last[lb + 7];
    for (let k = 0; k < FLOW_COUNT; k++) out[k] = 0;
    const li = p.internalLoss;
    out[FLOW_SUPPLY] = v2 - u2;
    out[FLOW_REAR_THROUGH] = p.T1 * (1 - li) * vOld2;
    out[FLOW_MIRROR_LOSS] = p.A1 * (1 - li) * vOld2 + p.A2 * (e2 + b2);
    out[FLOW_INTERNAL_LOSS] = li * (1 + p.R1 * (1 - li)) * vOld2;
    if (!p.hasExternal) {
      // M2 alone: u = r2 e, the rest leaves as output (T2) or loss (A2)
      out[FLOW_LASER_OUTPUT] = p.T2 * e2;
      out[FLOW_UNMATCHED] = p.T2 * e2;
      return;
    }
    const eta = p.feedbackEfficiency * fc * fc;
    const Tg = p.gapTransmission;
    out[FLOW_UNMATCHED] = (1 - eta) * p.T2 * e2;
    // the rest of what arrives at M2: light from the gap that misses the laser mode (and,
    // when the laser ignores its feedback, what the ideal isolator takes)
    out[FLOW_RETURNED_LOST] = e2 + b2 - u2 - a2 - p.A2 * (e2 + b2) - (1 - eta) * p.T2 * e2;
    out[FLOW_MIRROR_LOSS] += p.A3 * Tg * ad2;
    out[FLOW_RETURN_THROUGH] = p.T3 * Tg * ad2;
    out[FLOW_GAP_ELEMENT] = (1 - Tg) * (1 + p.R3 * Tg) * ad2;
    out[FLOW_GAP_CLIPPING] = (1 - p.roundtripEfficiency) * p.R3 * Tg * Tg * ad2;
    out[FLOW_LASER_OUTPUT] = (1 - eta) * p.T2 * e2 + a2 - b2;
    out[FLOW_GAP_ONE_WAY] = a2;
  }

  /**
   * Give each lane its own noise stream, so that a lane's history does not depend on which
   * other lanes share the engine (docs/model.md §4.2).
   */
  setLaneNoise(sources: readonly NormalSource[]): void {
    if (sources.length !== this.L)
      throw new Error(`round-trip engine: ${sources.length} noise streams for ${this.L} lanes`);
    this.laneNoise = sources;
  }

  advance(steps: number, onStep?: (engine: LaneEngine) => void): boolean {
    for (let s = 0; s < steps; s++) {
      this.stepOnce();
      if (this.failed) return false;
      if (onStep) onStep(this);
    }
    return true;
  }

  // ---- the step ---------------------------------------------------------------------

  private stepOnce(): void {
    const p = this.p;
    const dt = this.dt;
    const t1 = this.t + dt;
    const L = this.L;
    const M = this.M;
    const NL = this.NL;
    const ext = this.gap !== null;
    const x = ext ? this.motion.position(t1) : 0;
    const bank = this.bank;
    const F = bank.filters;
    const K = this.sheets;
    const iA = bank.invA,
      iB = bank.invB,
      sA = bank.satA,
      sB = bank.satB;
    const inv = this.inv;
    const hc = this.halfChi0;
    const eh = this.expHalfChi0;
    const r2 = p.r2;
    const cpl0 = p.couplingOut;
    const law = p.couplingAt;
    const back = p.returnToLaser;
    const r3 = p.r3eff;
    const rho1 = this.rho1;
    const pcR = this.pcR,
      pcI = this.pcI;
    const alphaHalfChi = 0.5 * p.alpha * 2 * hc;
    const invTauN = 1 / p.tauN;
    const pump = p.pump;
    const nI = this.nInv;
    const invSat = this.invSat;
    const satScale = this.satScale;
    const gw = this.gw;
    const gap = this.gap;
    const gre = gap === null ? NO_LINE : gap.re;
    const gim = gap === null ? NO_LINE : gap.im;
    const gcap = gap === null ? 0 : gap.cap;
    const gmask = gap === null ? 0 : gap.mask;
    // the engine's arrays as locals: the loops below then load no field of `this`
    const offset = this.offset;
    const ahead = this.ahead;
    const firR = this.firR;
    const firI = this.firI;
    const m2Closure = this.m2Closure;
    const gx = this.gx;
    const gio = this.gio;
    const pk = this.pk;
    const last = this.last;
    const eRe = this.eRe;
    const eIm = this.eIm;
    const aRe = this.aRe;
    const aIm = this.aIm;
    const pE = this.pE;
    const pA = this.pA;
    const pB = this.pB;
    const sumE = this.sumE;
    const sumA = this.sumA;
    const sumB = this.sumB;
    const sumV = this.sumV;
    const phr = this.phr;
    const phi = this.phi;
    const oldR = this.oldR;
    const oldI = this.oldI;
    const rotR = this.rotR;
    const rotI = this.rotI;
    const Er = this.Er;
    const Ei = this.Ei;
    const ar = this.ar;
    const ai = this.ai;
    const br = this.br;
    const bi = this.bi;
    const N = this.N;
    const nbar = this.nbar;
    const acc = this.acc;
    const xpr = this.xpr;
    const xpi = this.xpi;
    const modeInv = this.modeInv;
    const lre = this.laser.re;
    const lim = this.laser.im;
    const lcap = this.laser.cap;
    const lmask = this.laser.mask;
    // inversion cadence
    const updateInv = ++this.invCount >= this.invEvery;
    const invSteps = this.invCount;
    if (updateInv) this.invCount = 0;
    // noise cadence
    let kick = 0;
    if (++this.noiseCount >= this.noiseEvery) {
      this.noiseCount = 0;
      kick = this.kickSigma;
    }
    // advance the rings (shared heads) and the window slot
    this.laser.advance();
    if (this.gap) this.gap.advance();
    const lhead = this.laser.head;
    const ghead = gap === null ? 0 : gap.head;
    const slot = (this.slot + 1) % NL;
    this.slot = slot;
    const aMask = this.aheadMask;
    const aCap = aMask + 1;
    const aPos = this.stepCount & aMask;
    // rotate the demodulation phasors to t1
    for (let m = 0; m < M; m++) {
      const r = phr[m] * rotR[m] - phi[m] * rotI[m];
      phi[m] = phr[m] * rotI[m] + phi[m] * rotR[m];
      phr[m] = r;
    }
    this.stepCount++;
    if ((this.stepCount & 1023) === 0) this.resyncPhasors(t1);

    // ---- per lane: the returned field, M2, the bookkeeping that does not need the medium's output
    for (let l = 0; l < L; l++) {
      const ea = l * ACC;
      // ---- returned field b(t1) from the gap's history
      let bR = 0;
      let bI = 0;
      let aDel2 = 0;
      if (ext) {
        const disp = offset[l] + x;
        const D = this.delayPerMetre * (p.externalLength_m + disp);
        // the head has moved to t1 (not yet written): a(t1 - tau) is D samples back from it,
        // and the centred stencil's newest node (D - 1 back at the least) is already written;
        // the read of ComplexDelayLines.read written out: node i sits at head - k + n/2 - 1 - i
        const k = Math.floor(D);
        lagrangeCentredN(D - k, READ_POINTS, gw);
        const top = ghead - k + READ_POINTS / 2 - 1;
        const gb = l * gcap;
        let adR = 0;
        let adI = 0;
        for (let i = 0; i < READ_POINTS; i++) {
          const idx = gb + ((top - i) & gmask);
          adR += gw[i] * gre[idx];
          adI += gw[i] * gim[idx];
        }
        aDel2 = adR * adR + adI * adI;
        const ph = 2 * Math.PI * frac(this.gapPhase0 + this.gapPhasePerMetre * disp);
        const c = Math.cos(ph);
        const s = Math.sin(ph);
        // b = r3' a_del exp(-i ph)
        bR = r3 * (adR * c + adI * s);
        bI = r3 * (adI * c - adR * s);
      }
      if (this.probeAmp !== 0) {
        const th = 2 * Math.PI * frac(this.probeDet * t1);
        bR += this.probeAmp * Math.cos(th);
        bI += this.probeAmp * Math.sin(th);
      }
      // ---- field arriving at M2 from M1: e = rho1 Pc v(t1 - tau_L) + w
      const iv = l * lcap + ((lhead - NL) & lmask);
      const vr = lre[iv];
      const vi = lim[iv];
      const vOld2 = vr * vr + vi * vi;
      let eR = rho1 * (vr * pcR - vi * pcI);
      let eI = rho1 * (vr * pcI + vi * pcR);
      const aheadBase = l * aCap * 2;
      if (kick > 0) {
        const src = this.laneNoise === null ? this.rng : this.laneNoise[l];
        const zr = kick * src.normal();
        const zi = kick * src.normal();
        const taps = this.firR.length;
        for (let k = 0; k < taps; k++) {
          const q = aheadBase + 2 * ((aPos + k) & aMask);
          ahead[q] += firR[k] * zr - firI[k] * zi;
          ahead[q + 1] += firR[k] * zi + firI[k] * zr;
        }
      }
      {
        const q = aheadBase + 2 * aPos;
        const before = eR * eR + eI * eI;
        eR += ahead[q];
        eI += ahead[q + 1];
        ahead[q] = 0;
        ahead[q + 1] = 0;
        if (eR * eR + eI * eI < FIELD_FLUSH) {
          eR = 0;
          eI = 0;
        }
        acc[ea + ACC_NOISE] += (eR * eR + eI * eI - before) * dt;
      }
      const e2 = eR * eR + eI * eI;
      // ---- M2, the exact lossy beam splitter (the coupling follows an actuator's tilt, §2.5)
      const fc = law === null ? 1 : law(offset[l] + x);
      const cpl = cpl0 * fc;
      let uR = r2 * eR;
      let uI = r2 * eI;
      if (back) {
        uR += cpl * bR;
        uI += cpl * bI;
      }
      let aR = cpl * eR - r2 * bR;
      let aI = cpl * eI - r2 * bI;
      if (!ext) {
        aR = 0;
        aI = 0;
      }
      const u2 = uR * uR + uI * uI;
      const a2 = aR * aR + aI * aI;
      const b2 = bR * bR + bI * bI;
      if (ext && back) {
        const Rsum = p.R2 + cpl * cpl;
        const lhs = u2 + a2;
        const rhs = Rsum * (e2 + b2);
        const errM2 = rhs > 0 ? Math.abs(lhs - rhs) / rhs : 0;
        if (errM2 > m2Closure[l]) m2Closure[l] = errM2;
      }
      // the medium's input, stepped for all lanes at once below
      gx[2 * l] = uR;
      gx[2 * l + 1] = uI;
      if (ext) {
        gre[l * gcap + ghead] = aR;
        gim[l * gcap + ghead] = aI;
      }
      // ---- bookkeeping (docs/model.md §3.5): telescopes exactly to round-off
      acc[ea + ACC_COLD] += ((1 - rho1 * rho1) * vOld2 + (1 - p.R2) * e2) * dt;
      acc[ea + ACC_INJ] += (u2 - p.R2 * e2) * dt;
      if (ext) {
        acc[ea + ACC_EXT_IN] += a2 * dt;
        acc[ea + ACC_EXT_LOST] += aDel2 * dt;
        acc[ea + ACC_EXT_SCALE] += a2 * dt;
      }
      const lb = 8 * l;
      last[lb] = e2;
      last[lb + 1] = u2;
      last[lb + 3] = vOld2;
      last[lb + 4] = a2;
      last[lb + 5] = b2;
      last[lb + 6] = aDel2;
      last[lb + 7] = fc;
      // ---- windows over the last round trip
      const j = l * NL + slot;
      const eOldR = eRe[j];
      const eOldI = eIm[j];
      const aOldR = aRe[j];
      const aOldI = aIm[j];
      sumE[l] += e2 - pE[j];
      sumA[l] += a2 - pA[j];
      sumB[l] += b2 - pB[j];
      pE[j] = e2;
      pA[j] = a2;
      pB[j] = b2;
      eRe[j] = eR;
      eIm[j] = eI;
      aRe[j] = aR;
      aIm[j] = aI;
      const inv1 = 1 / NL;
      const mb = l * M;
      for (let m = 0; m < M; m++) {
        const cr = phr[m];
        const ci = phi[m];
        // the leaving sample's phasor phi(t1 - tau_L) = phi(t1) * old
        const or = cr * oldR[m] - ci * oldI[m];
        const oi = cr * oldI[m] + ci * oldR[m];
        const k = mb + m;
        Er[k] += inv1 * (eR * cr - eI * ci - (eOldR * or - eOldI * oi));
        Ei[k] += inv1 * (eR * ci + eI * cr - (eOldR * oi + eOldI * or));
        ar[k] += inv1 * (aR * cr - aI * ci - (aOldR * or - aOldI * oi));
        ai[k] += inv1 * (aR * ci + aI * cr - (aOldR * oi + aOldI * or));
        br[k] = bR * cr - bI * ci;
        bi[k] = bR * ci + bI * cr;
      }
    }
    // ---- the gain medium: K sheets of (1 + D / K), D = G0 - chi0 / 2; the packet filters
    // of up to four lanes step together (they share the coefficient loads)
    for (let s = 0; s < K; s++) {
      for (let l = 0; l < L; l++) {
        const xs = s * L + l;
        const xr = gx[2 * l];
        const xi = gx[2 * l + 1];
        gio[4 * l] = xr + xpr[xs];
        gio[4 * l + 1] = xi + xpi[xs];
        xpr[xs] = xr;
        xpi[xs] = xi;
      }
      // the first sheet also accumulates each filter's power for the inversions
      for (let l = 0; l < L; l += 4) {
        const n = Math.min(4, L - l);
        stepPacketLanes(pk, this.coef, F, (s * L + l) * F * PACKET_SLOTS, n, gio, 4 * l, s === 0);
      }
      // x <- x + (G0[x] - chi0/2 x) / K
      for (let l = 0; l < L; l++) {
        const xr = gx[2 * l];
        const xi = gx[2 * l + 1];
        gx[2 * l] = xr + (hc * gio[4 * l + 2] - hc * xr) / K;
        gx[2 * l + 1] = xi + (hc * gio[4 * l + 3] - hc * xi) / K;
      }
    }
    // ---- per lane: the medium's output, the inversions, the laser ring
    for (let l = 0; l < L; l++) {
      const invBase = l * nI;
      const fl = l * F;
      // overall exp(chi0 / 2) and the alpha phase (alpha / 2) chi0 (nbar - 1)
      let vR = eh * gx[2 * l];
      let vI = eh * gx[2 * l + 1];
      if (p.alpha !== 0) {
        const ph = alphaHalfChi * (nbar[l] - 1);
        const c = Math.cos(ph);
        const s = Math.sin(ph);
        const r = vR * c - vI * s;
        vI = vR * s + vI * c;
        vR = r;
      }
      // ---- inversions every invEvery steps: exact exponential relaxation over those steps
      // towards p / (1 + S / P_sat), S their mean saturating power (the relaxation factor
      // e^{-x}, x = (1 + S) h / tau_N, to third order where x is small: the steady state is
      // the target exactly either way)
      if (updateInv) {
        const yb = fl * PACKET_SLOTS;
        if (this.mirrored) {
          // a Doppler bank: filter j serves class j forwards and class F - 1 - j backwards,
          // so S_i = sA_i |y_i|^2 + sB_(F-1-i) |y_(F-1-i)|^2, read without the scatter below
          for (let i = 0; i < nI; i++)
            invSat[i] =
              sA[i] * pk[yb + i * PACKET_SLOTS + SLOT_YSQ] +
              sB[F - 1 - i] * pk[yb + (F - 1 - i) * PACKET_SLOTS + SLOT_YSQ];
        } else {
          invSat.fill(0);
          for (let j = 0; j < F; j++) {
            const y2 = pk[yb + j * PACKET_SLOTS + SLOT_YSQ];
            invSat[iA[j]] += sA[j] * y2;
            invSat[iB[j]] += sB[j] * y2;
          }
        }
        for (let j = 0; j < F; j++) pk[yb + j * PACKET_SLOTS + SLOT_YSQ] = 0;
        const x0 = invTauN * dt * invSteps;
        const norm = satScale / invSteps;
        for (let i = 0; i < nI; i++) {
          const S = invSat[i] * norm;
          const target = pump / (1 + S);
          const xr = (1 + S) * x0;
          const decay = xr < 0.05 ? 1 - xr * (1 - xr * (0.5 - xr / 6)) : Math.exp(-xr);
          const k = invBase + i;
          inv[k] = target + (inv[k] - target) * decay;
        }
        this.refreshWeights(l);
      }
      const v2 = vR * vR + vI * vI;
      if (!(v2 < 1e30)) {
        // the engine is dead: callers discard it (the passes above have already moved the
        // other lanes' rings and sums on, which the old one-pass loop stopped short of)
        this.failed = true;
        this.failMessage = `non-finite laser field in lane ${l} at t = ${t1.toExponential(3)} s (round-trip engine)`;
        return;
      }
      lre[l * lcap + lhead] = vR;
      lim[l * lcap + lhead] = vI;
      acc[l * ACC + ACC_GAIN] += (v2 - last[8 * l + 1]) * dt;
      sumV[l] += v2 - last[8 * l + 3];
      last[8 * l + 2] = v2;
      for (let m = 0; m < M; m++) N[l * M + m] = inv[invBase + modeInv[m]];
    }
    this.t = t1;
  }

  /** Effective gain weight of every filter of a lane from its inversions, and the mean inversion. */
  private refreshWeights(l: number): void {
    const b = this.bank;
    const F = b.filters;
    const nI = this.nInv;
    const base = l * nI;
    const inv = this.inv;
    const wA = b.weightA;
    const wB = b.weightB;
    const iA = b.invA;
    const iB = b.invB;
    const pk = this.pk;
    const K = this.sheets;
    const sheetStride = this.L * F * PACKET_SLOTS;
    // a mirrored bank's gathers are j and F - 1 - j: read directly
    const direct = this.mirrored;
    for (let j = 0, q = l * F * PACKET_SLOTS + SLOT_W; j < F; j++, q += PACKET_SLOTS) {
      const w = direct
        ? wA[j] * inv[base + j] + wB[j] * inv[base + F - 1 - j]
        : wA[j] * inv[base + iA[j]] + wB[j] * inv[base + iB[j]];
      pk[q] = w;
      for (let s = 1; s < K; s++) pk[q + s * sheetStride] = w;
    }
    let s = 0;
    for (let i = 0; i < nI; i++) s += inv[base + i];
    this.nbar[l] = s / nI;
  }

  /** Inversion index of the Doppler class nearest a mode (homogeneous: the one). */
  private nearestInversion(m: number): number {
    if (this.nInv === 1) return 0;
    // classes are symmetric and evenly spaced; inversion i is the class at centre_Hz[i]
    const d = this.p.modes.detuning_Hz[m];
    const c = this.bank.centre_Hz;
    const step = this.nInv > 1 ? c[1] - c[0] : 1;
    const i = Math.round((d - c[0]) / step);
    return Math.min(this.nInv - 1, Math.max(0, i));
  }

  /** Recompute the demodulation phasors from the time (no drift of the recursion). */
  private resyncPhasors(t: number): void {
    const d = this.p.modes.detuning_Hz;
    for (let m = 0; m < this.M; m++) {
      const th = -2 * Math.PI * frac(d[m] * t);
      this.phr[m] = Math.cos(th);
      this.phi[m] = Math.sin(th);
    }
  }

  /** Small-signal complex gain exponent G0 / (chi0 / 2) of the bank at detuning nu (tests, docs). */
  smallSignal(nu_Hz: number, lane = 0): { re: number; im: number } {
    const inv = this.inv.subarray(lane * this.nInv, (lane + 1) * this.nInv);
    return bankResponse(this.bank, nu_Hz, inv);
  }

  /** Inversions of a lane (copy). */
  inversions(l: number): number[] {
    return Array.from(this.inv.subarray(l * this.nInv, (l + 1) * this.nInv));
  }
}

/** The step the round-trip engine takes for these parameters. */
export function roundTripStepFor(p: CoupledParams): RoundTripStep {
  let maxDet = 0;
  for (const d of p.modes.detuning_Hz) maxDet = Math.max(maxDet, Math.abs(d));
  const gapLoss = p.hasExternal ? 1 - p.R2 * p.r3eff * p.r3eff : 0;
  return chooseRoundTripStep(
    p.roundTripLaser_s,
    p.hasExternal ? p.roundTripExternal_s : 0,
    p.gain,
    maxDet,
    p.modes.fsr_Hz,
    gapLoss,
  );
}

/**
 * FIR taps h_k (complex) whose power response |H(nu)|^2 is the bank's small-signal gain
 * shape Re sum_j w_j H_j(nu) (1 at the peak): h = inverse DFT of sqrt(shape) on a fine
 * grid, centred, cut where the tail holds below 1e-4 of the energy.
 */
export function noiseFir(bank: PacketBank, dt: number): { re: Float64Array; im: Float64Array } {
  const Nf = 1024;
  const amp = new Float64Array(Nf);
  for (let f = 0; f < Nf; f++) {
    const nu = (f < Nf / 2 ? f : f - Nf) / (Nf * dt);
    const g = bankResponse(bank, nu, null).re;
    amp[f] = Math.sqrt(Math.max(0, g));
  }
  // h_k = (1/Nf) sum_f amp_f e^{i 2 pi f k / Nf}, k in [-Nf/2, Nf/2)
  const hr = new Float64Array(Nf);
  const hi = new Float64Array(Nf);
  for (let k = 0; k < Nf; k++) {
    let re = 0;
    let im = 0;
    for (let f = 0; f < Nf; f++) {
      const th = (2 * Math.PI * f * k) / Nf;
      re += amp[f] * Math.cos(th);
      im += amp[f] * Math.sin(th);
    }
    hr[k] = re / Nf;
    hi[k] = im / Nf;
  }
  // energy per lag (k and Nf - k are the lags +k and -k)
  let total = 0;
  for (let k = 0; k < Nf; k++) total += hr[k] * hr[k] + hi[k] * hi[k];
  let half = 0;
  let kept = hr[0] * hr[0] + hi[0] * hi[0];
  while (half < Nf / 2 - 1 && kept < total * (1 - 1e-4)) {
    half++;
    kept +=
      hr[half] * hr[half] +
      hi[half] * hi[half] +
      hr[Nf - half] * hr[Nf - half] +
      hi[Nf - half] * hi[Nf - half];
  }
  // taps in time order: lag -half .. +half (a kick now adds h_{k - half} to step now + k)
  const n = 2 * half + 1;
  const re = new Float64Array(n);
  const im = new Float64Array(n);
  const norm = Math.sqrt(total / kept);
  for (let k = 0; k < n; k++) {
    const lag = k - half;
    const i = (lag + Nf) % Nf;
    re[k] = hr[i] * norm;
    im[k] = hi[i] * norm;
  }
  return { re, im };
}
