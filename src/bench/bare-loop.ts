/**
 * The speed limit of the exact engine's arithmetic on this CPU: the per-step work of
 * ExactEngine (src/physics/coupled/exact.ts) written out as one function over local
 * Float64Arrays, with no method calls, no object fields and no engine-kind branches.
 *
 * Per step and lane it does what the engine does for a scenario with an external cavity,
 * a class-B laser, equally spaced modes and a full cross-saturation matrix (the demo):
 * two mirror positions (one sine each), two reads of the delay line (4-point Lagrange
 * weights, two trig pairs, per mode two 4-point interpolations and a complex rotation),
 * four RK4 stages of the laser equations with the O(M^2) saturation sum, the energy
 * bookkeeping, spontaneous emission every noiseEvery steps (xoshiro128** and the polar
 * method, inlined), the flush and finiteness checks, and the write of the new sample into
 * the ring. The operations come in the same order as in the engine, so the two produce
 * bit-identical fields from the same start and seed; main.ts checks that, which is what
 * makes the ratio of their speeds a fair one.
 */
import { SPEED_OF_LIGHT_m_s } from '../physics/constants';
import type { CoupledParams } from '../physics/coupled/params';

/** What the loop needs: engine parameters, lanes, step, and a sine drive. */
export interface BareLoopConfig {
  p: CoupledParams;
  /** rest offset of each lane, m */
  laneOffsets_m: Float64Array;
  /** time step, s */
  dt: number;
  /** bound on |offset + x(t)|, m: sizes the ring as the engine does */
  maxExcursion_m: number;
  /** sine drive x(t) = offset + drift t + A sin(omega t + phase), SI */
  drive: { offset_m: number; drift_m_s: number; amplitude_m: number; omega_rad_s: number; phase_rad: number };
  /** spontaneous emission every this many steps (the engine's noiseEvery) */
  noiseEvery: number;
  /** the four 32-bit state words of the xoshiro128** generator (see xoshiroState) */
  rngState: Int32Array;
}

/** The state after the loop and the time the timed part took. */
export interface BareLoopResult {
  Er: Float64Array;
  Ei: Float64Array;
  N: Float64Array;
  /** per lane: gain, cold loss, injection, noise, external in, lost, scale, mismatch, mismatch scale */
  energy: Float64Array;
  /** wall time of the steps after the first warmupSteps, s */
  timed_s: number;
  /** steps timed */
  timedSteps: number;
}

const MASK64 = (1n << 64n) - 1n;
const GOLDEN64 = 0x9e3779b97f4a7c15n;

function mix64(z: bigint): bigint {
  z = ((z ^ (z >> 30n)) * 0xbf58476d1ce4e5b9n) & MASK64;
  z = ((z ^ (z >> 27n)) * 0x94d049bb133111ebn) & MASK64;
  return z ^ (z >> 31n);
}

/**
 * The xoshiro128** state words that `new Rng(seed)` of src/numerics/rng.ts starts from:
 * two SplitMix64 outputs of the key (Blackman & Vigna, ACM TOMS 47(4) 36, 2021; Steele,
 * Lea & Flood, OOPSLA 2014), so the inlined generator draws the engine's sequence.
 * seed: non-negative safe integer. Returns Int32Array [s0, s1, s2, s3].
 */
export function xoshiroState(seed: number): Int32Array {
  let x = BigInt(seed) & MASK64;
  x = (x + GOLDEN64) & MASK64;
  const p = mix64(x);
  x = (x + GOLDEN64) & MASK64;
  const q = mix64(x);
  const s = Int32Array.of(
    Number(p & 0xffffffffn) | 0,
    Number(p >> 32n) | 0,
    Number(q & 0xffffffffn) | 0,
    Number(q >> 32n) | 0,
  );
  if ((s[0] | s[1] | s[2] | s[3]) === 0) s[0] = 1;
  return s;
}

/**
 * Run the engine's step `warmupSteps + steps` times from the laser state (E, N) given per
 * mode (every lane the same, external cavity empty, as ExactEngine.setLaserState leaves
 * it), timing the last `steps` with process.hrtime. Returns the final state, the energy
 * sums and the timed wall time. Units as in the engine (fields sqrt(W), time s).
 */
