import { describe, expect, it } from 'vitest';
import { Rng, createRng } from '../src/numerics';

const N = 1_000_000;

/**
 * Second, independent implementation of xoshiro128** on BigInt (32-bit words masked
 * explicitly), transcribed from the algorithm in Blackman & Vigna, "Scrambled linear
 * pseudorandom number generators" (arXiv:1805.01407, 2018): result = rotl(s1 * 5, 7) * 9,
 * t = s1 << 9, s2 ^= s0, s3 ^= s1, s1 ^= s2, s0 ^= s3, s2 ^= t, s3 = rotl(s3, 11); state
 * words from two SplitMix64 outputs (Steele, Lea & Flood 2014) of the key, low word first.
 */
function referenceXoshiro(key: bigint, count: number): number[] {
  const M32 = 0xffffffffn,
    M64 = (1n << 64n) - 1n;
  let x = key;
  const split = (): bigint => {
    x = (x + 0x9e3779b97f4a7c15n) & M64;
    let z = x;
    z = ((z ^ (z >> 30n)) * 0xbf58476d1ce4e5b9n) & M64;
    z = ((z ^ (z >> 27n)) * 0x94d049bb133111ebn) & M64;
    return z ^ (z >> 31n);
  };
  const p = split(),
    q = split();
  const s = [p & M32, p >> 32n, q & M32, q >> 32n];
  const rotl = (v: bigint, k: bigint): bigint => ((v << k) | (v >> (32n - k))) & M32;
  const outs: number[] = [];
  for (let i = 0; i < count; i++) {
    outs.push(Number((rotl((s[1] * 5n) & M32, 7n) * 9n) & M32));
    const t = (s[1] << 9n) & M32;
    s[2] ^= s[0];
    s[3] ^= s[1];
    s[1] ^= s[2];
    s[0] ^= s[3];
    s[2] ^= t;
    s[3] = rotl(s[3], 11n);
  }
  return outs;
}

function moments(draw: () => number, n: number): { mean: number; variance: number; m4: number } {
  let s1 = 0,
    s2 = 0,
    s4 = 0;
  for (let i = 0; i < n; i++) {
    const v = draw();
    s1 += v;
    s2 += v * v;
    s4 += v * v * v * v;
  }
  const mean = s1 / n;
  return { mean, variance: s2 / n - mean * mean, m4: s4 / n };
}

