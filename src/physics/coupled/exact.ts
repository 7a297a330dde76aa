/**
 * The exact round-trip (delay-line) engine of docs/model.md §3.1-3.3: a multimode rate-equation
 * laser (mean field over laser round trips) driven by the field returning from an external
 * cavity whose return mirror moves; the external cavity is a delay line of length
 * tau(t) = 2 (L2 + x(t)) / c, with every order of multiple reflection kept.
 *
 *   dE_m/dt = 1/2 (1 + i alpha) (G_m - gamma_c) E_m + kappa b_m(t) + noise_m
 *   dn_m/dt = [p f_m - n_m D(S_m)] / tau_N,  G_m = gamma_c n_m,  S_m = sum_k C_mk |E_k|^2 / P_sat
 *   D = 1 + S (homogeneous gain), sqrt(1 + S / 2) (Doppler gain; docs/model.md §3.2)
 *   a_m(t)  = t2 sqrt(eta_fb) E_m(t) - r2 b_m(t)
 *   b_m(t)  = r3' a_m(t - tau(t)) exp(-i omega_m tau(t))
 *
 * Several independent copies ("lanes": static positions or drive rest offsets) advance in
 * lockstep in one time loop; each lane has its own rest offset of the return mirror.
 * The laser equations are stepped with classical RK4 (written out here: its stage powers
 * book the energy), the returned field at the stage times is read from the history of a_m,
 * one delay line of src/numerics/delay-line.ts per (lane, mode), by 4-point Lagrange
 * interpolation (never newer than the newest sample), and spontaneous emission is added as a split step after each
 * RK4 step, its energy booked exactly.
 *
 * Storage is structure-of-arrays over (lane, mode) = lane * M + m; the step loop
 * allocates nothing.
 */
import { SPEED_OF_LIGHT_m_s } from '../constants';
import { ComplexDelayLines } from '../../numerics/delay-line';
import type { CoupledParams } from './params';
import { LaneEngineBase } from './lane-base';
import type { LaneEngine, MirrorMotion, NormalSource } from './lane-engine';
import { copyLaneFields, FIELD_FLUSH } from './lane-engine';

export type { LaneEnergy, MirrorMotion, NormalSource } from './lane-engine';
export { balanceErrors } from './lane-engine';

export class ExactEngine extends LaneEngineBase implements LaneEngine {
  readonly kind = 'exact' as const;
  /** |a(t - tau)|^2 at the current time, for the loss booking */
  readonly aDel2: Float64Array;

  /** history of a, one line per lane-mode j = lane * M + m */
  private readonly ring: ComplexDelayLines;
  private readonly tmp = new Float64Array(2);
  // RK4 scratch, one lane at a time
  private readonly e0r: Float64Array;
  private readonly e0i: Float64Array;
  private readonly n0: Float64Array;
  private readonly sr: Float64Array;
  private readonly si: Float64Array;
  private readonly sn: Float64Array;
  private readonly accR: Float64Array;
  private readonly accI: Float64Array;
  private readonly accN: Float64Array;
  private readonly kr: Float64Array;
  private readonly ki: Float64Array;
  private readonly kn: Float64Array;
  private readonly bhr: Float64Array;
  private readonly bhi: Float64Array;
  private readonly b1r: Float64Array;
  private readonly b1i: Float64Array;
  private readonly ad1: Float64Array;
  private readonly sat: Float64Array;
  // stage powers of the last rhs call (gain, cold loss, injection work), W
  private spGain = 0;
  private spLoss = 0;
  private spInj = 0;
  // parameter copies as own fields: one object shape in the hot loop
  private readonly kGamma: number;
  private readonly kCross: Float64Array;
  private readonly kInvPsat: number;
  private kKappa: number;
  private readonly kAlpha: number;
  private readonly kPumpF: Float64Array;
  private readonly kInvTauN: number;
  private readonly kClassA: boolean;
  private readonly kSqrtLaw: boolean;
  private readonly kNoiseW: Float64Array;
  private kCouple: number;
  private readonly kR2: number;
  private readonly kReturn: boolean;
  /** 2 / (c dt): delay in samples per metre of external length */
  private readonly delayPerMetre: number;
  /** [c] when C_mk = c for every k != m (then saturation is O(M)), else null */
  private readonly crossOff: Float64Array | null;

