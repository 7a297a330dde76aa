/**
 * Seeded, reproducible pseudo-random numbers: xoshiro128** on 32-bit integer arithmetic,
 * uniform doubles, standard normal and complex Gaussian variates, and deterministic
 * independent streams (fork).
 *
 * References:
 * - D. Blackman, S. Vigna, "Scrambled linear pseudorandom number generators", ACM Trans.
 *   Math. Softw. 47(4), 36 (2021), arXiv:1805.01407 (2018): xoshiro128** (state 4 x 32
 *   bits, period 2^128 - 1), seeding its state from SplitMix64 as the authors recommend.
 * - G. L. Steele, D. Lea, C. H. Flood, "Fast splittable pseudorandom number generators",
 *   OOPSLA 2014: SplitMix64 (used for seeding and to derive stream keys only).
 * - G. Marsaglia, T. A. Bray, "A convenient method for generating normal variables",
 *   SIAM Review 6, 260 (1964): the polar method, which yields normals in pairs.
 */

const MASK64 = (1n << 64n) - 1n;
const GOLDEN64 = 0x9e3779b97f4a7c15n;

/** SplitMix64 output function (Steele, Lea & Flood 2014) applied to a 64-bit value. */
function mix64(z: bigint): bigint {
  z = ((z ^ (z >> 30n)) * 0xbf58476d1ce4e5b9n) & MASK64;
  z = ((z ^ (z >> 27n)) * 0x94d049bb133111ebn) & MASK64;
  return z ^ (z >> 31n);
}

function toKey(seed: number | bigint, what: string): bigint {
  if (typeof seed === 'bigint') {
    if (seed < 0n) throw new RangeError(`${what} must be a non-negative integer, got ${seed}`);
    return seed & MASK64;
  }
  if (!Number.isSafeInteger(seed) || seed < 0) {
    throw new RangeError(`${what} must be a non-negative safe integer, got ${seed}`);
  }
  return BigInt(seed);
}

const TWO_POW_M32 = 1 / 4294967296;
const TWO_POW_M53 = 1 / 9007199254740992;

/**
 * A xoshiro128** generator with its stream key. Same key, same sequence, on every
 * platform (only 32-bit integer operations: Math.imul, shifts, xor). Not for
 * cryptography. Drawing allocates nothing.
 */
export class Rng {
  /** 64-bit key this generator was seeded from (seed, or derived by fork) */
  readonly key: bigint;
  private s0 = 0;
  private s1 = 0;
  private s2 = 0;
  private s3 = 0;
  private hasSpare = false;
  private spare = 0;

  /** seed: non-negative integer (number up to 2^53 - 1, or bigint, taken mod 2^64). */
  constructor(seed: number | bigint) {
    this.key = toKey(seed, 'Rng seed');
    // state words from two SplitMix64 outputs of the key (Blackman & Vigna's advice)
    let x = this.key;
    x = (x + GOLDEN64) & MASK64;
    const p = mix64(x);
    x = (x + GOLDEN64) & MASK64;
    const q = mix64(x);
    this.s0 = Number(p & 0xffffffffn) | 0;
    this.s1 = Number(p >> 32n) | 0;
    this.s2 = Number(q & 0xffffffffn) | 0;
    this.s3 = Number(q >> 32n) | 0;
    // the all-zero state is the one fixed point; SplitMix64 is a bijection so this needs
    // p = q = 0, which does not happen for consecutive inputs, but guard anyway
    if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) this.s0 = 1;
  }

  /** The key as 16 hex digits, for result provenance (JSON has no bigint). */
  get keyHex(): string {
    return this.key.toString(16).padStart(16, '0');
  }

  /**
   * A new generator for stream streamId, derived deterministically from this generator's
   * key only (not its current position): key' = mix64(key + GOLDEN (streamId + 1)) with
   * the SplitMix64 mixer. Different ids give unrelated 64-bit keys, hence statistically
   * independent streams (overlap of 2^128-periodic streams is negligible); forks nest
   * (fork(a).fork(b)). streamId: non-negative integer, e.g. a sweep-point index.
   */
  fork(streamId: number | bigint): Rng {
    const id = toKey(streamId, 'Rng stream id');
    return new Rng(mix64((this.key + GOLDEN64 * (id + 1n)) & MASK64));
  }

  /** Next 32-bit output of xoshiro128** as an unsigned integer in [0, 2^32). */
  nextUint32(): number {
    const s1 = this.s1;
    // result = rotl(s1 * 5, 7) * 9
    const m = Math.imul(s1, 5);
    const result = Math.imul((m << 7) | (m >>> 25), 9);
    const t = s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= s1;
    this.s1 = s1 ^ this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = (this.s3 << 11) | (this.s3 >>> 21);
    return result >>> 0;
  }

  /**
   * Uniform double in [0, 1) with 53 random bits (two 32-bit outputs: the top 27 and 26
   * bits), resolution 2^-53; every value is k 2^-53 with k an integer.
   */
  uniform(): number {
    const a = this.nextUint32() >>> 5;
    const b = this.nextUint32() >>> 6;
    return (a * 67108864 + b) * TWO_POW_M53;
  }

  /** Uniform double in [0, 1) with 32 random bits (one output), resolution 2^-32; faster. */
  uniform32(): number {
    return this.nextUint32() * TWO_POW_M32;
  }

  /**
   * Standard normal variate (mean 0, variance 1) by Marsaglia's polar method: draw
   * (v1, v2) uniform in the unit disc, s = v1^2 + v2^2, return v1 sqrt(-2 ln s / s) and keep
   * v2 sqrt(-2 ln s / s) for the next call (Marsaglia & Bray 1964).
   */
  normal(): number {
    if (this.hasSpare) {
      this.hasSpare = false;
      return this.spare;
    }
    let v1: number, v2: number, s: number;
    do {
      v1 = 2 * this.uniform() - 1;
      v2 = 2 * this.uniform() - 1;
      s = v1 * v1 + v2 * v2;
    } while (s >= 1 || s === 0);
    const k = Math.sqrt((-2 * Math.log(s)) / s);
    this.spare = v2 * k;
    this.hasSpare = true;
    return v1 * k;
  }

  /**
   * Circular complex Gaussian z with E[z] = 0 and E[|z|^2] = variance (real and imaginary
   * parts independent, each of variance variance/2): the increment of a complex Wiener
   * process over dt has variance = D dt. Writes out[offset] = Re z, out[offset + 1] = Im z;
   * returns out. variance in the squared unit of z (>= 0).
   */
  complexGaussian(variance: number, out: Float64Array, offset = 0): Float64Array {
    const sigma = Math.sqrt(0.5 * variance);
    out[offset] = sigma * this.normal();
    out[offset + 1] = sigma * this.normal();
    return out;
  }
}

/** A generator seeded with seed (non-negative integer); same as new Rng(seed). */
export function createRng(seed: number | bigint): Rng {
  return new Rng(seed);
}
