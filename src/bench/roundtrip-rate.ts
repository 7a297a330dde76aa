/**
 * The round-trip engine against a bare typed-array loop doing the same arithmetic (one
 * function, every constant a local, nothing but Float64Arrays), and every engine's
 * throughput in simulated lane-seconds per wall second on the demo. Spontaneous emission
 * is off in both (its random draws are not the loop's arithmetic), so the two must agree
 * to round-off from the same start. The bare loop steps one lane at a time; the engine
 * steps the packet filters of up to four lanes together (they share the coefficient
 * loads), so since 0.3.2 the ratio can exceed 1.
 */
import type { Scenario } from '../scenario/schema';
import { deriveAll } from '../physics/derive';
import type { CoupledParams } from '../physics/coupled/params';
import { RoundTripEngine } from '../physics/coupled/roundtrip';
import { createLaneEngine } from '../physics/coupled/factory';
import { createDrive } from '../physics/drive';
import { createRng } from '../numerics/rng';
import { lagrangeCentredN, READ_POINTS } from '../numerics/delay-line';
import { freeRunning } from '../simulate/references';
import { exactEngineStep, planEngines } from '../simulate/engine-choice';

export interface RoundTripRateResult {
  roundtrip_lane_steps_per_s: number;
  bare_loop_lane_steps_per_s: number;
  roundtrip_vs_bare_ratio: number;
  bare_vs_engine_max_rel_diff: number;
  lanes: number;
  filters: number;
  dt_s: number;
  /** simulated lane-seconds per wall second of each engine on the demo's drive */
  simulated_lane_s_per_s: Record<string, number>;
}

interface Motion {
  position(t: number): number;
}

/**
 * The round-trip step written out as one loop (no noise), on state copied out of an
 * engine: laser and gap rings, filter states, inversions. Returns the wall time of the
 * timed steps and the final gap fields of every lane.
 */