  /**
   * @param p engine parameters
   * @param lanes number of lanes
   * @param dt time step, s (for the delay line: tau_E / substeps)
   * @param motion the mirror motion shared by the lanes
   * @param rng normal deviates for spontaneous emission
   * @param maxExcursion_m bound on |offset + x(t)| over the run, sizes the history buffer
   */
  constructor(
    p: CoupledParams,
    lanes: number,
    dt: number,
    motion: MirrorMotion,
    rng: NormalSource,
    maxExcursion_m: number,
  ) {
    super(p, lanes, dt, motion, rng);
    const LM = lanes * p.M;
    this.aDel2 = new Float64Array(LM);
    let maxDelay = 0;
    if (p.hasExternal) {
      maxDelay = (2 * (p.externalLength_m + Math.abs(maxExcursion_m))) / SPEED_OF_LIGHT_m_s / dt;
      if (!(maxDelay < 1e7)) throw new Error('external delay too long for the history buffer');
      const minDelay = (2 * (p.externalLength_m - Math.abs(maxExcursion_m))) / SPEED_OF_LIGHT_m_s / dt;
      if (minDelay < 1.5)
        throw new Error(
          `time step ${dt} s too long for the external delay (${minDelay.toFixed(2)} steps); use more substeps`,
        );
    }
    this.ring = new ComplexDelayLines(LM, maxDelay, 4);
    const M = p.M;
    this.e0r = new Float64Array(M);
    this.e0i = new Float64Array(M);
    this.n0 = new Float64Array(M);
    this.sr = new Float64Array(M);
    this.si = new Float64Array(M);
    this.sn = new Float64Array(M);
    this.accR = new Float64Array(M);
    this.accI = new Float64Array(M);
    this.accN = new Float64Array(M);
    this.kr = new Float64Array(M);
    this.ki = new Float64Array(M);
    this.kn = new Float64Array(M);
    this.bhr = new Float64Array(M);
    this.bhi = new Float64Array(M);
    this.b1r = new Float64Array(M);
    this.b1i = new Float64Array(M);
    this.ad1 = new Float64Array(M);
    this.sat = new Float64Array(M);
    this.delayPerMetre = 2 / SPEED_OF_LIGHT_m_s / dt;
    this.kGamma = p.gammaC;
    this.kCross = p.cross;
    this.kInvPsat = p.invPsat;
    this.kKappa = p.kappa;
    this.kAlpha = p.alpha;
    this.kPumpF = Float64Array.from(p.gainRel, (f) => p.pump * f);
    this.kInvTauN = 1 / p.tauN;
    this.kClassA = p.classA;
    this.kSqrtLaw = p.inhomogeneous;
    this.kNoiseW = this.noiseWeight;
    this.kCouple = p.couplingOut;
    this.kR2 = p.r2;
    this.kReturn = p.returnToLaser;
    let offConst = true;
    const c0 = M > 1 ? p.cross[1] : 0;
    for (let m = 0; m < M; m++)
      for (let k = 0; k < M; k++) if (m !== k && p.cross[m * M + k] !== c0) offConst = false;
    this.crossOff = offConst ? Float64Array.of(c0) : null;
  }

  /**
   * Copy the full state (laser, history, returned field) of lane `from` of `other` into lane
   * `to`. From another kind of engine (or another history length) the history is filled
   * with the present forward field (the delay line then refills within a few round trips).
   */
  copyLane(other: LaneEngine, from: number, to: number): void {
    copyLaneFields(this, other, from, to);
    const src = other instanceof ExactEngine && other.ring.cap === this.ring.cap ? other : null;
    const M = this.M;
    for (let m = 0; m < M; m++) {
      const js = from * M + m;
      const jd = to * M + m;
      if (src !== null) {
        this.aDel2[jd] = src.aDel2[js];
        this.ring.copyLine(src.ring, js, jd);
      } else {
        this.aDel2[jd] = other.ar[js] * other.ar[js] + other.ai[js] * other.ai[js];
        this.ring.fill(jd, other.ar[js], other.ai[js]);
      }
    }
  }

  /** a = t2 sqrt(eta) E - r2 b for the newest sample (after a state change). */
  protected override afterStateSet(): void {
    const p = this.p;
    for (let j = 0; j < this.L * this.M; j++) {
      this.ar[j] = p.couplingOut * this.Er[j] - p.r2 * this.br[j];
      this.ai[j] = p.couplingOut * this.Ei[j] - p.r2 * this.bi[j];
      this.ring.set(j, this.ar[j], this.ai[j]);
    }
  }

