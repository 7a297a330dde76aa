/**
 * The slow-drive path of docs/model.md §3.6 (engine name `speedcurve`). When the drive
 * period is long against the coupled system's memory tau_mem and each stroke spans many
 * half wavelengths, the system at each instant is in the steady state of a mirror moving
 * at the instantaneous speed, except near the turning points. So:
 *
 * - away from the turning points the gap power, laser output, mode powers and hop rate
 *   come from the speed curve (simulate/speed-curve.ts) at the instantaneous speed and
 *   direction, which a drive samples as its waveform dictates (a sine spends the time
 *   (2/pi) d(arcsin(v / v_peak)) at each speed; a triangle all its time at one speed);
 * - each turning point is stepped directly, over a short window: from where the speed
 *   falls below v_w (windowEdge: the largest of WINDOW_EDGE a tau_mem, a the acceleration
 *   at the turning point; a fiftieth of the peak speed; and the speed at which a detector
 *   window spans WINDOW_BAND_HALF_WAVES half wavelengths)
 *   to TAIL memory times after it rises above v_w again, preceded by a lead-in of
 *   FREE_START_MEMORY_TIMES memory times from the free-running state (the lanes keep the
 *   run's rest offsets, so the turning points fall at random places on the fringes); the
 *   lanes' fields there are the real ones, with the true turning-point dip, the lag after
 *   it, and its hops. Windows and speed points depend on nothing but the scenario and
 *   the free-running state, so a threaded run computes them beside the static reference
 *   (parallel-run.ts, docs/model.md §4.2);
 * - both are spliced, sample by sample, into one series per lane, which goes through the
 *   same analysis as every engine's (DrivenAnalysis): statistics, the detection-band
 *   boxcar (so the in-band ripple comes from the stepped turning points, not from the
 *   curve alone, which was measured 2-15x low for strokes of a few micrometres), hops,
 *   traces and the RIN spectrum. The curve's full-band spread (the bursts at every
 *   resonance crossing, which no sample of the curve holds) is added to the variance and
 *   the extremes afterwards, and its hops at the rate the curve gives.
 *
 * Turning points of a sine or triangle without drift repeat every period: the two kinds
 * (upper, lower) are stepped once each and reused. Otherwise (a second tone, a drift)
 * up to MAX_WINDOWS distinct turning points are stepped and each later one reuses the
 * stepped one of the same direction whose acceleration is closest.
 */
import type { DriveSpec } from '../scenario/schema';
import type { CoupledParams } from '../physics/coupled/params';
import { balanceErrors } from '../physics/coupled/lane-engine';
import { createLaneEngine } from '../physics/coupled/factory';
import type { EngineKind } from '../physics/coupled/factory';
import { createDrive, peakAcceleration } from '../physics/drive';
import { createRng } from '../numerics/rng';
import { rippleRel } from '../analysis/stats';
import type { SpeedCurve } from '../results/speed-curve';
import { AnalysisOptions, DrivenAnalysis, DrivenResult, failedDriven } from './driven';
import { externalPowerOf, laserOutputOf } from './references';
import type { FreeRunningResult, StaticResult } from './references';
import {
  curveAt,
  ensureSpeedCurve,
  FREE_START_MEMORY_TIMES,
  memoryTime,
  steppingEngineFor,
} from './speed-curve';
import type { SpeedCurveContext } from './speed-curve';
import { totalPeakSpeed } from './engine-choice';

/** v_w = WINDOW_EDGE x acceleration x tau_mem: below it the turning-point window is stepped. */
export const WINDOW_EDGE = 3;
/**
 * The window edge is never below this fraction of the peak speed: the speed curve's cost
 * grows as 1 / v at its slow end (many half wavelengths at each speed), while a window
 * stepped a little longer near the turning point costs little there.
 */
export const WINDOW_EDGE_MIN_FRACTION = 0.02;
/**
 * Half wavelengths a detector window (1 / bandwidth) must span before the speed curve's
 * position-averaged mean stands for what the detector sees: slower than
 * WINDOW_BAND_HALF_WAVES (lambda / 2) x bandwidth, the detector resolves the power's
 * dependence on position (the turning-point dip), so that stretch is stepped too. Without
 * it the in-band ripple came out 1.4-2x low against direct stepping (docs/model.md §3.6).
 */
