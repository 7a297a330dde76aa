/**
 * The driven run (MODEL.md section 4): the actuator on, at several rest positions of the
 * mirror (lanes), settled, then statistics over whole drive periods.
 */
import type { CoupledParams } from '../physics/coupled/params';
import { ExactEngine, MirrorMotion, NormalSource, balanceErrors } from '../physics/coupled/exact';
import { BoxcarFilter, BoxcarResult } from '../analysis/boxcar';
import { HopDetector, HopResult } from '../analysis/hops';
import { RunningStats, StatsResult } from '../analysis/stats';
import { MinMaxDecimator } from '../analysis/decimate';
import { WelchPsd, RinSpectrum } from '../analysis/spectra';
import { OpticalSpectrum, OpticalSpectrumResult } from '../analysis/opticalSpectrum';
import type { TraceSet } from '../results/artifacts';
import { externalPowerOf, laserOutputOf } from './references';

export interface DrivenOptions {
  dt: number;
  motion: MirrorMotion;
  /** rest offset of each lane relative to the drive's own offset, m */
  laneOffsets_m: number[];
  /** settled static states and their positions (relative to the drive offset), to start the lanes from */
  start: { store: ExactEngine; positions_m: number[] } | null;
  /** fallback start: laser state only */
  initial: { Er: number[]; Ei: number[]; N: number[] };
  settleSteps: number;
  analysedSteps: number;
  detectionBandwidth_Hz: number;
  hopDwell_s: number;
  driveFrequency_Hz: number | null;
  drivePhase_rad: number;
  traceBuckets: number;
  /** expected frequency spread of the returned light, Hz, to size the optical spectrum */
  spectralSpread_Hz: number;
  rng: NormalSource;
  maxExcursion_m: number;
  /** mode slot whose returned field's optical spectrum is taken */
  spectrumMode: number;
  onProgress?: (fraction: number) => void;
}

export interface OffsetResult {
  offset_m: number;
  external: StatsResult;
  laserOutput: StatsResult;
  intracavity: StatsResult;
  band: BoxcarResult;
  hops: HopResult;
}

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
  const e = new ExactEngine(p, L, o.dt, o.motion, o.rng, o.maxExcursion_m);
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
    if (!e.advance(n)) return failed(e, done);
    done += n;
    report();
  }
  e.resetEnergy();
  const t0 = e.t;
  const ext = Array.from({ length: L }, () => new RunningStats());
  const out = Array.from({ length: L }, () => new RunningStats());
  const ic = Array.from({ length: L }, () => new RunningStats());
  const band = Array.from({ length: L }, () => new BoxcarFilter({ dt_s: o.dt, bandwidth_Hz: o.detectionBandwidth_Hz }));
  const hops = Array.from(
    { length: L },
    () => new HopDetector({ dt_s: o.dt, dwell_s: o.hopDwell_s, modeCount: M, driveFrequency_Hz: o.driveFrequency_Hz, drivePhase_rad: o.drivePhase_rad, t0_s: t0 }),
  );
  const channels = [
    { key: 'mirror_position', label: 'mirror position', unit: 'm' },
    { key: 'mirror_speed', label: 'mirror speed', unit: 'm/s' },
    { key: 'external', label: 'gap power (full band)', unit: 'W' },
    { key: 'external_band', label: 'gap power (detection band)', unit: 'W' },
    { key: 'laser_output', label: 'laser output', unit: 'W' },
    ...p.modes.index.map((idx) => ({ key: `mode_${idx}`, label: `mode ${idx} intracavity`, unit: 'W' })),
  ];
  const dec = new MinMaxDecimator({ channels, totalSamples: o.analysedSteps, buckets: o.traceBuckets, dt_s: o.dt, t0_s: 0 });
  const row = new Float64Array(channels.length);
  // RIN: decimate so the sampled band covers the drive harmonics and the detection band
  const fMax = Math.max(o.detectionBandwidth_Hz * 4, (o.driveFrequency_Hz ?? 0) * 16);
  const rinDec = Math.max(1, Math.floor(1 / (o.dt * 4 * fMax)));
  const rinSamples = Math.floor(o.analysedSteps / rinDec);
  const rinLen = Math.min(8192, pow2Below(Math.floor(rinSamples / 2.5)));
  const rin = rinLen >= 64 ? new WelchPsd({ dt_s: o.dt, segmentLength: rinLen, decimation: rinDec }) : null;
  const optDec = Math.max(1, Math.floor(1 / (o.dt * 8 * Math.max(o.spectralSpread_Hz, 1))));
  const optSamples = Math.floor(o.analysedSteps / optDec);
  const optLen = Math.min(4096, pow2Below(Math.floor(optSamples / 2.5)));
  const opt = p.hasExternal && optLen >= 64 ? new OpticalSpectrum({ dt_s: o.dt, segmentLength: optLen, decimation: optDec, mode: p.modes.index[o.spectrumMode] }) : null;
  let b2 = 0;
  let e2 = 0;
  const onStep = (en: ExactEngine) => {
    for (let l = 0; l < L; l++) {
      const pe = externalPowerOf(en, l);
      const po = laserOutputOf(en, l);
      let pi = 0;
      let dom = 0;
      let domP = -1;
      for (let m = 0; m < M; m++) {
        const j = l * M + m;
        const v = en.Er[j] * en.Er[j] + en.Ei[j] * en.Ei[j];
        pi += v;
        if (v > domP) { domP = v; dom = m; }
        b2 += en.br[j] * en.br[j] + en.bi[j] * en.bi[j];
      }
      e2 += pi;
      ext[l].push(pe);
      out[l].push(po);
      ic[l].push(pi);
      band[l].push(pe);
      hops[l].push(dom);
      if (l === 0) {
        const t = en.t;
        row[0] = en.offset[0] + o.motion.position(t);
        row[1] = o.motion.velocity(t);
        row[2] = pe;
        row[3] = band[0].current();
        row[4] = po;
        for (let m = 0; m < M; m++) row[5 + m] = en.Er[m] * en.Er[m] + en.Ei[m] * en.Ei[m];
        dec.push(row);
        if (rin) rin.push(pe);
        if (opt) opt.push(en.br[o.spectrumMode], en.bi[o.spectrumMode]);
      }
    }
  };
  let analysed = 0;
  while (analysed < o.analysedSteps) {
    const n = Math.min(chunk, o.analysedSteps - analysed);
    if (!e.advance(n, onStep)) return failed(e, done);
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
  const period = o.driveFrequency_Hz ? 1 / o.driveFrequency_Hz : null;
  const rinRes = rin ? rin.rin() : null;
  const optRes = opt ? opt.result() : null;
  return {
    offsets: o.laneOffsets_m.map((off, l) => ({
      offset_m: off,
      external: ext[l].result(),
      laserOutput: out[l].result(),
      intracavity: ic[l].result(),
      band: band[l].result(),
      hops: hops[l].result(),
    })),
    traces: dec.result(period),
    rin: rinRes,
    optical: optRes ? [optRes] : [],
    balance: { laser: worstL, external: worstE, mismatch: mis },
    fieldRatio: e2 > 0 ? Math.sqrt(b2 / e2) : 0,
    steps: total,
    laneSteps: total * L,
    failed: null,
  };
}

function failed(e: ExactEngine, steps: number): DrivenResult {
  return {
    offsets: [],
    traces: { t_s: [], series: [], drive_period_s: null },
    rin: null,
    optical: [],
    balance: { laser: NaN, external: NaN, mismatch: NaN },
    fieldRatio: NaN,
    steps,
    laneSteps: steps * e.L,
    failed: e.failMessage || 'numerical failure',
  };
}
