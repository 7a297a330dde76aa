/**
 * The driven run (docs/model.md §4): the actuator on, at several rest positions of the
 * mirror (lanes), settled, then statistics over whole drive periods.
 */
import type { CoupledParams } from '../physics/coupled/params';
import { balanceErrors } from '../physics/coupled/lane-engine';
import type { LaneEngine, MirrorMotion, NormalSource } from '../physics/coupled/lane-engine';
import { createLaneEngine, EngineKind } from '../physics/coupled/factory';
import { BoxcarFilter } from '../analysis/boxcar';
import { HopDetector } from '../analysis/hops';
import { RunningStats } from '../analysis/stats';
import { MinMaxDecimator } from '../analysis/decimate';
import { WelchPsd, RinSpectrum } from '../analysis/spectra';
import { OpticalSpectrum, OpticalSpectrumResult } from '../analysis/opticalSpectrum';
import type { TraceSet } from '../results/artifacts';
import { BudgetAccumulator } from './budget';
import type { PowerBudget } from '../results/summary';
import type { OffsetFigures } from '../analysis/summarise-run';

/** The options of DrivenAnalysis every driven path passes through (the window, hops, traces, spectra). */
export type AnalysisOptions = Pick<
  DrivenOptions,
  | 'detectionBandwidth_Hz'
  | 'hopDwell_s'
  | 'hopMargin'
  | 'driveFrequency_Hz'
  | 'drivePhase_rad'
  | 'traceBuckets'
  | 'spectralSpread_Hz'
  | 'spectrumMode'
>;

export interface DrivenOptions {
  dt: number;
  motion: MirrorMotion;
  /** rest offset of each lane relative to the drive's own offset, m */
  laneOffsets_m: number[];
  /** settled static states and their positions (relative to the drive offset), to start the lanes from */
  start: { store: LaneEngine; positions_m: number[] } | null;
  engine: EngineKind;
  /** fallback start: laser state only */
  initial: { Er: number[]; Ei: number[]; N: number[] };
  settleSteps: number;
  analysedSteps: number;
  detectionBandwidth_Hz: number;
  hopDwell_s: number;
  /** relative power margin of a hop (docs/model.md §4.3; analysis.hop_margin), default 0 */
  hopMargin?: number;
  driveFrequency_Hz: number | null;
  drivePhase_rad: number;
  traceBuckets: number;
  /** expected frequency spread of the returned light, Hz, to size the optical spectrum */
  spectralSpread_Hz: number;
  rng: NormalSource;
  /** one noise stream per lane (round-trip engine), so a lane's result does not depend on its neighbours */
  laneRngs?: NormalSource[];
  maxExcursion_m: number;
  /** mode slot whose returned field's optical spectrum is taken */
  spectrumMode: number;
  onProgress?: (fraction: number) => void;
}

/** The statistics of one rest offset (the shape the summary step reads). */
export type OffsetResult = OffsetFigures;

export interface DrivenResult {
  offsets: OffsetResult[];
  traces: TraceSet;
  rin: RinSpectrum | null;
  optical: OpticalSpectrumResult[];
  balance: { laser: number; external: number; mismatch: number };
  /** sqrt(sum <|b|^2> / sum <|E|^2>) over lanes and modes: the returned-to-laser field ratio */
  fieldRatio: number;
  steps: number;
  laneSteps: number;
  failed: string | null;
  /** power budget over the analysis window (docs/model.md §6); null when no engine stepped */
  budget?: PowerBudget | null;
}

/**
 * The statistics of a driven run, lane by lane, fed one sample per time step: running
 * stats, the detection-band boxcar, hops, and for lane 0 the decimated traces, the RIN
 * spectrum and the optical spectrum of the returned field. Shared by the time-stepping
 * engines and the adiabatic path so that every engine is judged by the same rules.
 */
export class DrivenAnalysis {
  readonly ext: RunningStats[];
  readonly out: RunningStats[];
  readonly ic: RunningStats[];
  readonly band: BoxcarFilter[];
  readonly hops: HopDetector[];
  readonly dec: MinMaxDecimator;
  readonly rin: WelchPsd | null;
  readonly opt: OpticalSpectrum | null;
  /** lane-0 trace row: position, speed, gap power, in-band gap power, laser output, mode powers (set by the caller) */
  readonly row: Float64Array;
  /** running sums for the returned-to-laser field ratio */
  returned2 = 0;
  intracavity2 = 0;