export const WINDOW_BAND_HALF_WAVES = 3;
/** Memory times stepped after the speed has risen back above v_w (the lag after a turning point). */
export const WINDOW_TAIL = 3;
/** Memory times collected before the speed falls below v_w. */
export const WINDOW_BEFORE = 1;
/** Memory times of lead-in before collection starts: the lanes start from the free-running state. */
export const WINDOW_LEAD = FREE_START_MEMORY_TIMES;
/** Most distinct turning points stepped for a drive that does not repeat every period. */
export const MAX_WINDOWS = 16;
/** Largest number of analysis samples per lane. */
export const SLOW_MAX_SAMPLES = 2_000_000;

export interface SlowDriveOptions extends Omit<AnalysisOptions, 'hopMargin'> {
  drive: DriveSpec;
  seed: number;
  /** rest offset of each lane relative to the drive's own offset, m */
  laneOffsets_m: number[];
  analysed_s: number;
  halfWavelength_m: number;
  memory_s: number;
  /** stepping engine for the turning-point windows */
  windowEngine: (maxSpeed_m_s: number) => { kind: EngineKind; dt: number };
  curve: SpeedCurve;
  /** the static reference, for its energy balance in the result's (null: not counted) */
  stat: StaticResult | null;
  free: FreeRunningResult;
  /** the batch's lanes in the groups their windows are stepped in (one part per group and window) */
  laneGroups: number[][];
  /** batch number: the windows' noise streams */
  batch?: number;
  onProgress?: (fraction: number) => void;
}

interface TurningPoint {
  t: number;
  /** +1: the mirror turns from moving back to moving forward (lower turning point); -1 the other way */
  dir: 1 | -1;
  /** |dv/dt| at the turning point, m/s^2 (Infinity for a triangle) */
  accel: number;
  /** window relative to t: [t - before, t + after] is taken from the stepped lanes */
  before: number;
  after: number;
  /** index into the stepped windows */
  stepped: number;
}

/** Per lane, per sample bin of a stepped window: what the splice takes from it. */
interface WindowSeries {
  /** gap power, laser output, intracavity, returned power, dominant mode */
  ext: Float64Array[];
  out: Float64Array[];
  ic: Float64Array[];
  ret: Float64Array[];
  dom: Int32Array[];
  /** mode powers, bin-major (M per bin) */
  modes: Float64Array[];
}

const SERIES_KEYS = ['ext', 'out', 'ic', 'ret', 'dom', 'modes'] as const;

interface SteppedWindow extends WindowSeries {
  /** time of the turning point this window was stepped around */
  t: number;
  dir: 1 | -1;
  accel: number;
  before: number;
  after: number;
  /** first sample index (k0 = round((t - before) / dt_s)) relative to round(t / dt_s) */
  rel0: number;
  /** mean over lanes of the window's tail (after the speed rose above the edge) against the curve there: window / curve - 1 */
  spliceMismatch: number;
}

/** Largest |x(t) - x(tFrom)| over [tFrom, tTo] (sampled finely), plus |x(tFrom)|, m. */
function windowTravel(m: { position(t: number): number }, tFrom: number, tTo: number): number {
  let mx = 0;
  for (let i = 0; i <= 256; i++) mx = Math.max(mx, Math.abs(m.position(tFrom + ((tTo - tFrom) * i) / 256)));
  return mx * 1.01;
}

/** Speed below which a turning point is stepped directly, m/s (see the constants above). */
export function windowEdge(
  accel: number,
  vPeak: number,
  tau: number,
  half: number,
  bandwidth: number,
): number {
  return Math.max(
    WINDOW_EDGE * accel * tau,
    WINDOW_EDGE_MIN_FRACTION * vPeak,
    WINDOW_BAND_HALF_WAVES * half * bandwidth,
  );
}

/** Turning points (sign changes of v) of the motion in [tFrom, tTo], located to dt. */
function findTurningPoints(
  motion: { velocity(t: number): number },
  tFrom: number,
  tTo: number,
  dt: number,
): { t: number; dir: 1 | -1; accel: number }[] {
  const res: { t: number; dir: 1 | -1; accel: number }[] = [];
  let tPrev = tFrom;
  let vPrev = motion.velocity(tFrom);
  const n = Math.ceil((tTo - tFrom) / dt);
  for (let k = 1; k <= n; k++) {
    const t = tFrom + k * dt;
    const v = motion.velocity(t);
    if ((vPrev < 0 && v >= 0) || (vPrev > 0 && v <= 0)) {
      // bisect for the zero crossing
      let a = tPrev;
      let b = t;
      for (let i = 0; i < 40; i++) {
        const m = 0.5 * (a + b);
        const vm = motion.velocity(m);
        if (vm === 0 || vm > 0 === vPrev > 0) a = m;
        else b = m;
      }
      const tz = 0.5 * (a + b);
      const h = Math.max(1e-12, dt * 1e-3);
      const slope = Math.abs(motion.velocity(tz + h) - motion.velocity(tz - h)) / (2 * h);
      // a jump of the velocity (triangle) shows as a slope of order |v| / h
      const jump =
        Math.abs(v - vPrev) > 0.5 * (Math.abs(v) + Math.abs(vPrev)) && slope * h > 0.1 * Math.abs(v);
      res.push({ t: tz, dir: v >= 0 ? 1 : -1, accel: jump ? Infinity : slope });
    }
    tPrev = t;
    vPrev = v;
  }
  return res;
}

