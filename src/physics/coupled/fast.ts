/**
 * The accelerated external-cavity engine of docs/model.md §3.4. The external field is a mean
 * field over external round trips,
 *
 *   tau_E da_m/dt = (r2' r3' e^{-i phi_m(t)} - 1) a_m + t2 sqrt(eta_fb) E_m,  r2' = -r2,
 *   b_m = r3' e^{-i phi_m} a_m,
 *
 * coupled to the same laser equations as the exact engine. For a frozen inversion and a
 * frozen round-trip phase the pair (E_m, a_m) obeys a linear 2 x 2 system
 *
 *   d/dt [E; a] = A [E; a],  A = [[ (1 + i alpha) (G - gamma_c) / 2,  kappa r3' e^{-i phi} ],
 *                                [ t2 sqrt(eta) / tau_E,               -(1 + r2 r3' e^{-i phi}) / tau_E ]],
 *
 * whose exact propagator exp(A h) (closed form for 2 x 2 matrices) is A-stable however
 * stiff the external decay is off resonance. The inversion is advanced by Strang
 * splitting: a half step with |E|^2 frozen (solved exactly), the linear step at the
 * midpoint phase, another half step. The step is limited by the gain dynamics and by the
 * passage through resonance, not by the round-trip time.
 *
 * Energy bookkeeping uses composite Simpson over four sub-intervals of each step (the
 * propagator is applied as four quarter steps), so each subsystem's own balance closes
 * to the quadrature error.
 */
import type { CoupledParams } from './params';
import { LaneEngineBase } from './lane-base';
import type { LaneEngine, MirrorMotion, NormalSource } from './lane-engine';
import { copyLaneFields, FIELD_FLUSH } from './lane-engine';

/** sub-intervals of each step for the energy quadrature (composite Simpson; even) */
const QUAD_INTERVALS = 4;

export class FastEngine extends LaneEngineBase implements LaneEngine {
  readonly kind = 'fast' as const;
  private readonly sat: Float64Array;
  private readonly zr: Float64Array;
  private readonly zi: Float64Array;
  /** propagator of the last half step: m11, m12, m21, m22 as (re, im) */
  private readonly mx = new Float64Array(8);

  /**
   * Rotation rate of each lane-mode's field against its cold-cavity frequency, rad/s
   * (feedback pulls the lasing frequency). The plain mean field is exact in steady state
   * only to first order in dw tau_E; with the round-trip factor taken at the pulled
   * frequency, tau_E da/dt = (-r2 z e^{-i dw tau_E} - 1 + i dw tau_E) a + t2 sqrt(eta) E,
   * the steady state of a field turning at dw is the delay line's,
   * a (1 + r2 z e^{-i dw tau_E}) = t2 sqrt(eta) E, for any dw.
   */
  private readonly dw: Float64Array;
  /** weight of each new rate estimate: h / (external photon lifetime), at most 1 */
  private readonly dwGain: number;

  /**
   * @param pullCorrection take the round-trip factor at the pulled frequency (see `dw`).
   *   Exact for steady states, so the static reference uses it; in a driven run the gap
   *   field is a spread of Doppler-shifted components rather than one rotating field, and
   *   against the exact engine the plain mean field did better there (a hopping case:
   *   +0.5 % plain, +6 to +8 % corrected; the strongly coupled demo at 10 kHz x 200 nm:
   *   -1.5 % plain), so driven runs keep it off.
   */
  constructor(
    p: CoupledParams,
    lanes: number,
    dt: number,
    motion: MirrorMotion,
    rng: NormalSource,
    readonly pullCorrection = false,
  ) {
    super(p, lanes, dt, motion, rng);
    this.dw = new Float64Array(lanes * p.M);
    const extLifetime = p.hasExternal
      ? p.roundTripExternal_s / Math.max(1e-12, 1 - (p.r2 * p.r3eff) ** 2)
      : dt;
    this.dwGain = Math.min(1, dt / extLifetime);
    this.sat = new Float64Array(p.M);
    this.zr = new Float64Array(p.M);
    this.zi = new Float64Array(p.M);
  }

  /** The mean field starts empty. */
  protected override afterStateSet(): void {
    this.ar.fill(0);
    this.ai.fill(0);
  }

  copyLane(other: LaneEngine, from: number, to: number): void {
    // any engine kind: the mean field needs only the present fields
    copyLaneFields(this, other, from, to);
    for (let m = 0; m < this.M; m++) {
      const jd = to * this.M + m;
      this.dw[jd] = other instanceof FastEngine ? other.dw[from * this.M + m] : 0;
    }
  }