  constructor(
    p: CoupledParams,
    lanes: number,
    dt: number,
    samples: number,
    t0: number,
    o: AnalysisOptions & Pick<DrivenOptions, 'motion'>,
    optical: boolean,
  ) {
    const M = p.M;
    this.motion = o.motion;
    this.ext = Array.from({ length: lanes }, () => new RunningStats());
    this.out = Array.from({ length: lanes }, () => new RunningStats());
    this.ic = Array.from({ length: lanes }, () => new RunningStats());
    this.band = Array.from(
      { length: lanes },
      () => new BoxcarFilter({ dt_s: dt, bandwidth_Hz: o.detectionBandwidth_Hz }),
    );
    this.hops = Array.from(
      { length: lanes },
      () =>
        new HopDetector({
          dt_s: dt,
          dwell_s: o.hopDwell_s,
          margin: o.hopMargin ?? 0,
          modeCount: M,
          driveFrequency_Hz: o.driveFrequency_Hz,
          drivePhase_rad: o.drivePhase_rad,
          t0_s: t0,
        }),
    );
    const channels = [
      { key: 'mirror_position', label: 'mirror position', unit: 'm' },
      { key: 'mirror_speed', label: 'mirror speed', unit: 'm/s' },
      { key: 'external', label: 'gap power (full band)', unit: 'W' },
      { key: 'external_band', label: 'gap power (detection band)', unit: 'W' },
      { key: 'laser_output', label: 'laser output', unit: 'W' },
      ...p.modes.index.map((idx) => ({ key: `mode_${idx}`, label: `mode ${idx} intracavity`, unit: 'W' })),
    ];
    this.dec = new MinMaxDecimator({
      channels,
      totalSamples: samples,
      buckets: o.traceBuckets,
      dt_s: dt,
      t0_s: 0,
    });
    this.row = new Float64Array(channels.length);
    // RIN: decimate so the sampled band covers the drive harmonics and the detection band
    const fMax = Math.max(o.detectionBandwidth_Hz * 4, (o.driveFrequency_Hz ?? 0) * 16);
    const rinDec = Math.max(1, Math.floor(1 / (dt * 4 * fMax)));
    const rinLen = Math.min(8192, pow2Below(Math.floor(samples / rinDec / 2.5)));
    this.rin = rinLen >= 64 ? new WelchPsd({ dt_s: dt, segmentLength: rinLen, decimation: rinDec }) : null;
    const optDec = Math.max(1, Math.floor(1 / (dt * 8 * Math.max(o.spectralSpread_Hz, 1))));
    const optLen = Math.min(4096, pow2Below(Math.floor(samples / optDec / 2.5)));
    this.opt =
      optical && p.hasExternal && optLen >= 64
        ? new OpticalSpectrum({
            dt_s: dt,
            segmentLength: optLen,
            decimation: optDec,
            mode: p.modes.index[o.spectrumMode],
          })
        : null;
    this.driveFrequency_Hz = o.driveFrequency_Hz;
  }

  private readonly motion: MirrorMotion;
  private readonly driveFrequency_Hz: number | null;

  /**
   * One sample of lane l (the caller fills row[5..] with lane 0's mode powers first). With
   * modePowers (this lane's intracavity power per mode) the hop count applies the margin;
   * without, the dominant index dom counts as is.
   */
  push(
    l: number,
    pe: number,
    po: number,
    pi: number,
    dom: number,
    t: number,
    offset0: number,
    bRe: number,
    bIm: number,
    modePowers?: ArrayLike<number>,
  ): void {
    this.intracavity2 += pi;
    this.ext[l].push(pe);
    this.out[l].push(po);
    this.ic[l].push(pi);
    this.band[l].push(pe);
    if (modePowers !== undefined) this.hops[l].pushPowers(modePowers);
    else this.hops[l].push(dom);
    if (l === 0) {
      const row = this.row;
      row[0] = offset0 + this.motion.position(t);
      row[1] = this.motion.velocity(t);
      row[2] = pe;
      row[3] = this.band[0].current();
      row[4] = po;
      this.dec.push(row);
      if (this.rin) this.rin.push(pe);
      if (this.opt) this.opt.push(bRe, bIm);
    }
  }

  result(
    laneOffsets_m: number[],
  ): Pick<DrivenResult, 'offsets' | 'traces' | 'rin' | 'optical' | 'fieldRatio'> {
    const period = this.driveFrequency_Hz ? 1 / this.driveFrequency_Hz : null;
    const optRes = this.opt ? this.opt.result() : null;
    return {
      offsets: laneOffsets_m.map((off, l) => ({
        offset_m: off,
        external: this.ext[l].result(),
        laserOutput: this.out[l].result(),
        intracavity: this.ic[l].result(),
        band: this.band[l].result(),
        hops: this.hops[l].result(),
      })),
      traces: this.dec.result(period),
      rin: this.rin ? this.rin.rin() : null,
      optical: optRes ? [optRes] : [],
      fieldRatio: this.intracavity2 > 0 ? Math.sqrt(this.returned2 / this.intracavity2) : 0,
    };
  }
}

