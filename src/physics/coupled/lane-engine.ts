/**
 * What the reference and driven runs need of a time-stepping engine, whichever one it is
 * (exact delay line or accelerated mean field): lanes of (laser modes, external field)
 * advancing in lockstep, each lane with its own rest offset of the return mirror.
 */
import type { CoupledParams } from './params';

/** The return mirror's motion, shared by all lanes (each adds its own rest offset). */
export interface MirrorMotion {
  /** displacement from the rest position at time t, m */
  position(t: number): number;
  /** velocity at time t, m/s */
  velocity(t: number): number;
}

/** Source of standard normal deviates (seeded, so runs repeat). */
export interface NormalSource {
  normal(): number;
}

/** Per-lane energy bookkeeping (docs/model.md §3.3), joules. */
export interface LaneEnergy {
  /** stored laser energy tau_L sum |E|^2 at the start of bookkeeping */
  laserStart: number;
  gain: number;
  coldLoss: number;
  injection: number;
  noise: number;
  /** stored external energy at the start of bookkeeping */
  externalStart: number;
  externalIn: number;
  externalLost: number;
  /** integral of |a|^2 dt, the scale the external balance is judged against */
  externalScale: number;
  /** mean-field interface mismatch: integral of (exact - mean-field) power the laser receives */
  mismatch: number;
  /** integral of the power the laser puts into the external mode, eta T2 |E|^2 */
  mismatchScale: number;
}

export function emptyEnergy(): LaneEnergy {
  return {
    laserStart: 0,
    gain: 0,
    coldLoss: 0,
    injection: 0,
    noise: 0,
    externalStart: 0,
    externalIn: 0,
    externalLost: 0,
    externalScale: 0,
    mismatch: 0,
    mismatchScale: 0,
  };
}

/** A field whose power falls below this is set to zero (no denormal arithmetic in the step loops). */
export const FIELD_FLUSH = 1e-150;

/**
 * The lane state every engine keeps (see LaneEngine): fields and inversions per lane-mode
 * (index lane * M + m), the rest offset per lane, the time and the failure flag.
 */
export class LaneStore {
  readonly L: number;
  readonly M: number;
  /** time, s */
  t = 0;
  /** laser fields and inversions, index lane * M + m */
  readonly Er: Float64Array;
  readonly Ei: Float64Array;
  readonly N: Float64Array;
  /** field leaving M2 towards M3 (the gap's forward field) */
  readonly ar: Float64Array;
  readonly ai: Float64Array;
  /** field returning to M2 from M3 */
  readonly br: Float64Array;
  readonly bi: Float64Array;
  /** rest offset of the return mirror per lane, m */
  readonly offset: Float64Array;
  failed = false;
  failMessage = '';

  /** Fail the engine at a non-finite `what` of mode slot m (the message names the mode and the time). */
  protected failNonFinite(m: number, what: string, suffix = ''): void {
    this.failed = true;
    this.failMessage = `non-finite ${what} in mode ${this.p.modes.index[m]} at t = ${this.t.toExponential(3)} s${suffix}`;
  }

  /**
   * @param p engine parameters
   * @param lanes number of lanes
   * @param dt time step, s
   */
  constructor(
    readonly p: CoupledParams,
    lanes: number,
    readonly dt: number,
  ) {
    this.L = lanes;
    this.M = p.M;
    const LM = lanes * p.M;
    this.Er = new Float64Array(LM);
    this.Ei = new Float64Array(LM);
    this.N = new Float64Array(LM);
    this.ar = new Float64Array(LM);
    this.ai = new Float64Array(LM);
    this.br = new Float64Array(LM);
    this.bi = new Float64Array(LM);
    this.offset = new Float64Array(lanes);
  }
}

/**
 * Copy the laser fields, inversions and gap fields of every mode of lane `from` of `src`
 * into lane `to` of `dst` (the part of LaneEngine.copyLane every engine shares).
 */
export function copyLaneFields(dst: LaneStore, src: LaneStore, from: number, to: number): void {
  if (src.M !== dst.M) throw new Error('copyLane: engines differ in mode count');
  const M = dst.M;
  for (let m = 0; m < M; m++) {
    const js = from * M + m;
    const jd = to * M + m;
    dst.Er[jd] = src.Er[js];
    dst.Ei[jd] = src.Ei[js];
    dst.N[jd] = src.N[js];
    dst.br[jd] = src.br[js];
    dst.bi[jd] = src.bi[js];
    dst.ar[jd] = src.ar[js];
    dst.ai[jd] = src.ai[js];
  }
}

/** An engine: the lane state (LaneStore) and what can be done with it. */
export interface LaneEngine extends LaneStore {
  readonly kind: 'exact' | 'fast' | 'roundtrip';
  readonly energy: LaneEnergy[];
  /** the energy bookkeeping of lane l (without building every lane's) */
  laneEnergy(l: number): LaneEnergy;
  setLaserState(Er: ArrayLike<number>, Ei: ArrayLike<number>, N: ArrayLike<number>): void;
  /** copy the whole state of lane `from` of `src` (an engine of the same kind and shape) into lane `to` */
  copyLane(src: LaneEngine, from: number, to: number): void;
  resetEnergy(): void;
  laserEnergy(l: number): number;
  externalEnergy(l: number): number;
  /** circulating one-way power in the gap of lane l, W (docs/model.md §3.3, §3.5) */
  externalPower(l: number): number;
  /** one-way intracavity power of the laser at M2 of lane l, summed over modes, W */
  intracavityPower(l: number): number;
  /** power returning from the gap to M2 of lane l, W */
  returnedPower(l: number): number;
  /** net power leaving through M2 on the outside of lane l, W */
  laserOutput(l: number): number;
  advance(steps: number, onStep?: (engine: LaneEngine) => void): boolean;
  /**
   * Instantaneous power flows of lane l at the present state, W, summed over modes, into
   * out[0 .. FLOW_COUNT - 1]; the slots and their exact meaning are defined once in
   * power-flows.ts (docs/model.md §6). Allocates nothing.
   */
  powerFlows(l: number, out: Float64Array): void;
}

/**
 * Relative closing errors of the two subsystem balances of a lane (docs/model.md §3.3):
 * laser: stored change - (gain - cold loss + injection + noise), over the gain supplied;
 * external: stored change - (in - lost), over the integral of |a|^2; and the interface
 * mismatch over the power the laser puts into the external mode.
 */
export function balanceErrors(
  engine: LaneEngine,
  l: number,
): { laser: number; external: number; mismatch: number } {
  const e = engine.laneEnergy(l);
  const dL = engine.laserEnergy(l) - e.laserStart;
  const laserScale = Math.max(e.gain, e.coldLoss, 1e-300);
  const laser = Math.abs(dL - (e.gain - e.coldLoss + e.injection + e.noise)) / laserScale;
  let external = 0;
  if (engine.p.hasExternal && e.externalScale > 0) {
    const dE = engine.externalEnergy(l) - e.externalStart;
    external = Math.abs(dE - (e.externalIn - e.externalLost)) / e.externalScale;
  }
  const mismatch = e.mismatchScale > 0 ? Math.abs(e.mismatch) / e.mismatchScale : 0;
  return { laser, external, mismatch };
}