  /**
   * Stored external energy of a lane: the delay-line content sum_m integral over
   * [t - tau, t] of |a_m|^2 (trapezoid over the history, fractional end interpolated), J.
   */
  externalEnergy(l: number): number {
    if (!this.p.hasExternal) return 0;
    const D = this.delaySamples(this.t, l);
    let s = 0;
    for (let m = 0; m < this.M; m++) s = this.ring.addStored(l * this.M + m, D, s);
    return s * this.dt;
  }

  /** Delay tau(t) / dt of a lane, in samples. */
  delaySamples(t: number, l: number): number {
    return (
      (2 * (this.p.externalLength_m + this.offset[l] + this.motion.position(t))) /
      SPEED_OF_LIGHT_m_s /
      this.dt
    );
  }

  /**
   * Returned field b of every mode of lane l at time t + s*dt (s in (0, 1]) with the mirror
   * at displacement x (rest offset included), from the history of a:
   * b = r3' a(t' - tau(t')) exp(-i phi_m(t')), into (outR, outI); |a_del|^2 into ad.
   */
  private returned(
    l: number,
    s: number,
    x: number,
    outR: Float64Array,
    outI: Float64Array,
    ad: Float64Array | null,
  ): void {
    const p = this.p;
    const back = this.delayPerMetre * (p.externalLength_m + x) - s;
    const ring = this.ring;
    ring.prepare(back);
    const M = this.M;
    const r3 = p.r3eff;
    const tmp = this.tmp;
    this.phases.at(x);
    const pc = this.phases.cos;
    const ps = this.phases.sin;
    for (let m = 0; m < M; m++) {
      ring.readPrepared(l * M + m, tmp, 0);
      const ar = tmp[0];
      const ai = tmp[1];
      if (ad !== null) ad[m] = ar * ar + ai * ai;
      const c = pc[m];
      const sn = ps[m];
      // multiply by r3' e^{-i ph}
      outR[m] = r3 * (ar * c + ai * sn);
      outI[m] = r3 * (ai * c - ar * sn);
    }
  }

  /**
   * Laser right-hand side for one lane's modes at state (er, ei, n) with returned field
   * (bR, bI); derivatives into (kr, ki, kn); stage powers into stagePower.
   */
  private rhs(
    er: Float64Array,
    ei: Float64Array,
    n: Float64Array,
    bR: Float64Array,
    bI: Float64Array,
    kr: Float64Array,
    ki: Float64Array,
    kn: Float64Array,
  ): void {
    const M = this.M;
    const g = this.kGamma;
    const C = this.kCross;
    const invPsat = this.kInvPsat;
    const sat = this.sat;
    if (this.crossOff !== null) {
      // C = diag(d) + c (1 - I): S_m = c sum_k |E_k|^2 + (d_m - c) |E_m|^2, O(M)
      const c0 = this.crossOff[0];
      let tot = 0;
      for (let k = 0; k < M; k++) tot += er[k] * er[k] + ei[k] * ei[k];
      for (let m = 0; m < M; m++)
        sat[m] = (c0 * tot + (C[m * M + m] - c0) * (er[m] * er[m] + ei[m] * ei[m])) * invPsat;
    } else {
      for (let m = 0; m < M; m++) {
        let s = 0;
        const row = m * M;
        for (let k = 0; k < M; k++) s += C[row + k] * (er[k] * er[k] + ei[k] * ei[k]);
        sat[m] = s * invPsat;
      }
    }
    let gainP = 0;
    let lossP = 0;
    let injP = 0;
    const kap = this.kKappa;
    const alpha = this.kAlpha;
    const pumpF = this.kPumpF;
    const invTauN = this.kInvTauN;
    const classA = this.kClassA;
    const sqrtLaw = this.kSqrtLaw;
    for (let m = 0; m < M; m++) {
      const D = sqrtLaw ? Math.sqrt(1 + 0.5 * sat[m]) : 1 + sat[m];
      let nm: number;
      if (classA) {
        nm = pumpF[m] / D;
        kn[m] = 0;
      } else {
        nm = n[m];
        kn[m] = (pumpF[m] - nm * D) * invTauN;
      }
      const G = g * nm;
      const re = er[m];
      const im = ei[m];
      const half = 0.5 * (G - g);
      // (1 + i alpha)(G - gamma_c) / 2: with the envelope's e^{+i omega t} convention a
      // positive phase rate is a higher optical frequency (data-sheet sign, Henry 1982)
      const rot = alpha * half;
      kr[m] = half * re - rot * im + kap * bR[m];
      ki[m] = half * im + rot * re + kap * bI[m];
      const e2 = re * re + im * im;
      gainP += G * e2;
      lossP += g * e2;
      injP += 2 * kap * (re * bR[m] + im * bI[m]);
    }
    this.spGain = gainP;
    this.spLoss = lossP;
    this.spInj = injP;
  }