/**
 * Running statistics with a variance added (the speed curve's own scatter, per sample) and
 * the extremes widened to the curve's: the sample variance and std follow.
 */
function widened<T extends { count: number; variance: number; min: number; max: number }>(
  st: T,
  addVar: number,
  min = st.min,
  max = st.max,
): T & { sampleVariance: number; std: number } {
  const v = st.variance + addVar;
  return {
    ...st,
    variance: v,
    sampleVariance: st.count > 1 ? (v * st.count) / (st.count - 1) : 0,
    std: Math.sqrt(v),
    min: Math.min(st.min, min),
    max: Math.max(st.max, max),
  };
}

/** The slow path's plan: its sample grid and turning points, the same on every thread. */
export interface SlowPlan {
  dt_s: number;
  samples: number;
  /** time the samples cover, s */
  T: number;
  analysed_s: number;
  f: number;
  periodic: boolean;
  tps: TurningPoint[];
  /** the turning points stepped (windows), in order */
  chosen: TurningPoint[];
}

/** What planning the slow path needs. */
export type SlowPlanOptions = Pick<
  SlowDriveOptions,
  | 'drive'
  | 'seed'
  | 'driveFrequency_Hz'
  | 'detectionBandwidth_Hz'
  | 'hopDwell_s'
  | 'analysed_s'
  | 'halfWavelength_m'
  | 'memory_s'
>;

/** The sample grid and the turning points of the drive, and which of them are stepped. */
export function planSlow(o: SlowPlanOptions): SlowPlan {
  const tau = o.memory_s;
  const motion = createDrive(o.drive, o.seed);
  const f = o.driveFrequency_Hz ?? 0;
  const B = o.detectionBandwidth_Hz;
  let dt_s = Math.min(1 / (100 * B), o.hopDwell_s > 0 ? o.hopDwell_s / 2 : Infinity, tau / 4);
  if (f > 0) dt_s = Math.min(dt_s, 1 / (4000 * f));
  // A sine or triangle without drift repeats exactly every period once spliced (its windows
  // are reused), so more periods than the detector needs add nothing to the statistics.
  const periodic =
    (o.drive.waveform === 'sine' || o.drive.waveform === 'triangle') && o.drive.drift === 0 && f > 0;
  const analysed_s = periodic
    ? Math.min(o.analysed_s, Math.ceil(Math.max(2, (4 * f) / B)) / f)
    : o.analysed_s;
  let samples = Math.ceil(analysed_s / dt_s);
  if (samples > SLOW_MAX_SAMPLES) {
    samples = SLOW_MAX_SAMPLES;
    dt_s = analysed_s / samples;
  }
  const T = samples * dt_s;
  const vPeakLocal = (t: number) => {
    let vp = 0;
    const span = f > 0 ? 0.5 / f : T;
    for (let i = 0; i <= 64; i++)
      vp = Math.max(vp, Math.abs(motion.velocity(t - span / 2 + (span * i) / 64)));
    return vp;
  };
  const pad = (WINDOW_LEAD + WINDOW_BEFORE + WINDOW_TAIL + 2 * WINDOW_EDGE + 2) * tau;
  const raw = findTurningPoints(motion, -pad, T + pad, Math.min(dt_s, f > 0 ? 1 / (2000 * f) : dt_s));
  const tps: TurningPoint[] = raw.map((r) => {
    const vp = vPeakLocal(r.t);
    const vw = Math.min(windowEdge(r.accel, vp, tau, o.halfWavelength_m, B), 0.5 * vp);
    // walk out from the turning point until |v| >= vw on each side
    const stepT = Math.max(dt_s, tau / 20);
    let b = 0;
    while (Math.abs(motion.velocity(r.t - b)) < vw && b < 0.5 / Math.max(f, 1 / T)) b += stepT;
    let a = 0;
    while (Math.abs(motion.velocity(r.t + a)) < vw && a < 0.5 / Math.max(f, 1 / T)) a += stepT;
    return { ...r, before: b + WINDOW_BEFORE * tau, after: a + WINDOW_TAIL * tau, stepped: -1 };
  });
  const chosen: TurningPoint[] = [];
  for (const tp of tps) {
    const same = chosen.filter((c) => c.dir === tp.dir);
    if (periodic && same.length > 0) {
      tp.stepped = chosen.indexOf(same[0]);
      continue;
    }
    if (periodic || chosen.length < MAX_WINDOWS) {
      tp.stepped = chosen.length;
      chosen.push(tp);
      continue;
    }
    // reuse the stepped window of the same direction with the closest acceleration
    let best = -1;
    for (let i = 0; i < chosen.length; i++) {
      if (chosen[i].dir !== tp.dir) continue;
      if (best < 0 || Math.abs(chosen[i].accel - tp.accel) < Math.abs(chosen[best].accel - tp.accel))
        best = i;
    }
    tp.stepped = best >= 0 ? best : 0;
    tp.before = chosen[tp.stepped].before;
    tp.after = chosen[tp.stepped].after;
  }
  return { dt_s, samples, T, analysed_s, f, periodic, tps, chosen };
}