function pow2Below(n: number): number {
  let p = 1;
  while (p * 2 <= n) p *= 2;
  return p;
}

/** Run the lanes through settling and the analysed window; see the file comment. */
export function drivenRun(p: CoupledParams, o: DrivenOptions): DrivenResult {
  const L = o.laneOffsets_m.length;
  const M = p.M;
  const e = createLaneEngine(
    { kind: o.engine, dt: o.dt, maxExcursion_m: o.maxExcursion_m, laneNoise: o.laneRngs },
    p,
    L,
    o.motion,
    o.rng,
  );
  e.setLaserState(o.initial.Er, o.initial.Ei, o.initial.N);
  for (let l = 0; l < L; l++) {
    e.offset[l] = o.laneOffsets_m[l];
    if (o.start) {
      // nearest settled static position (positions are periodic over half a wavelength)
      const pos = o.start.positions_m;
      const span = pos.length > 1 ? (pos[1] - pos[0]) * pos.length : 1;
      const x = ((o.laneOffsets_m[l] % span) + span) % span;
      const j = Math.round(x / (span / pos.length)) % pos.length;
      e.copyLane(o.start.store, j, l);
    }
  }
  const total = o.settleSteps + o.analysedSteps;
  let done = 0;
  const report = () => o.onProgress?.(done / total);
  // settle in chunks so progress can be shown
  const chunk = 20000;
  while (done < o.settleSteps) {
    const n = Math.min(chunk, o.settleSteps - done);
    if (!e.advance(n)) return failedDriven(e.failMessage, done, done * e.L);
    done += n;
    report();
  }
  e.resetEnergy();
  const an = new DrivenAnalysis(p, L, o.dt, o.analysedSteps, e.t, o, p.hasExternal);
  const row = an.row;
  const powers = new Float64Array(M);
  // power budget (docs/model.md §6): the engine's own flows, every step of every lane
  const budget = new BudgetAccumulator(
    L,
    o.analysedSteps,
    o.driveFrequency_Hz ? o.analysedSteps * o.dt * o.driveFrequency_Hz : null,
  );
  const onStep = (en: LaneEngine) => {
    for (let l = 0; l < L; l++) {
      en.powerFlows(l, budget.scratch);
      budget.push(l, budget.scratch);
      const pi = en.intracavityPower(l);
      let dom = 0;
      let domP = -1;
      for (let m = 0; m < M; m++) {
        const j = l * M + m;
        const v = en.Er[j] * en.Er[j] + en.Ei[j] * en.Ei[j];
        powers[m] = v;
        if (v > domP) {
          domP = v;
          dom = m;
        }
      }
      an.returned2 += en.returnedPower(l);
      if (l === 0) for (let m = 0; m < M; m++) row[5 + m] = en.Er[m] * en.Er[m] + en.Ei[m] * en.Ei[m];
      an.push(
        l,
        en.externalPower(l),
        en.laserOutput(l),
        pi,
        dom,
        en.t,
        en.offset[0],
        en.br[o.spectrumMode],
        en.bi[o.spectrumMode],
        powers,
      );
    }
  };
  let analysed = 0;
  while (analysed < o.analysedSteps) {
    const n = Math.min(chunk, o.analysedSteps - analysed);
    if (!e.advance(n, onStep)) return failedDriven(e.failMessage, done, done * e.L);
    analysed += n;
    done += n;
    report();
  }
  let worstL = 0;
  let worstE = 0;
  let mis = 0;
  for (let l = 0; l < L; l++) {
    const b = balanceErrors(e, l);
    worstL = Math.max(worstL, b.laser);
    worstE = Math.max(worstE, b.external);
    mis += b.mismatch / L;
  }
  return {
    ...an.result(o.laneOffsets_m),
    balance: { laser: worstL, external: worstE, mismatch: mis },
    steps: total,
    laneSteps: total * L,
    failed: null,
    budget: budget.result(),
  };
}

/** The result of a driven pass stopped by a numerical failure after `steps` steps. */
export function failedDriven(message: string, steps: number, laneSteps: number): DrivenResult {
  return {
    offsets: [],
    traces: { t_s: [], series: [], drive_period_s: null },
    rin: null,
    optical: [],
    balance: { laser: NaN, external: NaN, mismatch: NaN },
    fieldRatio: NaN,
    steps,
    laneSteps,
    failed: message || 'numerical failure',
  };
}