  /** Stored external energy tau_E sum |a|^2 (one-way power times the round-trip time), J. */
  externalEnergy(l: number): number {
    if (!this.p.hasExternal) return 0;
    let s = 0;
    for (let m = 0; m < this.M; m++) {
      const j = l * this.M + m;
      s += this.ar[j] * this.ar[j] + this.ai[j] * this.ai[j];
    }
    return s * this.p.roundTripExternal_s;
  }

  /** r3' e^{-i phi_m} for every mode at mirror displacement x into (zr, zi). */
  private roundTripFactor(x: number): void {
    const r3 = this.p.hasExternal ? this.p.r3eff : 0;
    this.phases.at(x);
    for (let m = 0; m < this.M; m++) {
      this.zr[m] = r3 * this.phases.cos[m];
      this.zi[m] = -r3 * this.phases.sin[m];
    }
  }

  /** Saturation S_m = sum_k C_mk |E_k|^2 / P_sat of lane l into this.sat. */
  private saturation(l: number): void {
    const p = this.p;
    const M = this.M;
    const off = l * M;
    for (let m = 0; m < M; m++) {
      let s = 0;
      for (let k = 0; k < M; k++) {
        const j = off + k;
        s += p.cross[m * M + k] * (this.Er[j] * this.Er[j] + this.Ei[j] * this.Ei[j]);
      }
      this.sat[m] = s * p.invPsat;
    }
  }

  /** Advance the inversions of lane l by tau with |E|^2 frozen (exact exponential relaxation). */
  private inversionStep(l: number, tau: number): void {
    const p = this.p;
    this.saturation(l);
    const off = l * this.M;
    for (let m = 0; m < this.M; m++) {
      // the relaxation target p f / D of docs/model.md §3.2, reached at the rate D / tau_N
      const rate = p.inhomogeneous ? Math.sqrt(1 + 0.5 * this.sat[m]) : 1 + this.sat[m];
      const nInf = (p.pump * p.gainRel[m]) / rate;
      if (p.classA) this.N[off + m] = nInf;
      else this.N[off + m] = nInf + (this.N[off + m] - nInf) * Math.exp((-rate * tau) / p.tauN);
    }
  }

  /**
   * exp(A tau) of the 2 x 2 complex matrix A into this.mx, by
   * exp(A tau) = [(e1 + e2) / 2] I + [(e1 - e2) / (2 s)] (A - c I), c = tr A / 2,
   * s = sqrt(((A11 - A22) / 2)^2 + A12 A21), e1,2 = e^{(c +- s) tau} (no overflow for stiff A:
   * each exponent has a real part bounded above by the largest eigenvalue's); a Taylor form
   * for |s tau| < 1e-4 (degenerate eigenvalues).
   */
  private expm2(
    a11r: number,
    a11i: number,
    a12r: number,
    a12i: number,
    a21r: number,
    a21i: number,
    a22r: number,
    a22i: number,
    tau: number,
  ): void {
    const cr = 0.5 * (a11r + a22r);
    const ci = 0.5 * (a11i + a22i);
    const dr = 0.5 * (a11r - a22r);
    const di = 0.5 * (a11i - a22i);
    // s^2 = d^2 + a12 a21
    const s2r = dr * dr - di * di + (a12r * a21r - a12i * a21i);
    const s2i = 2 * dr * di + (a12r * a21i + a12i * a21r);
    // principal complex square root
    const mod = Math.hypot(s2r, s2i);
    const sr = Math.sqrt(Math.max(0, 0.5 * (mod + s2r)));
    let si = Math.sqrt(Math.max(0, 0.5 * (mod - s2r)));
    if (s2i < 0) si = -si;
    let qr: number, qi: number, pr: number, pi: number; // Q = cosh part, P = sinh(s tau)/s part
    const str = sr * tau,
      sti = si * tau;
    if (str * str + sti * sti < 1e-8) {
      const ecr = Math.exp(cr * tau);
      const er = ecr * Math.cos(ci * tau);
      const ei = ecr * Math.sin(ci * tau);
      const x2r = str * str - sti * sti;
      const x2i = 2 * str * sti;
      // Q = e^{c tau} (1 + (s tau)^2 / 2), P = e^{c tau} tau (1 + (s tau)^2 / 6)
      qr = er * (1 + 0.5 * x2r) - ei * (0.5 * x2i);
      qi = ei * (1 + 0.5 * x2r) + er * (0.5 * x2i);
      pr = tau * (er * (1 + x2r / 6) - ei * (x2i / 6));
      pi = tau * (ei * (1 + x2r / 6) + er * (x2i / 6));
    } else {
      const m1 = Math.exp((cr + sr) * tau);
      const e1r = m1 * Math.cos((ci + si) * tau);
      const e1i = m1 * Math.sin((ci + si) * tau);
      const m2 = Math.exp((cr - sr) * tau);
      const e2r = m2 * Math.cos((ci - si) * tau);
      const e2i = m2 * Math.sin((ci - si) * tau);
      qr = 0.5 * (e1r + e2r);
      qi = 0.5 * (e1i + e2i);
      // (e1 - e2) / (2 s)
      const nr = 0.5 * (e1r - e2r);
      const ni = 0.5 * (e1i - e2i);
      const den = sr * sr + si * si;
      pr = (nr * sr + ni * si) / den;
      pi = (ni * sr - nr * si) / den;
    }
    const mx = this.mx;
    // M = Q I + P (A - c I): diagonal entries Q + P (A11 - c) = Q + P d, Q - P d
    mx[0] = qr + (pr * dr - pi * di);
    mx[1] = qi + (pr * di + pi * dr);
    mx[2] = pr * a12r - pi * a12i;
    mx[3] = pr * a12i + pi * a12r;
    mx[4] = pr * a21r - pi * a21i;
    mx[5] = pr * a21i + pi * a21r;
    mx[6] = qr - (pr * dr - pi * di);
    mx[7] = qi - (pr * di + pi * dr);
  }