/** Some lanes of one stepped turning-point window (the series per lane of `lanes`). */
export interface WindowPart extends WindowSeries {
  window: number;
  /** the lanes' places in the batch */
  lanes: number[];
  steps: number;
  laneSteps: number;
  worstBalance: number;
  /** sum over the lanes of their mode mismatch */
  mismatchSum: number;
  failed: string | null;
}

/** What stepping a window needs (no curve, no static reference). */
export type SlowStepOptions = SlowPlanOptions &
  Pick<SlowDriveOptions, 'laneOffsets_m' | 'windowEngine' | 'free'> & { batch: number };

/**
 * Where window `w` of the plan is stepped (lead-in included) and on which engine: the one
 * the planner picks for the fastest speed the window reaches; `laneSteps` is its cost per lane.
 */
export function windowSpan(
  o: Pick<SlowStepOptions, 'drive' | 'seed' | 'memory_s' | 'windowEngine'>,
  plan: SlowPlan,
  w: number,
): { tStart: number; tEnd: number; eng: { kind: EngineKind; dt: number }; laneSteps: number } {
  const motion = createDrive(o.drive, o.seed);
  const tp = plan.chosen[w];
  const tStart = tp.t - tp.before - WINDOW_LEAD * o.memory_s;
  const tEnd = tp.t + tp.after;
  let vMax = 0;
  for (let i = 0; i <= 64; i++)
    vMax = Math.max(vMax, Math.abs(motion.velocity(tStart + ((tEnd - tStart) * i) / 64)));
  const eng = o.windowEngine(Math.max(vMax, 1e-12));
  return { tStart, tEnd, eng, laneSteps: (tEnd - tStart) / eng.dt };
}

/**
 * Step window `w` of the plan for the lanes `lanes` (places in the batch) of batch `batch`:
 * from the free-running state, FREE_START_MEMORY_TIMES memory times of lead-in before the
 * collection starts, on a noise stream of its own (seed, batch, window, first lane), so a
 * part's result does not depend on the thread or the order it runs in.
 */