function bareLoop(
  e: RoundTripEngine,
  p: CoupledParams,
  motion: Motion,
  steps: number,
): { wall_s: number; a: Float64Array } {
  const st = e as unknown as {
    laser: { re: Float64Array; im: Float64Array; cap: number; mask: number; head: number };
    gap: { re: Float64Array; im: Float64Array; cap: number; mask: number; head: number };
    pk: Float64Array;
    xpr: Float64Array;
    xpi: Float64Array;
    inv: Float64Array;
  };
  const L = e.L;
  const dt = e.dt;
  const NL = e.step.laserSteps;
  const bank = e.bank;
  const F = bank.filters;
  const nI = bank.inversions;
  const lre = Float64Array.from(st.laser.re);
  const lim = Float64Array.from(st.laser.im);
  const lcap = st.laser.cap;
  const lmask = st.laser.mask;
  let lhead = st.laser.head;
  const gre = Float64Array.from(st.gap.re);
  const gim = Float64Array.from(st.gap.im);
  const gcap = st.gap.cap;
  const gmask = st.gap.mask;
  let ghead = st.gap.head;
  // the packet state as the engine keeps it (gain-packets.ts): y re, y im, weight, sum |y|^2
  const pk = Float64Array.from(st.pk);
  const xpr = Float64Array.from(st.xpr);
  const xpi = Float64Array.from(st.xpi);
  const inv = Float64Array.from(st.inv);
  const sat = new Float64Array(nI);
  const invEvery = e.invEvery;
  let invCount = (e as unknown as { invCount: number }).invCount;
  const w = new Float64Array(READ_POINTS);
  const offs = Float64Array.from(e.offset);
  const c = 299792458;
  const nuC = p.modes.gainPeak_Hz;
  const cyc = nuC * p.roundTripLaser_s - Math.floor(nuC * p.roundTripLaser_s);
  const pcR = Math.cos(2 * Math.PI * cyc);
  const pcI = -Math.sin(2 * Math.PI * cyc);
  const g0 = (2 * p.externalLength_m * nuC) / c - Math.floor((2 * p.externalLength_m * nuC) / c);
  const gpm = (2 * nuC) / c;
  const dpm = 2 / c / dt;
  const rho1 = Math.sqrt(p.R1) * (1 - p.internalLoss);
  const hc = 0.5 * p.gammaC * p.roundTripLaser_s;
  const eh = Math.exp(hc);
  const r2 = p.r2;
  const cpl = p.couplingOut;
  const r3 = p.r3eff;
  const x0 = dt / p.tauN;
  const satScale = p.invPsat / p.R2;
  const pump = p.pump;
  const { Ar, Ai, Br, Bi, weightA: wA, weightB: wB, invA: iA, invB: iB, satA: sA, satB: sB } = bank;
  // the engine's bookkeeping: windows of |e|^2, |a|^2, |b|^2 and e, a over one round trip,
  // the sliding demodulation at the M modes, the energy sums and the M2 closure check
  const M = p.M;
  const pE = new Float64Array(L * NL);
  const pA = new Float64Array(L * NL);
  const pB = new Float64Array(L * NL);
  const eRe = new Float64Array(L * NL);
  const eIm = new Float64Array(L * NL);
  const aRe = new Float64Array(L * NL);
  const aIm = new Float64Array(L * NL);
  const sums = new Float64Array(L * 4);
  const Er = new Float64Array(L * M);
  const Ei = new Float64Array(L * M);
  const Ar2 = new Float64Array(L * M);
  const Ai2 = new Float64Array(L * M);
  const Brm = new Float64Array(L * M);
  const Bim = new Float64Array(L * M);
  const acc = new Float64Array(L * 7);
  const phr = new Float64Array(M).fill(1);
  const phi = new Float64Array(M);
  const rotR = Float64Array.from(p.modes.detuning_Hz, (d) => Math.cos(2 * Math.PI * d * dt));
  const rotI = Float64Array.from(p.modes.detuning_Hz, (d) => -Math.sin(2 * Math.PI * d * dt));
  const oldR = Float64Array.from(p.modes.detuning_Hz, (d) => Math.cos(2 * Math.PI * d * NL * dt));
  const oldI = Float64Array.from(p.modes.detuning_Hz, (d) => Math.sin(2 * Math.PI * d * NL * dt));
  const Rsum = p.R2 + cpl * cpl;
  let worst = 0;
  let slot = 0;
  let t = e.t;
  const t0 = process.hrtime.bigint();
  for (let n = 0; n < steps; n++) {
    const t1 = t + dt;
    const x = motion.position(t1);
    lhead = (lhead + 1) & lmask;
    ghead = (ghead + 1) & gmask;
    slot = (slot + 1) % NL;
    const updateInv = ++invCount >= invEvery;
    const invSteps = invCount;
    if (updateInv) invCount = 0;
    for (let m = 0; m < M; m++) {
      const r = phr[m] * rotR[m] - phi[m] * rotI[m];
      phi[m] = phr[m] * rotI[m] + phi[m] * rotR[m];
      phr[m] = r;
    }
    for (let l = 0; l < L; l++) {
      const disp = offs[l] + x;
      const D = dpm * (p.externalLength_m + disp);
      const k = Math.floor(D);
      lagrangeCentredN(D - k, READ_POINTS, w);
      const gb = l * gcap;
      const top = ghead - k + READ_POINTS / 2 - 1;
      let adr = 0;
      let adi = 0;
      for (let i = 0; i < READ_POINTS; i++) {
        const idx = gb + ((top - i) & gmask);
        adr += w[i] * gre[idx];
        adi += w[i] * gim[idx];
      }
      const ph0 = g0 + gpm * disp;
      const ph = 2 * Math.PI * (ph0 - Math.floor(ph0));
      const cs = Math.cos(ph);
      const sn = Math.sin(ph);
      const bR = r3 * (adr * cs + adi * sn);
      const bI = r3 * (adi * cs - adr * sn);
      const iv = l * lcap + ((lhead - NL) & lmask);
      const vr = lre[iv];
      const vi = lim[iv];
      const eR = rho1 * (vr * pcR - vi * pcI);
      const eI = rho1 * (vr * pcI + vi * pcR);
      const uR = r2 * eR + cpl * bR;
      const uI = r2 * eI + cpl * bI;
      const aR = cpl * eR - r2 * bR;
      const aI = cpl * eI - r2 * bI;
      const fb = l * F;
      const sr = uR + xpr[l];
      const si = uI + xpi[l];
      xpr[l] = uR;
      xpi[l] = uI;
      let gr = 0;
      let gi = 0;
      const ib = l * nI;
      for (let j = 0; j < F; j++) {
        const q = 4 * (fb + j);
        const y0r = pk[q];
        const y0i = pk[q + 1];
        const y1r = Ar[j] * y0r - Ai[j] * y0i + Br[j] * sr - Bi[j] * si;
        const y1i = Ar[j] * y0i + Ai[j] * y0r + Br[j] * si + Bi[j] * sr;
        pk[q] = y1r;
        pk[q + 1] = y1i;
        const wn = pk[q + 2];
        gr += wn * y1r;
        gi += wn * y1i;
        pk[q + 3] += y1r * y1r + y1i * y1i;
      }
      const vR = eh * (uR + (hc * gr - hc * uR));
      const vI = eh * (uI + (hc * gi - hc * uI));
      if (updateInv) {
        sat.fill(0);
        for (let j = 0; j < F; j++) {
          const q = 4 * (fb + j) + 3;
          sat[iA[j]] += sA[j] * pk[q];
          sat[iB[j]] += sB[j] * pk[q];
          pk[q] = 0;
        }
        const xh = x0 * invSteps;
        const norm = satScale / invSteps;
        for (let i = 0; i < nI; i++) {
          const S = sat[i] * norm;
          const target = pump / (1 + S);
          const xr = (1 + S) * xh;
          const decay = xr < 0.05 ? 1 - xr * (1 - xr * (0.5 - xr / 6)) : Math.exp(-xr);
          inv[ib + i] = target + (inv[ib + i] - target) * decay;
        }
        for (let j = 0; j < F; j++) pk[4 * (fb + j) + 2] = wA[j] * inv[ib + iA[j]] + wB[j] * inv[ib + iB[j]];
      }
      lre[l * lcap + lhead] = vR;
      lim[l * lcap + lhead] = vI;
      gre[gb + ghead] = aR;
      gim[gb + ghead] = aI;
      const e2 = eR * eR + eI * eI;
      const u2 = uR * uR + uI * uI;
      const a2 = aR * aR + aI * aI;
      const b2 = bR * bR + bI * bI;
      const v2 = vR * vR + vI * vI;
      const vOld2 = vr * vr + vi * vi;
      const rhs = Rsum * (e2 + b2);
      const err = rhs > 0 ? Math.abs(u2 + a2 - rhs) / rhs : 0;
      if (err > worst) worst = err;
      const ea = l * 7;
      acc[ea] += (v2 - u2) * dt;
      acc[ea + 1] += ((1 - rho1 * rho1) * vOld2 + (1 - p.R2) * e2) * dt;
      acc[ea + 2] += (u2 - p.R2 * e2) * dt;
      acc[ea + 4] += a2 * dt;
      acc[ea + 5] += (adr * adr + adi * adi) * dt;
      acc[ea + 6] += a2 * dt;
      const j = l * NL + slot;
      const eOR = eRe[j];
      const eOI = eIm[j];
      const aOR = aRe[j];
      const aOI = aIm[j];
      sums[4 * l] += e2 - pE[j];
      sums[4 * l + 1] += a2 - pA[j];
      sums[4 * l + 2] += b2 - pB[j];
      sums[4 * l + 3] += v2 - vOld2;
      pE[j] = e2;
      pA[j] = a2;
      pB[j] = b2;
      eRe[j] = eR;
      eIm[j] = eI;
      aRe[j] = aR;
      aIm[j] = aI;
      const inv1 = 1 / NL;
      for (let m = 0; m < M; m++) {
        const cr = phr[m];
        const ci = phi[m];
        const or = cr * oldR[m] - ci * oldI[m];
        const oi = cr * oldI[m] + ci * oldR[m];
        const q = l * M + m;
        Er[q] += inv1 * (eR * cr - eI * ci - (eOR * or - eOI * oi));
        Ei[q] += inv1 * (eR * ci + eI * cr - (eOR * oi + eOI * or));
        Ar2[q] += inv1 * (aR * cr - aI * ci - (aOR * or - aOI * oi));
        Ai2[q] += inv1 * (aR * ci + aI * cr - (aOR * oi + aOI * or));
        Brm[q] = bR * cr - bI * ci;
        Bim[q] = bR * ci + bI * cr;
      }
    }
    t = t1;
  }
  const wall_s = Number(process.hrtime.bigint() - t0) / 1e9;
  // keep the bookkeeping observable so none of it is optimised away
  if (!(worst < 1) || !Number.isFinite(acc[0] + sums[0] + Er[0] + Ar2[0] + Brm[0] + Bim[0] + Ei[0] + Ai2[0]))
    throw new Error('bench: bare round-trip loop went non-finite');
  const a = new Float64Array(2 * L);
  for (let l = 0; l < L; l++) {
    a[2 * l] = gre[l * gcap + ghead];
    a[2 * l + 1] = gim[l * gcap + ghead];
  }
  return { wall_s, a };
}