describe('seeded random numbers (xoshiro128**)', () => {
  it('the 32-bit integer path matches an independent BigInt transcription of the algorithm', () => {
    for (const seed of [0, 1, 42, 2 ** 53 - 1]) {
      const rng = createRng(seed);
      const ref = referenceXoshiro(BigInt(seed), 2000);
      const got = Array.from({ length: 2000 }, () => rng.nextUint32());
      expect(got).toEqual(ref);
    }
  });

  it('same seed gives the same sequence; different seeds and streams differ', () => {
    const a = createRng(7),
      b = createRng(7),
      c = createRng(8);
    const sa = Array.from({ length: 100 }, () => a.uniform());
    expect(Array.from({ length: 100 }, () => b.uniform())).toEqual(sa);
    expect(Array.from({ length: 100 }, () => c.uniform())).not.toEqual(sa);
    const f1 = createRng(7).fork(1),
      f2 = createRng(7).fork(2);
    const s1 = Array.from({ length: 100 }, () => f1.nextUint32());
    const s2 = Array.from({ length: 100 }, () => f2.nextUint32());
    expect(s1).not.toEqual(s2);
    expect(createRng(7).fork(1).fork(2).key).not.toBe(createRng(7).fork(2).fork(1).key);
  });

  it('fork depends on the key only, not on how many numbers were drawn before', () => {
    const fresh = createRng(99).fork(5);
    const used = createRng(99);
    for (let i = 0; i < 1000; i++) used.normal();
    const late = used.fork(5);
    expect(late.keyHex).toBe(fresh.keyHex);
    expect(Array.from({ length: 50 }, () => late.uniform())).toEqual(
      Array.from({ length: 50 }, () => fresh.uniform()),
    );
  });

  it('forked streams are uncorrelated: |sample correlation| < 5/sqrt(N) over 1e5 pairs', () => {
    // for independent samples the correlation estimate has standard deviation 1/sqrt(N)
    // (central limit theorem; e.g. Papoulis, Probability, Random Variables and Stochastic
    // Processes, ch. 7); 5 sigma makes a false failure ~6e-7 likely
    const n = 100_000;
    const root = createRng(3);
    for (const [i, j] of [
      [0, 1],
      [1, 2],
      [10, 11],
    ]) {
      const a = root.fork(i),
        b = root.fork(j);
      let sab = 0;
      for (let k = 0; k < n; k++) sab += (a.uniform() - 0.5) * (b.uniform() - 0.5);
      const corr = sab / n / (1 / 12);
      expect(Math.abs(corr)).toBeLessThan(5 / Math.sqrt(n));
    }
  });

  it('uniform() over 1e6 samples: in [0, 1), mean 1/2 and variance 1/12 within 5 sigma; so is uniform32()', () => {
    // uniform on [0,1): mean 1/2, variance 1/12, and the sample variance has standard deviation
    // sqrt((mu4 - sigma^4)/N) = sqrt((1/80 - 1/144)/N) = sqrt(1/(180 N)) (Papoulis, ch. 7)
    for (const which of ['uniform', 'uniform32'] as const) {
      const rng = createRng(2024);
      let lo = 1,
        hi = 0;
      const m = moments(() => {
        const v = which === 'uniform' ? rng.uniform() : rng.uniform32();
        if (v < lo) lo = v;
        if (v > hi) hi = v;
        return v;
      }, N);
      expect(lo).toBeGreaterThanOrEqual(0);
      expect(hi).toBeLessThan(1);
      expect(Math.abs(m.mean - 0.5)).toBeLessThan(5 * Math.sqrt(1 / 12 / N));
      expect(Math.abs(m.variance - 1 / 12)).toBeLessThan(5 * Math.sqrt(1 / 180 / N));
    }
  });

  it('uniform() carries 53 bits: every value is an integer multiple of 2^-53 and low bits vary', () => {
    const rng = createRng(5);
    let oddSeen = false;
    for (let i = 0; i < 1000; i++) {
      const k = rng.uniform() * 2 ** 53;
      expect(Number.isInteger(k)).toBe(true);
      if (k % 2 === 1) oddSeen = true;
    }
    expect(oddSeen).toBe(true);
  });

  it('normal() over 1e6 samples: mean 0, variance 1, fourth moment 3 within 5 sigma', () => {
    // standard normal: sd of the mean 1/sqrt(N), of the sample variance sqrt(2/N), of the
    // fourth-moment estimate sqrt((105 - 9)/N) (moments of the normal distribution,
    // Abramowitz & Stegun 26.2.11; Papoulis, ch. 7)
    const rng = createRng(11);
    const m = moments(() => rng.normal(), N);
    expect(Math.abs(m.mean)).toBeLessThan(5 / Math.sqrt(N));
    expect(Math.abs(m.variance - 1)).toBeLessThan(5 * Math.sqrt(2 / N));
    expect(Math.abs(m.m4 - 3)).toBeLessThan(5 * Math.sqrt(96 / N));
  });

  it('complexGaussian(v): <|z|^2> = v, <z> = 0 and <z^2> = 0 (circular) within 5 sigma', () => {
    // |z|^2 of a circular complex Gaussian is exponential with mean v and sd v, so the mean
    // of N draws has sd v/sqrt(N); Re z and Im z have sd sqrt(v/2) (Papoulis, ch. 7);
    // <z^2> = <Re^2 - Im^2> + 2i <Re Im> has components of sd v/sqrt(2N), v/sqrt(2N)
    const rng = createRng(12);
    const v = 3.7e-3;
    const out = new Float64Array(2);
    let s2 = 0,
      sr = 0,
      si = 0,
      qr = 0,
      qi = 0;
    for (let i = 0; i < N; i++) {
      rng.complexGaussian(v, out);
      s2 += out[0] * out[0] + out[1] * out[1];
      sr += out[0];
      si += out[1];
      qr += out[0] * out[0] - out[1] * out[1];
      qi += 2 * out[0] * out[1];
    }
    expect(Math.abs(s2 / N - v)).toBeLessThan((5 * v) / Math.sqrt(N));
    expect(Math.abs(sr / N)).toBeLessThan(5 * Math.sqrt(v / 2 / N));
    expect(Math.abs(si / N)).toBeLessThan(5 * Math.sqrt(v / 2 / N));
    expect(Math.abs(qr / N)).toBeLessThan((5 * v) / Math.sqrt(2 * N));
    expect(Math.abs(qi / N)).toBeLessThan((5 * v) / Math.sqrt(2 * N));
    rng.complexGaussian(0, out, 0);
    expect(Math.abs(out[0]) + Math.abs(out[1])).toBe(0); // zero variance gives z = 0 (signed zeros allowed)
  });

  it('rejects negative or non-integer seeds and stream ids', () => {
    expect(() => new Rng(-1)).toThrow(RangeError);
    expect(() => new Rng(1.5)).toThrow(/non-negative safe integer/);
    expect(() => createRng(1).fork(-3)).toThrow(/stream id/);
    expect(createRng(1n).keyHex).toBe('0000000000000001');
  });
});