export function stepSlowWindow(
  p: CoupledParams,
  o: SlowStepOptions,
  plan: SlowPlan,
  w: number,
  lanes: number[],
): WindowPart {
  const M = p.M;
  const L = lanes.length;
  const motion = createDrive(o.drive, o.seed);
  const { dt_s } = plan;
  const tp = plan.chosen[w];
  const half = o.halfWavelength_m;
  const rest = o.drive.offset;
  const { tStart, tEnd, eng } = windowSpan(o, plan, w);
  // The window runs with the motion translated by whole half wavelengths to near the rest
  // position: the fields depend on the position modulo lambda / 2 (up to the gap length's
  // own change, 2 A / L2, a shift of the modes' phases by under 0.1 rad for a 1 mm stroke on
  // a 9 cm gap), and the delay line's history stays sized for a short excursion.
  const shift = Math.round((motion.position(tp.t) - rest) / half) * half;
  const local = {
    position: (t: number) => motion.position(t) - shift,
    velocity: (t: number) => motion.velocity(t),
  };
  const rng = createRng(o.seed)
    .fork(7)
    .fork(o.batch)
    .fork(w)
    .fork(lanes[0] ?? 0);
  const e = createLaneEngine(
    {
      kind: eng.kind,
      dt: eng.dt,
      maxExcursion_m: Math.abs(rest) + 2 * half + windowTravel(local, tStart, tEnd),
    },
    p,
    L,
    local,
    rng,
  );
  e.setLaserState(o.free.Er, o.free.Ei, o.free.N);
  lanes.forEach((i, l) => (e.offset[l] = o.laneOffsets_m[i]));
  e.t = tStart;
  const k0 = Math.round((tp.t - tp.before) / dt_s) - Math.round(tp.t / dt_s);
  const k1 = Math.round((tp.t + tp.after) / dt_s) - Math.round(tp.t / dt_s);
  const nBins = k1 - k0;
  const part: WindowPart = {
    window: w,
    lanes,
    ext: Array.from({ length: L }, () => new Float64Array(nBins)),
    out: Array.from({ length: L }, () => new Float64Array(nBins)),
    ic: Array.from({ length: L }, () => new Float64Array(nBins)),
    ret: Array.from({ length: L }, () => new Float64Array(nBins)),
    dom: Array.from({ length: L }, () => new Int32Array(nBins)),
    modes: Array.from({ length: L }, () => new Float64Array(nBins * M)),
    steps: 0,
    laneSteps: 0,
    worstBalance: 0,
    mismatchSum: 0,
    failed: null,
  };
  const lead = Math.max(1, Math.round((tp.t - tp.before - tStart) / eng.dt));
  if (!e.advance(lead)) return { ...part, failed: e.failMessage, steps: lead, laneSteps: lead * L };
  e.resetEnergy();
  const count = new Float64Array(nBins);
  const kTp = Math.round(tp.t / dt_s);
  const total = Math.ceil((tp.t + tp.after - e.t) / eng.dt);
  const ok = e.advance(total, (en) => {
    const bin = Math.floor(en.t / dt_s + 0.5) - kTp - k0;
    if (bin < 0 || bin >= nBins) return;
    count[bin]++;
    for (let l = 0; l < L; l++) {
      part.ext[l][bin] += externalPowerOf(en, l);
      part.out[l][bin] += laserOutputOf(en, l);
      part.ic[l][bin] += en.intracavityPower(l);
      part.ret[l][bin] += en.returnedPower(l);
      for (let m = 0; m < M; m++) {
        const j = l * M + m;
        part.modes[l][bin * M + m] += en.Er[j] * en.Er[j] + en.Ei[j] * en.Ei[j];
      }
    }
  });
  part.steps = lead + total;
  part.laneSteps = (lead + total) * L;
  if (!ok) return { ...part, failed: e.failMessage };
  for (let l = 0; l < L; l++) {
    const bal = balanceErrors(e, l);
    part.worstBalance = Math.max(part.worstBalance, bal.laser, bal.external);
    part.mismatchSum += bal.mismatch;
  }
  // bins the engine's step skipped (dt_s < engine step) take the previous bin's values
  for (let l = 0; l < L; l++) {
    const series = [part.ext[l], part.out[l], part.ic[l], part.ret[l]];
    const mp = part.modes[l];
    for (let k = 0; k < nBins; k++) {
      const c = count[k];
      for (const a of series) {
        if (c > 0) a[k] /= c;
        else if (k > 0) a[k] = a[k - 1];
      }
      for (let m = 0; m < M; m++) {
        if (c > 0) mp[k * M + m] /= c;
        else if (k > 0) mp[k * M + m] = mp[(k - 1) * M + m];
      }
      // dominant mode of the bin from its mean mode powers
      let d = 0;
      for (let m = 1; m < M; m++) if (mp[k * M + m] > mp[k * M + d]) d = m;
      part.dom[l][k] = d;
    }
  }
  return part;
}

/**
 * Every window of the plan for every lane of the batch, on this thread, in the lane groups
 * given (the same parts a threaded run computes).
 */
function stepSlowWindows(
  p: CoupledParams,
  o: SlowStepOptions,
  plan: SlowPlan,
  groups: number[][],
  onProgress?: (fraction: number) => void,
): WindowPart[] {
  const parts: WindowPart[] = [];
  const n = plan.chosen.length * groups.length;
  for (let w = 0; w < plan.chosen.length; w++)
    for (const g of groups) {
      const part = stepSlowWindow(p, o, plan, w, g);
      parts.push(part);
      onProgress?.(parts.length / n);
      if (part.failed) return parts;
    }
  return parts;
}

/** Run the slow-drive path on this thread; see the file comment. */
export function drivenSlow(p: CoupledParams, o: SlowDriveOptions): DrivenResult {
  const plan = planSlow(o);
  const parts = stepSlowWindows(p, { ...o, batch: o.batch ?? 0 }, plan, o.laneGroups, (x) =>
    o.onProgress?.(0.8 * x),
  );
  return spliceSlow(p, o, plan, parts);
}