  protected stepOnce(): void {
    const p = this.p;
    const M = this.M;
    const dt = this.dt;
    const half = 0.5 * dt;
    const tauL = p.roundTripLaser_s;
    const noiseSigma = this.noiseKick();
    const ext = p.hasExternal;
    const xh = ext ? this.motion.position(this.t + half) : 0;
    const x1 = ext ? this.motion.position(this.t + dt) : 0;
    const varying = p.couplingAt !== null;
    let etaT2 = this.kCouple * this.kCouple;
    for (let l = 0; l < this.L; l++) {
      const off = l * M;
      const e = this.energy[l];
      if (varying) {
        const f = this.followCoupling(l, this.offset[l] + xh);
        this.kKappa = p.kappa * f;
        this.kCouple = p.couplingOut * f;
        etaT2 = this.kCouple * this.kCouple;
      }
      // returned fields at t + dt/2 and t + dt (b at t is this.br/bi)
      if (ext) {
        this.returned(l, 0.5, this.offset[l] + xh, this.bhr, this.bhi, null);
        this.returned(l, 1, this.offset[l] + x1, this.b1r, this.b1i, this.ad1);
      }
      const e0r = this.e0r,
        e0i = this.e0i,
        n0 = this.n0;
      const b0r = this.bhr,
        b0i = this.bhi; // reused below after stage 1 (see copy)
      for (let m = 0; m < M; m++) {
        e0r[m] = this.Er[off + m];
        e0i[m] = this.Ei[off + m];
        n0[m] = this.N[off + m];
      }
      // stage 1 at t with b(t)
      const bcr = this.sr,
        bci = this.si; // temporarily hold b(t)
      for (let m = 0; m < M; m++) {
        bcr[m] = ext ? this.br[off + m] : 0;
        bci[m] = ext ? this.bi[off + m] : 0;
      }
      this.rhs(e0r, e0i, n0, bcr, bci, this.kr, this.ki, this.kn);
      let gainI = this.spGain;
      let lossI = this.spLoss;
      let injI = this.spInj;
      const sr = this.sr,
        si = this.si,
        sn = this.sn;
      const accR = this.accR,
        accI = this.accI,
        accN = this.accN;
      for (let m = 0; m < M; m++) {
        accR[m] = this.kr[m];
        accI[m] = this.ki[m];
        accN[m] = this.kn[m];
        sr[m] = e0r[m] + half * this.kr[m];
        si[m] = e0i[m] + half * this.ki[m];
        sn[m] = n0[m] + half * this.kn[m];
      }
      if (!ext) {
        b0r.fill(0);
        b0i.fill(0);
      }
      // stages 2 and 3 at t + dt/2 (RK4 weights 2), each setting up the next stage's state
      for (let stage = 2; stage <= 3; stage++) {
        this.rhs(sr, si, sn, b0r, b0i, this.kr, this.ki, this.kn);
        gainI += 2 * this.spGain;
        lossI += 2 * this.spLoss;
        injI += 2 * this.spInj;
        const next = stage === 2 ? half : dt;
        for (let m = 0; m < M; m++) {
          accR[m] += 2 * this.kr[m];
          accI[m] += 2 * this.ki[m];
          accN[m] += 2 * this.kn[m];
          sr[m] = e0r[m] + next * this.kr[m];
          si[m] = e0i[m] + next * this.ki[m];
          sn[m] = n0[m] + next * this.kn[m];
        }
      }
      if (!ext) {
        this.b1r.fill(0);
        this.b1i.fill(0);
      }
      // stage 4 at t + dt
      this.rhs(sr, si, sn, this.b1r, this.b1i, this.kr, this.ki, this.kn);
      gainI += this.spGain;
      lossI += this.spLoss;
      injI += this.spInj;
      const w6 = dt / 6;
      e.gain += w6 * gainI * tauL;
      e.coldLoss += w6 * lossI * tauL;
      e.injection += w6 * injI * tauL;
      let noiseE = 0;
      let extIn = 0;
      let extLost = 0;
      let extScale = 0;
      let mis = 0;
      let misScale = 0;
      for (let m = 0; m < M; m++) {
        const j = off + m;
        let re = e0r[m] + w6 * (accR[m] + this.kr[m]);
        let im = e0i[m] + w6 * (accI[m] + this.ki[m]);
        const nn = n0[m] + w6 * (accN[m] + this.kn[m]);
        if (noiseSigma > 0) {
          const before = re * re + im * im;
          const sg = noiseSigma * this.kNoiseW[m];
          re += sg * this.rng.normal();
          im += sg * this.rng.normal();
          noiseE += re * re + im * im - before;
        }
        if (re * re + im * im < FIELD_FLUSH) {
          re = 0;
          im = 0;
        }
        if (!(Number.isFinite(re) && Number.isFinite(im) && Number.isFinite(nn))) {
          this.failNonFinite(m, 'laser field');
          return;
        }
        const oldE2 = this.Er[j] * this.Er[j] + this.Ei[j] * this.Ei[j];
        this.Er[j] = re;
        this.Ei[j] = im;
        this.N[j] = nn;
        if (ext) {
          const b1r = this.b1r[m];
          const b1i = this.b1i[m];
          const a1r = this.kCouple * re - this.kR2 * b1r;
          const a1i = this.kCouple * im - this.kR2 * b1i;
          const a0r = this.ar[j],
            a0i = this.ai[j],
            b0rr = this.br[j],
            b0ii = this.bi[j];
          const a02 = a0r * a0r + a0i * a0i;
          const a12 = a1r * a1r + a1i * a1i;
          const bb0 = b0rr * b0rr + b0ii * b0ii;
          const bb1 = b1r * b1r + b1i * b1i;
          extIn += 0.5 * (a02 - bb0 + a12 - bb1);
          extLost += 0.5 * (this.aDel2[j] - bb0 + this.ad1[m] - bb1);
          extScale += 0.5 * (a02 + a12);
          // power the laser receives: exact (eta T2 |b|^2 + 2 r2 t2 sqrt(eta) Re(E b*)) minus
          // the mean-field injection work 2 t2 sqrt(eta) Re(E b*)
          const e1Re = re,
            e1Im = im;
          const rp1 = e1Re * b1r + e1Im * b1i;
          const oldRe = e0r[m],
            oldIm = e0i[m];
          const rp0 = oldRe * b0rr + oldIm * b0ii;
          if (this.kReturn) {
            mis += 0.5 * (etaT2 * (bb0 + bb1) + 2 * (this.kR2 - 1) * this.kCouple * (rp0 + rp1));
          }
          misScale += 0.5 * etaT2 * (oldE2 + re * re + im * im);
          this.br[j] = b1r;
          this.bi[j] = b1i;
          this.ar[j] = a1r;
          this.ai[j] = a1i;
          this.aDel2[j] = this.ad1[m];
          this.ring.setNext(j, a1r, a1i);
        }
      }
      if (p.classA) {
        // the adiabatic inversion follows the fields: store it for the observers
        for (let m = 0; m < M; m++) {
          const S = this.satOf(l, m);
          this.N[off + m] = (p.pump * p.gainRel[m]) / (this.kSqrtLaw ? Math.sqrt(1 + 0.5 * S) : 1 + S);
        }
      }
      e.noise += noiseE * tauL;
      e.externalIn += extIn * dt;
      e.externalLost += extLost * dt;
      e.externalScale += extScale * dt;
      e.mismatch += mis * dt;
      e.mismatchScale += misScale * dt;
    }
    this.ring.advance();
    this.t += dt;
  }

  /** |a(t - tau)|^2 of lane-mode j, the forward power b was reflected from. */
  protected override delayedForward2(j: number): number {
    return this.aDel2[j];
  }

  /** Saturation term sum_k C_mk |E_k|^2 / P_sat of one lane-mode from the stored fields. */
  private satOf(l: number, m: number): number {
    const p = this.p;
    const M = this.M;
    let s = 0;
    for (let k = 0; k < M; k++) {
      const j = l * M + k;
      s += p.cross[m * M + k] * (this.Er[j] * this.Er[j] + this.Ei[j] * this.Ei[j]);
    }
    return s * p.invPsat;
  }
}