/** Measure the round-trip engine against the bare loop, and every engine's throughput, on scenario s. */
export function measureRoundTrip(
  s: Scenario,
  o: { lanes: number; steps: number; rounds: number; log?: (line: string) => void },
): RoundTripRateResult {
  const log = o.log ?? (() => undefined);
  const quiet: Scenario = { ...s, laser: { ...s.laser, gain: { ...s.laser.gain, spontaneous_power: 0 } } };
  const { params, derived } = deriveAll(quiet);
  const drive = createDrive(quiet.drive, quiet.simulation.seed);
  const half = quiet.laser.wavelength / 2;
  const maxExc = Math.abs(quiet.drive.offset) + half + quiet.drive.amplitude;
  const free = freeRunning(params, createRng(1));
  const make = () => {
    const e = new RoundTripEngine(params, o.lanes, drive, createRng(2), maxExc);
    e.setLaserState(free.Er, free.Ei, free.N);
    for (let l = 0; l < o.lanes; l++) e.offset[l] = (l * half) / o.lanes;
    e.advance(2000);
    return e;
  };
  // agreement from the same state
  const probe = make();
  const check = bareLoop(probe, params, drive, o.steps);
  probe.advance(o.steps);
  let diff = 0;
  let scale = 0;
  const gapNow = probe as unknown as {
    gap: { re: Float64Array; im: Float64Array; cap: number; head: number };
  };
  for (let l = 0; l < o.lanes; l++) {
    const i = l * gapNow.gap.cap + gapNow.gap.head;
    diff = Math.max(
      diff,
      Math.abs(gapNow.gap.re[i] - check.a[2 * l]),
      Math.abs(gapNow.gap.im[i] - check.a[2 * l + 1]),
    );
    scale = Math.max(scale, Math.abs(check.a[2 * l]), Math.abs(check.a[2 * l + 1]));
  }
  let eWall = 0;
  let bWall = 0;
  for (let r = 0; r < o.rounds; r++) {
    const e = make();
    const t0 = process.hrtime.bigint();
    e.advance(o.steps);
    const w = Number(process.hrtime.bigint() - t0) / 1e9;
    eWall += w;
    const b = bareLoop(make(), params, drive, o.steps);
    bWall += b.wall_s;
    log(
      `round-trip round ${r + 1}/${o.rounds}: engine ${w.toFixed(2)} s, bare loop ${b.wall_s.toFixed(2)} s`,
    );
  }
  const laneSteps = o.steps * o.rounds * o.lanes;
  // throughput of every engine in simulated lane-seconds per wall second
  const plan = planEngines(quiet, params, derived.finesse_external, 4e-6, 'auto');
  const rates: Record<string, number> = {};
  const kinds: { name: string; kind: 'exact' | 'fast' | 'roundtrip'; dt: number }[] = [
    { name: 'roundtrip', kind: 'roundtrip', dt: plan.roundTripStep_s },
    { name: 'modal', kind: 'exact', dt: exactEngineStep(quiet, params) },
    {
      name: 'meanfield',
      kind: 'fast',
      dt: planEngines(quiet, params, derived.finesse_external, 4e-6, 'meanfield').driven.dt,
    },
  ];
  for (const k of kinds) {
    const e = createLaneEngine(
      { kind: k.kind, dt: k.dt, maxExcursion_m: maxExc },
      params,
      o.lanes,
      drive,
      createRng(3),
    );
    e.setLaserState(free.Er, free.Ei, free.N);
    const n = Math.max(1000, Math.round((o.steps * plan.roundTripStep_s) / k.dt));
    e.advance(Math.min(n, 2000));
    const t0 = process.hrtime.bigint();
    e.advance(n);
    const w = Number(process.hrtime.bigint() - t0) / 1e9;
    rates[k.name] = (o.lanes * n * k.dt) / w;
    log(
      `throughput ${k.name}: ${rates[k.name].toExponential(3)} simulated lane-s per s (step ${k.dt.toExponential(3)} s)`,
    );
  }
  return {
    roundtrip_lane_steps_per_s: laneSteps / eWall,
    bare_loop_lane_steps_per_s: laneSteps / bWall,
    roundtrip_vs_bare_ratio: bWall / eWall,
    bare_vs_engine_max_rel_diff: scale > 0 ? diff / scale : diff,
    lanes: o.lanes,
    filters: probe.bank.filters,
    dt_s: probe.dt,
    simulated_lane_s_per_s: rates,
  };
}