/**
 * Splice the stepped windows (parts, in any order) into the speed curve's statistics and
 * analyse the series (see the file comment).
 */
export function spliceSlow(
  p: CoupledParams,
  o: SlowDriveOptions,
  plan: SlowPlan,
  parts: WindowPart[],
): DrivenResult {
  const L = o.laneOffsets_m.length;
  const M = p.M;
  const tau = o.memory_s;
  const motion = createDrive(o.drive, o.seed);
  const { dt_s, samples, analysed_s, T, f, tps, chosen } = plan;
  let steps = 0;
  let laneSteps = 0;
  let worstBalance = 0;
  let mismatch = 0;
  for (const part of parts) {
    steps += part.steps;
    laneSteps += part.laneSteps;
    worstBalance = Math.max(worstBalance, part.worstBalance);
    mismatch += part.mismatchSum / (L * chosen.length);
  }
  const failed = parts.find((x) => x.failed !== null);
  if (failed) return failedDriven(failed.failed as string, steps, laneSteps);
  const windows: SteppedWindow[] = chosen.map((tp, w) => {
    const k0 = Math.round((tp.t - tp.before) / dt_s) - Math.round(tp.t / dt_s);
    const sw: SteppedWindow = {
      t: tp.t,
      dir: tp.dir,
      accel: tp.accel,
      before: tp.before,
      after: tp.after,
      rel0: k0,
      ext: [],
      out: [],
      ic: [],
      ret: [],
      dom: [],
      modes: [],
      spliceMismatch: 0,
    };
    // each part's lanes into their places in the batch
    for (const part of parts) {
      if (part.window !== w) continue;
      for (const key of SERIES_KEYS) part.lanes.forEach((i, l) => ((sw[key] as unknown[])[i] = part[key][l]));
    }
    for (let l = 0; l < L; l++)
      if (!sw.ext[l]) throw new Error(`spliceSlow: window ${w} has no stepped part for lane ${l}`);
    // splice check: the window's last memory times against the curve at that speed and direction
    const nBins = sw.ext[0].length;
    const nTail = Math.max(1, Math.min(nBins, Math.round((WINDOW_TAIL * tau) / dt_s)));
    let winMean = 0;
    for (let l = 0; l < L; l++) for (let k = nBins - nTail; k < nBins; k++) winMean += sw.ext[l][k];
    winMean /= L * nTail;
    let curveMean = 0;
    for (let k = nBins - nTail; k < nBins; k++)
      curveMean += curveAt(o.curve, motion.velocity(tp.t + (k + k0) * dt_s)).external_W;
    curveMean /= nTail;
    sw.spliceMismatch = curveMean > 0 ? winMean / curveMean - 1 : 0;
    return sw;
  });

  // ---- splice and analyse
  const an = new DrivenAnalysis(p, L, dt_s, samples, 0, { ...o, motion }, false);
  const row = an.row;
  const extraVar = new Float64Array(L);
  const extraOutVar = new Float64Array(L);
  const curveMin = new Float64Array(L).fill(Infinity);
  const curveMax = new Float64Array(L).fill(-Infinity);
  const curveHops = new Float64Array(L);
  const occ = new Float64Array(L * M);
  const heldDom = new Int32Array(L).fill(-1);
  const bins = 24;
  const histExtra = new Float64Array(bins);
  let curveSamples = 0;
  let tpIndex = 0;
  const cv = curveAt(o.curve, 1);
  for (let k = 0; k < samples; k++) {
    const t = k * dt_s;
    while (tpIndex < tps.length && tps[tpIndex].t + tps[tpIndex].after < t) tpIndex++;
    const tp = tpIndex < tps.length && t >= tps[tpIndex].t - tps[tpIndex].before ? tps[tpIndex] : null;
    const x = motion.position(t);
    const v = motion.velocity(t);
    if (tp) {
      const sw = windows[tp.stepped];
      let bin = k - Math.round(tp.t / dt_s) - sw.rel0;
      bin = Math.max(0, Math.min(sw.ext[0].length - 1, bin));
      for (let l = 0; l < L; l++) {
        const dom = sw.dom[l][bin];
        heldDom[l] = dom;
        occ[l * M + dom]++;
        an.returned2 += sw.ret[l][bin];
        if (l === 0) for (let m = 0; m < M; m++) row[5 + m] = sw.modes[0][bin * M + m];
        // the bin's mode powers: the hop margin applies as in a stepped run
        const powers = sw.modes[l].subarray(bin * M, bin * M + M);
        an.push(l, sw.ext[l][bin], sw.out[l][bin], sw.ic[l][bin], dom, t, o.laneOffsets_m[0], 0, 0, powers);
      }
    } else {
      curveAt(o.curve, v, cv);
      curveSamples++;
      let dom = 0;
      for (let m = 1; m < M; m++) if (cv.mode_occupation[m] > cv.mode_occupation[dom]) dom = m;
      for (let l = 0; l < L; l++) {
        extraVar[l] += cv.external_var_W2;
        extraOutVar[l] += cv.laser_output_var_W2;
        curveMin[l] = Math.min(curveMin[l], cv.external_min_W);
        curveMax[l] = Math.max(curveMax[l], cv.external_max_W);
        curveHops[l] += cv.hops_per_s * dt_s;
        for (let m = 0; m < M; m++) occ[l * M + m] += cv.mode_occupation[m];
        // hops inside the curve's stretches are counted at its rate; the detector is fed the
        // mode held since the last window so that it adds none of its own here
        const held = heldDom[l] >= 0 ? heldDom[l] : dom;
        if (heldDom[l] < 0) heldDom[l] = dom;
        an.returned2 += cv.returned_W;
        if (l === 0) for (let m = 0; m < M; m++) row[5 + m] = cv.mode_powers_W[m];
        an.push(l, cv.external_W, cv.laser_output_W, cv.intracavity_W, held, t, o.laneOffsets_m[0], 0, 0);
      }
      if (f > 0) {
        let ph = f * t + o.drivePhase_rad / (2 * Math.PI);
        ph -= Math.floor(ph);
        histExtra[Math.min(bins - 1, Math.floor(ph * bins))] += cv.hops_per_s * dt_s * L;
      }
    }
    void x;
    if (k % 65536 === 0) o.onProgress?.(0.8 + (0.2 * k) / samples);
  }
  const res = an.result(o.laneOffsets_m);
  for (let l = 0; l < L; l++) {
    const off = res.offsets[l];
    const n = off.external.count;
    const addE = extraVar[l] / Math.max(1, n);
    const addO = extraOutVar[l] / Math.max(1, n);
    off.external = widened(off.external, addE, curveMin[l], curveMax[l]);
    off.laserOutput = widened(off.laserOutput, addO);
    const fullBand = widened(off.band.fullBand, addE, curveMin[l], curveMax[l]);
    off.band = {
      ...off.band,
      fullBand,
      ripple_full_band_rel: rippleRel(fullBand.min, fullBand.max, fullBand.mean),
    };
    const h = off.hops;
    const hops = h.hops + curveHops[l];
    off.hops = {
      ...h,
      hops,
      hopsPerSecond: h.duration_s > 0 ? hops / h.duration_s : 0,
      hopsPerPeriod: f > 0 && h.duration_s > 0 ? hops / (h.duration_s * f) : h.hopsPerPeriod,
      occupation: Array.from({ length: M }, (_, m) => occ[l * M + m] / samples),
      phaseHistogram: h.phaseHistogram.map((c, i) => c + (histExtra[i] ?? 0) / L),
    };
  }
  const splice = windows.reduce((a, w) => Math.max(a, Math.abs(w.spliceMismatch)), 0);
  return {
    ...res,
    balance: {
      laser: Math.max(worstBalance, o.stat?.worstBalance ?? 0),
      external: worstBalance,
      mismatch,
    },
    steps,
    laneSteps: laneSteps + o.curve.lane_steps,
    failed: null,
    slow: {
      windows: windows.length,
      turning_points: tps.filter((t) => t.t >= 0 && t.t <= T).length,
      window_fraction: 1 - curveSamples / samples,
      splice_mismatch_rel: splice,
      sample_step_s: dt_s,
      analysed_s,
    },
  } as DrivenResult & { slow: SlowDriveInfo };
}