export function runBareLoop(
  cfg: BareLoopConfig,
  init: { Er: ArrayLike<number>; Ei: ArrayLike<number>; N: ArrayLike<number> },
  warmupSteps: number,
  steps: number,
): BareLoopResult {
  const p = cfg.p;
  const M = p.M;
  if (!p.hasExternal || p.classA || M < 2)
    throw new Error('bare loop: written for an external cavity, a class-B laser and at least two modes');
  for (let m = 1; m < M; m++)
    if (p.modes.order[m] - p.modes.order[m - 1] !== 1)
      throw new Error('bare loop: written for equally spaced modes');
  const L = cfg.laneOffsets_m.length;
  const LM = L * M;
  const dt = cfg.dt;
  // ---- sizes and constants, as the engine's constructor computes them
  const maxDelay = (2 * (p.externalLength_m + Math.abs(cfg.maxExcursion_m))) / SPEED_OF_LIGHT_m_s / dt;
  let cap = 8;
  while (cap < maxDelay + 6) cap *= 2;
  const mask = cap - 1;
  const delayPerMetre = 2 / SPEED_OF_LIGHT_m_s / dt;
  const L2 = p.externalLength_m;
  const g = p.gammaC;
  const invPsat = p.invPsat;
  const kap = p.kappa;
  const alpha = p.alpha;
  const sqrtLaw = p.inhomogeneous;
  const invTauN = 1 / p.tauN;
  const cpl = p.couplingOut;
  const r2 = p.r2;
  const r3 = p.r3eff;
  const tauL = p.roundTripLaser_s;
  const etaT2 = cpl * cpl;
  const returnToLaser = p.returnToLaser;
  const ph00 = p.extPhase0[0];
  const ppm0 = p.phasePerMetre[0];
  const dPhase0 = M > 1 ? p.extPhase0[1] - p.extPhase0[0] : 0;
  const dPhasePerMetre = M > 1 ? p.phasePerMetre[1] - p.phasePerMetre[0] : 0;
  const noiseEvery = cfg.noiseEvery;
  const sigmaNoise = Math.sqrt(0.5 * p.spontaneous_W * p.gammaC * dt * noiseEvery);
  const dOff = cfg.drive.offset_m;
  const dDrift = cfg.drive.drift_m_s;
  const dAmp = cfg.drive.amplitude_m;
  const dOmega = cfg.drive.omega_rad_s;
  const dPhase = cfg.drive.phase_rad;
  // ---- local arrays
  const C = Float64Array.from(p.cross);
  const pumpF = Float64Array.from(p.gainRel, (f) => p.pump * f);
  const noiseW = Float64Array.from(p.gainRel, (f) => Math.sqrt(Math.max(0, f)));
  const laneOff = Float64Array.from(cfg.laneOffsets_m);
  const Er = new Float64Array(LM);
  const Ei = new Float64Array(LM);
  const Nn = new Float64Array(LM);
  const br = new Float64Array(LM);
  const bi = new Float64Array(LM);
  const ar = new Float64Array(LM);
  const ai = new Float64Array(LM);
  const aDel2 = new Float64Array(LM);
  const ringRe = new Float64Array(LM * cap);
  const ringIm = new Float64Array(LM * cap);
  const e0r = new Float64Array(M),
    e0i = new Float64Array(M),
    n0 = new Float64Array(M);
  const sr = new Float64Array(M),
    si = new Float64Array(M),
    sn = new Float64Array(M);
  const accR = new Float64Array(M),
    accI = new Float64Array(M),
    accN = new Float64Array(M);
  const kr = new Float64Array(M),
    ki = new Float64Array(M),
    kn = new Float64Array(M);
  const bhr = new Float64Array(M),
    bhi = new Float64Array(M);
  const b1r = new Float64Array(M),
    b1i = new Float64Array(M);
  const ad1 = new Float64Array(M);
  const sat = new Float64Array(M);
  const en = new Float64Array(L * 9);
  const kick = new Float64Array(2 * LM);
  let head = 0;
  for (let l = 0; l < L; l++) {
    for (let m = 0; m < M; m++) {
      const j = l * M + m;
      Er[j] = init.Er[m];
      Ei[j] = init.Ei[m];
      Nn[j] = init.N[m];
      ar[j] = cpl * Er[j] - r2 * br[j];
      ai[j] = cpl * Ei[j] - r2 * bi[j];
      ringRe[j * cap + head] = ar[j];
      ringIm[j * cap + head] = ai[j];
    }
  }
  let s0 = cfg.rngState[0] | 0,
    s1 = cfg.rngState[1] | 0,
    s2 = cfg.rngState[2] | 0,
    s3 = cfg.rngState[3] | 0;
  let hasSpare = false;
  let spare = 0;
  let noiseCount = 0;
  let t = 0;
  const half = 0.5 * dt;
  const w6 = dt / 6;
  const total = warmupSteps + steps;
  let tStart = process.hrtime.bigint();
  for (let step = 0; step < total; step++) {
    if (step === warmupSteps) tStart = process.hrtime.bigint();
    noiseCount++;
    const noiseNow = noiseCount >= noiseEvery;
    if (noiseNow) noiseCount = 0;
    const sigma = noiseNow ? sigmaNoise : 0;
    const xh = dOff + dDrift * (t + half) + dAmp * Math.sin(dOmega * (t + half) + dPhase);
    const x1 = dOff + dDrift * (t + dt) + dAmp * Math.sin(dOmega * (t + dt) + dPhase);
    const newHead = (head + 1) & mask;
    if (sigma > 0) {
      // the step's normal deviates, drawn in the engine's order (lane, mode, re then im)
      // by the polar method (Marsaglia & Bray 1964) on inlined xoshiro128** outputs
      for (let q = 0; q < 2 * LM; q++) {
        if (hasSpare) {
          hasSpare = false;
          kick[q] = spare;
          continue;
        }
        let v1: number, v2: number, ss: number;
        do {
          // two uniforms of 53 bits, each from two outputs
          let mm = Math.imul(s1, 5);
          let out = Math.imul((mm << 7) | (mm >>> 25), 9);
          let tt = s1 << 9;
          s2 ^= s0;
          s3 ^= s1;
          s1 ^= s2;
          s0 ^= s3;
          s2 ^= tt;
          s3 = (s3 << 11) | (s3 >>> 21);
          const a1 = (out >>> 0) >>> 5;
          mm = Math.imul(s1, 5);
          out = Math.imul((mm << 7) | (mm >>> 25), 9);
          tt = s1 << 9;
          s2 ^= s0;
          s3 ^= s1;
          s1 ^= s2;
          s0 ^= s3;
          s2 ^= tt;
          s3 = (s3 << 11) | (s3 >>> 21);
          const b1 = (out >>> 0) >>> 6;
          v1 = 2 * ((a1 * 67108864 + b1) * (1 / 9007199254740992)) - 1;
          mm = Math.imul(s1, 5);
          out = Math.imul((mm << 7) | (mm >>> 25), 9);
          tt = s1 << 9;
          s2 ^= s0;
          s3 ^= s1;
          s1 ^= s2;
          s0 ^= s3;
          s2 ^= tt;
          s3 = (s3 << 11) | (s3 >>> 21);
          const a2 = (out >>> 0) >>> 5;
          mm = Math.imul(s1, 5);
          out = Math.imul((mm << 7) | (mm >>> 25), 9);
          tt = s1 << 9;
          s2 ^= s0;
          s3 ^= s1;
          s1 ^= s2;
          s0 ^= s3;
          s2 ^= tt;
          s3 = (s3 << 11) | (s3 >>> 21);
          const b2 = (out >>> 0) >>> 6;
          v2 = 2 * ((a2 * 67108864 + b2) * (1 / 9007199254740992)) - 1;
          ss = v1 * v1 + v2 * v2;
        } while (ss >= 1 || ss === 0);
        const kk = Math.sqrt((-2 * Math.log(ss)) / ss);
        spare = v2 * kk;
        hasSpare = true;
        kick[q] = v1 * kk;
      }
    }
    for (let l = 0; l < L; l++) {
      const off = l * M;
      const base0 = l * M * cap;
      // ---- two reads of the delay line: at t + dt/2 (into bh) and t + dt (into b1, |a|^2 into ad1)
      for (let rd = 0; rd < 2; rd++) {
        const x = laneOff[l] + (rd === 0 ? xh : x1);
        const back = delayPerMetre * (L2 + x) - (rd === 0 ? 0.5 : 1);
        let start = Math.floor(back) - 1;
        if (start < 0) start = 0;
        const u = back - start;
        const w0 = (-(u - 1) * (u - 2) * (u - 3)) / 6;
        const w1 = (u * (u - 2) * (u - 3)) / 2;
        const w2 = (-u * (u - 1) * (u - 3)) / 2;
        const w3 = (u * (u - 1) * (u - 2)) / 6;
        const h = head - start;
        const o0 = h & mask,
          o1 = (h - 1) & mask,
          o2 = (h - 2) & mask,
          o3 = (h - 3) & mask;
        const ph = ph00 + ppm0 * x;
        let c = Math.cos(ph);
        let s = Math.sin(ph);
        const d = dPhase0 + dPhasePerMetre * x;
        const dc = Math.cos(d);
        const ds = Math.sin(d);
        const outR = rd === 0 ? bhr : b1r;
        const outI = rd === 0 ? bhi : b1i;
        for (let m = 0; m < M; m++) {
          const b = base0 + m * cap;
          const xr = w0 * ringRe[b + o0] + w1 * ringRe[b + o1] + w2 * ringRe[b + o2] + w3 * ringRe[b + o3];
          const xi = w0 * ringIm[b + o0] + w1 * ringIm[b + o1] + w2 * ringIm[b + o2] + w3 * ringIm[b + o3];
          if (rd === 1) ad1[m] = xr * xr + xi * xi;
          if (m > 0) {
            const c2 = c * dc - s * ds;
            s = s * dc + c * ds;
            c = c2;
          }
          outR[m] = r3 * (xr * c + xi * s);
          outI[m] = r3 * (xi * c - xr * s);
        }
      }
      for (let m = 0; m < M; m++) {
        e0r[m] = Er[off + m];
        e0i[m] = Ei[off + m];
        n0[m] = Nn[off + m];
        sr[m] = e0r[m];
        si[m] = e0i[m];
        sn[m] = n0[m];
      }
      // ---- four RK4 stages; stage k reads the state in (sr, si, sn) and the returned field
      // b(t) (stage 0), b(t + dt/2) (stages 1, 2) or b(t + dt) (stage 3)
      let gainI = 0,
        lossI = 0,
        injI = 0;
      for (let stage = 0; stage < 4; stage++) {
        for (let m = 0; m < M; m++) {
          let sum = 0;
          const row = m * M;
          for (let k = 0; k < M; k++) sum += C[row + k] * (sr[k] * sr[k] + si[k] * si[k]);
          sat[m] = sum * invPsat;
        }
        let gainP = 0,
          lossP = 0,
          injP = 0;
        for (let m = 0; m < M; m++) {
          const bR = stage === 0 ? br[off + m] : stage === 3 ? b1r[m] : bhr[m];
          const bI = stage === 0 ? bi[off + m] : stage === 3 ? b1i[m] : bhi[m];
          const nm = sn[m];
          const D = sqrtLaw ? Math.sqrt(1 + 0.5 * sat[m]) : 1 + sat[m];
          kn[m] = (pumpF[m] - nm * D) * invTauN;
          const G = g * nm;
          const re = sr[m];
          const im = si[m];
          const hf = 0.5 * (G - g);
          const rot = alpha * hf;
          kr[m] = hf * re - rot * im + kap * bR;
          ki[m] = hf * im + rot * re + kap * bI;
          const e2 = re * re + im * im;
          gainP += G * e2;
          lossP += g * e2;
          injP += 2 * kap * (re * bR + im * bI);
        }
        const wgt = stage === 0 || stage === 3 ? 1 : 2;
        gainI += wgt * gainP;
        lossI += wgt * lossP;
        injI += wgt * injP;
        if (stage < 3) {
          const f = stage === 2 ? dt : half;
          for (let m = 0; m < M; m++) {
            if (stage === 0) {
              accR[m] = kr[m];
              accI[m] = ki[m];
              accN[m] = kn[m];
            } else {
              accR[m] += 2 * kr[m];
              accI[m] += 2 * ki[m];
              accN[m] += 2 * kn[m];
            }
            sr[m] = e0r[m] + f * kr[m];
            si[m] = e0i[m] + f * ki[m];
            sn[m] = n0[m] + f * kn[m];
          }
        }
      }
      const eo = l * 9;
      en[eo] += w6 * gainI * tauL;
      en[eo + 1] += w6 * lossI * tauL;
      en[eo + 2] += w6 * injI * tauL;
      let noiseE = 0,
        extIn = 0,
        extLost = 0,
        extScale = 0,
        mis = 0,
        misScale = 0;
      for (let m = 0; m < M; m++) {
        const j = off + m;
        let re = e0r[m] + w6 * (accR[m] + kr[m]);
        let im = e0i[m] + w6 * (accI[m] + ki[m]);
        const nn = n0[m] + w6 * (accN[m] + kn[m]);
        if (sigma > 0) {
          const before = re * re + im * im;
          const sg = sigma * noiseW[m];
          re += sg * kick[2 * j];
          im += sg * kick[2 * j + 1];
          noiseE += re * re + im * im - before;
        }
        if (re * re + im * im < 1e-150) {
          re = 0;
          im = 0;
        }
        if (!(Number.isFinite(re) && Number.isFinite(im) && Number.isFinite(nn))) {
          throw new Error(`bare loop: non-finite field at step ${step}`);
        }
        const oldE2 = Er[j] * Er[j] + Ei[j] * Ei[j];
        Er[j] = re;
        Ei[j] = im;
        Nn[j] = nn;
        const c1r = b1r[m];
        const c1i = b1i[m];
        const a1r = cpl * re - r2 * c1r;
        const a1i = cpl * im - r2 * c1i;
        const a0r = ar[j],
          a0i = ai[j],
          c0r = br[j],
          c0i = bi[j];
        const a02 = a0r * a0r + a0i * a0i;
        const a12 = a1r * a1r + a1i * a1i;
        const bb0 = c0r * c0r + c0i * c0i;
        const bb1 = c1r * c1r + c1i * c1i;
        extIn += 0.5 * (a02 - bb0 + a12 - bb1);
        extLost += 0.5 * (aDel2[j] - bb0 + ad1[m] - bb1);
        extScale += 0.5 * (a02 + a12);
        const rp1 = re * c1r + im * c1i;
        const rp0 = e0r[m] * c0r + e0i[m] * c0i;
        if (returnToLaser) mis += 0.5 * (etaT2 * (bb0 + bb1) + 2 * (r2 - 1) * cpl * (rp0 + rp1));
        misScale += 0.5 * etaT2 * (oldE2 + re * re + im * im);
        br[j] = c1r;
        bi[j] = c1i;
        ar[j] = a1r;
        ai[j] = a1i;
        aDel2[j] = ad1[m];
        const ri = j * cap + newHead;
        ringRe[ri] = a1r;
        ringIm[ri] = a1i;
      }
      en[eo + 3] += noiseE * tauL;
      en[eo + 4] += extIn * dt;
      en[eo + 5] += extLost * dt;
      en[eo + 6] += extScale * dt;
      en[eo + 7] += mis * dt;
      en[eo + 8] += misScale * dt;
    }
    head = newHead;
    t += dt;
  }
  const timed_s = Number(process.hrtime.bigint() - tStart) / 1e9;
  return { Er, Ei, N: Nn, energy: en, timed_s, timedSteps: steps };
}