  protected stepOnce(): void {
    const p = this.p;
    const M = this.M;
    const h = this.dt;
    const half = 0.5 * h;
    const tauL = p.roundTripLaser_s;
    const tauE = p.hasExternal ? p.roundTripExternal_s : 1;
    const ext = p.hasExternal;
    const noiseSigma = this.noiseKick();
    const xMid = ext ? this.motion.position(this.t + half) : 0;
    const xEnd = ext ? this.motion.position(this.t + h) : 0;
    const g = p.gammaC;
    let kap = p.kappa;
    let cpl = p.couplingOut;
    const r2 = p.r2;
    let etaT2 = cpl * cpl;
    const mx = this.mx;
    const varying = ext && p.couplingAt !== null;
    for (let l = 0; l < this.L; l++) {
      const off = l * M;
      const e = this.energy[l];
      if (varying) {
        const f = this.followCoupling(l, this.offset[l] + xMid);
        kap = p.kappa * f;
        cpl = p.couplingOut * f;
        etaT2 = cpl * cpl;
      }
      this.inversionStep(l, half);
      if (ext) this.roundTripFactor(this.offset[l] + xMid);
      let gain = 0,
        loss = 0,
        inj = 0,
        xin = 0,
        xlost = 0,
        xscale = 0,
        mis = 0,
        misScale = 0,
        noiseE = 0;
      for (let m = 0; m < M; m++) {
        const j = off + m;
        const G = g * this.N[j];
        // frequency-corrected round trip: z' = z e^{-i dw tau_E} for a field turning at dw
        const th = ext && this.pullCorrection ? this.dw[j] * tauE : 0;
        const ct = Math.cos(th);
        const st = Math.sin(th);
        const zr = ext ? this.zr[m] * ct + this.zi[m] * st : 0;
        const zi = ext ? this.zi[m] * ct - this.zr[m] * st : 0;
        const a11r = 0.5 * (G - g);
        // data-sheet alpha: d(phase)/dt = (alpha / 2)(G - gamma_c) (docs/model.md §3.1)
        const a11i = 0.5 * p.alpha * (G - g);
        const a12r = kap * zr;
        const a12i = kap * zi;
        const a21r = ext ? cpl / tauE : 0;
        const a22r = ext ? -(1 + r2 * zr) / tauE : -1;
        const a22i = ext ? (th - r2 * zi) / tauE : 0;
        this.expm2(a11r, a11i, a12r, a12i, a21r, 0, a22r, a22i, h / QUAD_INTERVALS);
        // propagate over QUAD_INTERVALS sub-intervals; composite Simpson weights (1, 4, 2, ..., 4, 1) h / (3 n)
        let Er = this.Er[j],
          Ei = this.Ei[j],
          Ar = this.ar[j],
          Ai = this.ai[j];
        for (let k = 0; k <= QUAD_INTERVALS; k++) {
          if (k > 0) {
            const nEr = mx[0] * Er - mx[1] * Ei + mx[2] * Ar - mx[3] * Ai;
            const nEi = mx[0] * Ei + mx[1] * Er + mx[2] * Ai + mx[3] * Ar;
            const nAr = mx[4] * Er - mx[5] * Ei + mx[6] * Ar - mx[7] * Ai;
            const nAi = mx[4] * Ei + mx[5] * Er + mx[6] * Ai + mx[7] * Ar;
            Er = nEr;
            Ei = nEi;
            Ar = nAr;
            Ai = nAi;
          }
          const w = k === 0 || k === QUAD_INTERVALS ? 1 : k % 2 === 1 ? 4 : 2;
          const e2 = Er * Er + Ei * Ei;
          gain += w * G * e2;
          loss += w * g * e2;
          if (ext) {
            // b = z a (z frozen over the step)
            const br = zr * Ar - zi * Ai,
              bi = zr * Ai + zi * Ar;
            const rp = Er * br + Ei * bi;
            inj += w * 2 * kap * rp;
            const a2 = Ar * Ar + Ai * Ai;
            // d(tau_E |a|^2)/dt = 2 t2 sqrt(eta) Re(a* E) - 2 (1 + r2 Re z) |a|^2
            xin += w * 2 * cpl * (Ar * Er + Ai * Ei);
            xlost += w * 2 * (1 + r2 * zr) * a2;
            xscale += w * a2;
            if (p.returnToLaser) mis += w * (etaT2 * (br * br + bi * bi) + 2 * (r2 - 1) * cpl * rp);
            misScale += w * etaT2 * e2;
          }
        }
        let E2r = Er,
          E2i = Ei,
          A2r = Ar,
          A2i = Ai;
        if (noiseSigma > 0) {
          const before = E2r * E2r + E2i * E2i;
          // The step may be long against the photon lifetime (the propagator is exact), so the
          // kick carries the variance an Ornstein-Uhlenbeck field gathers over the noise
          // interval h while decaying at lambda = gamma_c (1 - n) / 2:
          // P_sp f gamma_c (1 - e^{-2 lambda h}) / (2 lambda), not P_sp f gamma_c h
          // (Gardiner, Handbook of Stochastic Methods, sec. 3.8.4), so a mode below
          // threshold holds P_sp f / (1 - p f) at any step.
          const x = g * (1 - this.N[j]) * h * this.noiseEvery;
          const ou = x > 1e-6 ? (1 - Math.exp(-x)) / x : 1;
          const sg = noiseSigma * this.noiseWeight[m] * Math.sqrt(ou);
          E2r += sg * this.rng.normal();
          E2i += sg * this.rng.normal();
          noiseE += E2r * E2r + E2i * E2i - before;
        }
        if (E2r * E2r + E2i * E2i < FIELD_FLUSH) {
          E2r = 0;
          E2i = 0;
        }
        if (A2r * A2r + A2i * A2i < FIELD_FLUSH) {
          A2r = 0;
          A2i = 0;
        }
        if (!(Number.isFinite(E2r) && Number.isFinite(E2i) && Number.isFinite(A2r) && Number.isFinite(A2i))) {
          this.failNonFinite(m, 'field', ' (fast engine)');
          return;
        }
        this.Er[j] = E2r;
        this.Ei[j] = E2i;
        this.ar[j] = A2r;
        this.ai[j] = A2i;
        if (this.pullCorrection && ext) {
          // the field's rotation rate Im(E* dE/dt) / |E|^2 with dE/dt = A11 E + A12 a, for
          // the next step's correction; a mode at the noise level keeps no correction
          // the external field remembers the past over its photon lifetime, so the rate is
          // averaged over that time (first-order filter)
          const e2 = E2r * E2r + E2i * E2i;
          if (e2 > 1e6 * p.spontaneous_W + 1e-30) {
            const dEr = a11r * E2r - a11i * E2i + a12r * A2r - a12i * A2i;
            const dEi = a11r * E2i + a11i * E2r + a12r * A2i + a12i * A2r;
            const rate = (E2r * dEi - E2i * dEr) / e2;
            this.dw[j] += (rate - this.dw[j]) * this.dwGain;
          } else this.dw[j] = 0;
        }
      }
      const w6 = h / (3 * QUAD_INTERVALS);
      e.gain += w6 * gain * tauL;
      e.coldLoss += w6 * loss * tauL;
      e.injection += w6 * inj * tauL;
      e.noise += noiseE * tauL;
      e.externalIn += w6 * xin;
      e.externalLost += w6 * xlost;
      e.externalScale += w6 * xscale;
      e.mismatch += w6 * mis;
      e.mismatchScale += w6 * misScale;
      this.inversionStep(l, half);
      if (ext) {
        // the returned field at the new time
        this.roundTripFactor(this.offset[l] + xEnd);
        for (let m = 0; m < M; m++) {
          const j = off + m;
          const th = this.pullCorrection ? this.dw[j] * tauE : 0;
          const ct = Math.cos(th);
          const st = Math.sin(th);
          const zr = this.zr[m] * ct + this.zi[m] * st;
          const zi = this.zi[m] * ct - this.zr[m] * st;
          this.br[j] = zr * this.ar[j] - zi * this.ai[j];
          this.bi[j] = zr * this.ai[j] + zi * this.ar[j];
        }
      }
    }
    this.t += h;
  }
}
