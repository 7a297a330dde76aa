/**
 * What the two time-stepping engines share: the lane state arrays, the laser energy, the
 * bookkeeping reset, the stepping loop, the spontaneous-emission cadence and the external
 * round-trip phase of every mode.
 */
import type { CoupledParams } from './params';
import { emptyEnergy, LaneStore } from './lane-engine';
import type { LaneEngine, LaneEnergy, MirrorMotion, NormalSource } from './lane-engine';
import {
  coldLossShares,
  ColdLossShares,
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

/**
 * cos and sin of the external round-trip phase phi_m = 2 pi frac(2 L2 / lambda_m) +
 * (4 pi / lambda_m) x of every mode at mirror displacement x. The modes are equally
 * spaced in frequency, so each phasor follows from its neighbour's by one complex
 * rotation: two trig calls per evaluation instead of 2 M.
 */
export class ModePhases {
  readonly cos: Float64Array;
  readonly sin: Float64Array;
  private readonly uniform: boolean;
  private readonly d0: number;
  private readonly dk: number;

  constructor(private readonly p: CoupledParams) {
    const M = p.M;
    this.cos = new Float64Array(M);
    this.sin = new Float64Array(M);
    let uniform = M > 1;
    for (let m = 1; m < M; m++) if (p.modes.order[m] - p.modes.order[m - 1] !== 1) uniform = false;
    this.uniform = uniform;
    this.d0 = M > 1 ? p.extPhase0[1] - p.extPhase0[0] : 0;
    this.dk = M > 1 ? p.phasePerMetre[1] - p.phasePerMetre[0] : 0;
  }

  /** Fill cos and sin for displacement x, m. */
  at(x: number): void {
    const p = this.p;
    const M = p.M;
    if (!this.uniform) {
      for (let m = 0; m < M; m++) {
        const ph = p.extPhase0[m] + p.phasePerMetre[m] * x;
        this.cos[m] = Math.cos(ph);
        this.sin[m] = Math.sin(ph);
      }
      return;
    }
    const ph = p.extPhase0[0] + p.phasePerMetre[0] * x;
    let c = Math.cos(ph);
    let s = Math.sin(ph);
    const d = this.d0 + this.dk * x;
    const dc = Math.cos(d);
    const ds = Math.sin(d);
    for (let m = 0; m < M; m++) {
      if (m > 0) {
        const c2 = c * dc - s * ds;
        s = s * dc + c * ds;
        c = c2;
      }
      this.cos[m] = c;
      this.sin[m] = s;
    }
  }
}

export abstract class LaneEngineBase
  extends LaneStore
  implements Omit<LaneEngine, 'kind' | 'copyLane' | 'externalEnergy'>
{
  energy: LaneEnergy[];
  /**
   * Spontaneous emission is added every noiseEvery steps with the variance of that many
   * steps (independent increments add): a white-noise source sampled on a grid far finer
   * (at most 2 % of a photon lifetime) than every response time of the system.
   */
  readonly noiseEvery: number;
  /**
   * sqrt(f_m) per mode: spontaneous emission is weighted by the gain line like the gain
   * itself, <|dE_m|^2> = P_sp f_m gamma_c dt, so that below threshold mode m holds
   * P_sp f_m / (1 - p f_m) (docs/model.md §3.1).
   */
  readonly noiseWeight: Float64Array;
  private noiseCount = 0;
  protected readonly phases: ModePhases;
  /**
   * Amplitude factor on the coupling t2 sqrt(eta_fb) of each lane at its last step
   * (params.couplingAt at the mirror's position; 1 when the coupling does not vary).
   */
  readonly couplingNow: Float64Array;
  private readonly shares: ColdLossShares;

  constructor(
    p: CoupledParams,
    lanes: number,
    dt: number,
    readonly motion: MirrorMotion,
    readonly rng: NormalSource,
  ) {
    super(p, lanes, dt);
    this.energy = Array.from({ length: lanes }, () => emptyEnergy());
    this.noiseEvery = Math.max(1, Math.min(64, Math.floor(0.02 / (p.gammaC * dt))));
    this.noiseWeight = Float64Array.from(p.gainRel, (f) => Math.sqrt(Math.max(0, f)));
    this.phases = new ModePhases(p);
    this.couplingNow = new Float64Array(lanes).fill(1);
    this.shares = coldLossShares(p);
  }

  /** |a_del|^2 of lane-mode j: the forward power the returned field b was reflected from. */
  protected delayedForward2(j: number): number {
    return this.ar[j] * this.ar[j] + this.ai[j] * this.ai[j];
  }

  /** Amplitude factor of the coupling at mirror displacement x (1 when it does not vary). */
  protected couplingFactor(x: number): number {
    const law = this.p.couplingAt;
    return law === null ? 1 : law(x);
  }

  /**
   * docs/model.md §2.5: the coupling of lane l follows the mirror, taken at displacement x
   * (the step's midpoint); records it in couplingNow and returns its amplitude factor.
   */
  protected followCoupling(l: number, x: number): number {
    const f = this.couplingFactor(x);
    this.couplingNow[l] = f;
    return f;
  }

  /** See LaneEngine.powerFlows and power-flows.ts for the slots. */
  powerFlows(l: number, out: Float64Array): void {
    const p = this.p;
    const M = this.M;
    let e2 = 0;
    let gain = 0;
    let a2 = 0;
    let b2 = 0;
    let ad2 = 0;
    let eb = 0;
    for (let m = 0; m < M; m++) {
      const j = l * M + m;
      const v = this.Er[j] * this.Er[j] + this.Ei[j] * this.Ei[j];
      e2 += v;
      gain += p.gammaC * this.N[j] * v;
      if (p.hasExternal) {
        a2 += this.ar[j] * this.ar[j] + this.ai[j] * this.ai[j];
        b2 += this.br[j] * this.br[j] + this.bi[j] * this.bi[j];
        eb += this.Er[j] * this.br[j] + this.Ei[j] * this.bi[j];
        ad2 += this.delayedForward2(j);
      }
    }
    for (let k = 0; k < FLOW_COUNT; k++) out[k] = 0;
    const tauL = p.roundTripLaser_s;
    const cold = p.gammaC * tauL * e2;
    const out2 = p.T2 * e2;
    const rest = cold - out2;
    out[FLOW_SUPPLY] = tauL * gain;
    out[FLOW_REAR_THROUGH] = this.shares.rearThrough * rest;
    out[FLOW_MIRROR_LOSS] = this.shares.mirrorLoss * rest;
    out[FLOW_INTERNAL_LOSS] = this.shares.internal * rest;
    if (!p.hasExternal) {
      out[FLOW_LASER_OUTPUT] = out2;
      return;
    }
    const f = this.couplingNow[l];
    const eta = p.feedbackEfficiency * f * f;
    const Tg = p.gapTransmission;
    out[FLOW_UNMATCHED] = (1 - eta) * out2;
    // the laser ignoring its feedback: the ideal isolator takes all the change of the light
    // M2 sends back, interference with the laser's own reflection included
    out[FLOW_RETURNED_LOST] = p.returnToLaser
      ? (1 - eta) * p.T2 * b2
      : p.T2 * b2 + 2 * p.r2 * p.t2 * f * Math.sqrt(p.feedbackEfficiency) * eb;
    out[FLOW_MIRROR_LOSS] += p.A2 * b2 + p.A3 * Tg * ad2;
    out[FLOW_RETURN_THROUGH] = p.T3 * Tg * ad2;
    out[FLOW_GAP_ELEMENT] = (1 - Tg) * (1 + p.R3 * Tg) * ad2;
    out[FLOW_GAP_CLIPPING] = (1 - p.roundtripEfficiency) * p.R3 * Tg * Tg * ad2;
    out[FLOW_LASER_OUTPUT] = (1 - eta) * out2 + a2 - b2;
    out[FLOW_GAP_ONE_WAY] = a2;
  }

  abstract externalEnergy(l: number): number;
  protected abstract stepOnce(): void;

  /** Set every lane's laser fields and inversions (length M each); the external field starts empty. */
  setLaserState(Er: ArrayLike<number>, Ei: ArrayLike<number>, N: ArrayLike<number>): void {
    for (let l = 0; l < this.L; l++) {
      for (let m = 0; m < this.M; m++) {
        const j = l * this.M + m;
        this.Er[j] = Er[m];
        this.Ei[j] = Ei[m];
        this.N[j] = N[m];
        this.br[j] = 0;
        this.bi[j] = 0;
      }
    }
    this.afterStateSet();
  }

  /** Hook for an engine to derive its external state from the laser state just set. */
  protected afterStateSet(): void {
    const p = this.p;
    for (let j = 0; j < this.L * this.M; j++) {
      this.ar[j] = p.couplingOut * this.Er[j];
      this.ai[j] = p.couplingOut * this.Ei[j];
    }
  }

  /** Stored laser energy of a lane, tau_L sum |E|^2, J. */
  laserEnergy(l: number): number {
    let s = 0;
    for (let m = 0; m < this.M; m++) {
      const j = l * this.M + m;
      s += this.Er[j] * this.Er[j] + this.Ei[j] * this.Ei[j];
    }
    return s * this.p.roundTripLaser_s;
  }

  laneEnergy(l: number): LaneEnergy {
    return this.energy[l];
  }

  /** Circulating one-way power in the gap, sum over modes of |a_m|^2, W. */
  externalPower(l: number): number {
    let s = 0;
    for (let m = 0; m < this.M; m++) {
      const j = l * this.M + m;
      s += this.ar[j] * this.ar[j] + this.ai[j] * this.ai[j];
    }
    return s;
  }

  /** One-way intracavity power, sum over modes of |E_m|^2, W. */
  intracavityPower(l: number): number {
    let s = 0;
    for (let m = 0; m < this.M; m++) {
      const j = l * this.M + m;
      s += this.Er[j] * this.Er[j] + this.Ei[j] * this.Ei[j];
    }
    return s;
  }

  /** Power returning to M2 from the gap, sum over modes of |b_m|^2, W. */
  returnedPower(l: number): number {
    let s = 0;
    for (let m = 0; m < this.M; m++) {
      const j = l * this.M + m;
      s += this.br[j] * this.br[j] + this.bi[j] * this.bi[j];
    }
    return s;
  }

  /**
   * Net power leaving through M2 on the outside, W: |a|^2 - |b|^2 for the matched part,
   * plus the unmatched part of the laser's output (1 - eta_fb) T2 |E|^2 (docs/model.md §3.3).
   */
  laserOutput(l: number): number {
    const p = this.p;
    let s = 0;
    for (let m = 0; m < this.M; m++) {
      const j = l * this.M + m;
      const E2 = this.Er[j] * this.Er[j] + this.Ei[j] * this.Ei[j];
      if (!p.hasExternal) {
        s += p.T2 * E2;
        continue;
      }
      s +=
        (1 - p.feedbackEfficiency) * p.T2 * E2 +
        this.ar[j] * this.ar[j] +
        this.ai[j] * this.ai[j] -
        this.br[j] * this.br[j] -
        this.bi[j] * this.bi[j];
    }
    return s;
  }

  /** Start the energy bookkeeping of every lane from the present state. */
  resetEnergy(): void {
    for (let l = 0; l < this.L; l++) {
      const e = emptyEnergy();
      e.laserStart = this.laserEnergy(l);
      e.externalStart = this.externalEnergy(l);
      this.energy[l] = e;
    }
  }

  /**
   * Advance every lane by `steps` time steps; after each step call onStep (if given).
   * Returns false if a non-finite value appeared (failMessage says where).
   */
  advance(steps: number, onStep?: (engine: LaneEngine) => void): boolean {
    for (let s = 0; s < steps; s++) {
      this.stepOnce();
      if (this.failed) return false;
      if (onStep) onStep(this as unknown as LaneEngine);
    }
    return true;
  }

  /**
   * Standard deviation of each quadrature of the noise kick due at this step at the gain
   * peak (0 if none); mode m's kick is this times noiseWeight[m].
   */
  protected noiseKick(): number {
    this.noiseCount++;
    if (this.noiseCount < this.noiseEvery) return 0;
    this.noiseCount = 0;
    const p = this.p;
    return Math.sqrt(0.5 * p.spontaneous_W * p.gammaC * this.dt * this.noiseEvery);
  }
}