/** What the slow-drive path adds to a DrivenResult (for the summary's engine note). */
export interface SlowDriveInfo {
  /** turning-point windows stepped */
  windows: number;
  /** turning points in the analysed window */
  turning_points: number;
  /** fraction of the analysed time taken from stepped windows */
  window_fraction: number;
  /** largest |window / curve - 1| over the tail of each window (WINDOW_TAIL memory times; a few lanes sample a position-dependent power there, so it holds their sampling error too) */
  splice_mismatch_rel: number;
  sample_step_s: number;
  /** time the spliced series was analysed over, s (whole periods for a repeating drive) */
  analysed_s: number;
}

/** Everything the run needs to dispatch to the slow-drive path. */
export interface SlowDriveRunInput extends SpeedCurveContext {
  /** a curve computed earlier (same key: reused and extended) */
  prior: SpeedCurve | null;
  laneOffsets_m: number[];
  analysed_s: number;
  common: Omit<AnalysisOptions, 'hopMargin'>;
  /** the static reference (its energy balance joins the result's) */
  stat: StaticResult | null;
  laneGroups: number[][];
  batch: number;
}

/** The speeds the drive's curve must cover: from the window edge of its turning points to its peak speed. */
export function slowSpeedRange(i: Pick<SlowDriveRunInput, 's' | 'p'> & { free: { intracavity_W: number } }): {
  vLo: number;
  vHi: number;
  memory_s: number;
} {
  const { s, p } = i;
  const memory_s = memoryTime(p, i.free);
  const vPeak = totalPeakSpeed(s);
  const aPeak = peakAcceleration(s.drive);
  const twoTone = s.drive.waveform === 'two-tone' && s.drive.second_amplitude > 0;
  const vEdge = windowEdge(aPeak, vPeak, memory_s, s.laser.wavelength / 2, s.analysis.detection_bandwidth);
  return { vLo: Math.max(1e-9, Math.min(vPeak, vEdge) * (twoTone ? 0.5 : 1)), vHi: vPeak, memory_s };
}

/** What stepping the windows of a run's batch needs (no curve, no static reference). */
export function slowStepOptions(i: Omit<SlowDriveRunInput, 'prior' | 'onProgress'>): SlowStepOptions {
  const { s, p } = i;
  return {
    ...i.common,
    drive: s.drive,
    seed: i.seed,
    laneOffsets_m: i.laneOffsets_m,
    analysed_s: i.analysed_s,
    halfWavelength_m: s.laser.wavelength / 2,
    memory_s: memoryTime(p, i.free),
    windowEngine: (v) => steppingEngineFor(s, p, i.finesse, i.regrowth_s, v, i.requested),
    free: i.free,
    batch: i.batch,
  };
}

/** The path's options for a run's batch (the curve is only read by spliceSlow). */
export function slowOptions(
  i: Omit<SlowDriveRunInput, 'prior' | 'onProgress'>,
  curve: SpeedCurve,
  onProgress?: (fraction: number) => void,
): SlowDriveOptions {
  return {
    ...i.common,
    ...slowStepOptions(i),
    curve,
    stat: i.stat,
    laneGroups: i.laneGroups,
    onProgress,
  };
}

/** The engine-reason note of a finished slow-path result, and the time its statistics cover. */
export function slowNote(
  curve: SpeedCurve,
  driven: DrivenResult,
  fallback_s: number,
): { note: string; analysed_s: number } {
  const info = (driven as DrivenResult & { slow?: SlowDriveInfo }).slow;
  const fmt = (x: number) => x.toPrecision(3);
  const note = info
    ? `; statistics over ${fmt(info.analysed_s)} s (the spliced series repeats every period); speed curve ${curve.forward.length} + ${curve.backward.length} speeds from ${fmt(curve.forward[0].speed_m_s)} to ${fmt(curve.forward[curve.forward.length - 1].speed_m_s)} m/s; turning points stepped directly (${info.windows} windows, ${fmt(100 * info.window_fraction)} % of the time), splice mismatch ${fmt(100 * info.splice_mismatch_rel)} %`
    : '';
  return { note, analysed_s: info ? info.analysed_s : fallback_s };
}

/**
 * The speed curve over the speeds this drive needs (slowSpeedRange), then the path itself,
 * on this thread. Returns the driven result, the curve (to be written with the results)
 * and a note for the engine's reason.
 */
export function slowDriveRun(i: SlowDriveRunInput): {
  driven: DrivenResult;
  curve: SpeedCurve | null;
  note: string;
  /** time the statistics cover, s */
  analysed_s: number;
} {
  const { vLo, vHi } = slowSpeedRange(i);
  const curve = ensureSpeedCurve(
    i.prior,
    { ...i, onProgress: (x: number) => i.onProgress?.(0.6 * x) },
    vLo,
    vHi,
  );
  if (typeof curve === 'string')
    return {
      driven: failedDriven(`speed curve: ${curve}`, 0, 0),
      curve: null,
      note: '',
      analysed_s: i.analysed_s,
    };
  const driven = drivenSlow(
    i.p,
    slowOptions(i, curve, (x) => i.onProgress?.(0.6 + 0.4 * x)),
  );
  return { driven, curve, ...slowNote(curve, driven, i.analysed_s) };
}
