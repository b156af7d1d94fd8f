/**
 * A small, fast, seeded pseudo-random generator for the resampling tests.
 *
 * xoshiro128** (Blackman & Vigna, "Scrambled linear pseudorandom number generators", 2021) uses only
 * 32-bit operations, so in JavaScript it runs on int32 arithmetic without BigInt. Every call yields
 * 32 random bits; the sign-flip test consumes them 8 (or 4) at a time. A plain numeric seed goes through
 * splitmix32 so that nearby seeds (1, 2, 3) give unrelated streams; the resampling procedures instead take
 * their streams from `metricStream`.
 */
import { createHash } from 'node:crypto';

/**
 * The generator a resampling procedure uses: its 128-bit state is the first 16 bytes of SHA-256 over the
 * UTF-8 text `<procedure>\n<seed>\n<key>` (read as four little-endian 32-bit words).
 * - The sign-flip test passes the metric key, so each metric draws from its own stream, fixed by the
 *   seed and its key alone: its p-value is the same whichever other metrics are compared beside it and
 *   in whatever order.
 * - The bootstrap passes an empty key: it draws the same resampled queries for every metric (one draw
 *   feeds every metric), so a metric's interval depends on the seed, the number of paired queries and
 *   its own differences only, again not on the other metrics.
 * The procedure name keeps the two procedures' streams apart. SHA-256 (FIPS 180-4) is used as a
 * well-mixed hash, not for secrecy; every safe-integer seed gives its own text, so seeds above 2^32 do
 * not wrap onto smaller ones.
 */
export function metricStream(procedure: string, seed: number, key: string): Xoshiro128 {
  const digest = createHash('sha256').update(`${procedure}\n${seed}\n${key}`, 'utf8').digest();
  return Xoshiro128.fromState(digest.readInt32LE(0), digest.readInt32LE(4), digest.readInt32LE(8), digest.readInt32LE(12));
}

export class Xoshiro128 {
  private s0: number;
  private s1: number;
  private s2: number;
  private s3: number;

  constructor(seed: number) {
    let x = seed >>> 0;
    const next = (): number => {
      // splitmix32 step (common practice for seeding xoshiro-family generators)
      x = (x + 0x9e3779b9) | 0;
      let z = x;
      z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
      z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
      return (z ^ (z >>> 16)) | 0;
    };
    this.s0 = next();
    this.s1 = next();
    this.s2 = next();
    this.s3 = next();
    if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) this.s0 = 1; // the all-zero state is a fixed point
  }

  /** A generator started from the given 128-bit state (int32 words); the all-zero state is replaced. */
  static fromState(s0: number, s1: number, s2: number, s3: number): Xoshiro128 {
    const rng = new Xoshiro128(0);
    rng.s0 = s0 | 0;
    rng.s1 = s1 | 0;
    rng.s2 = s2 | 0;
    rng.s3 = s3 | 0;
    if ((rng.s0 | rng.s1 | rng.s2 | rng.s3) === 0) rng.s0 = 1;
    return rng;
  }

  /**
   * Adds one to `counts[i]` (doubles, so the weighted sums that follow need no int-to-float conversion) for `draws` uniform indices i in [0, counts.length): one bootstrap resample
   * as multiplicities. Same stream as calling `below` repeatedly; the generator step is written out with
   * the state in locals because this loop runs a billion times in a large comparison.
   */
  countDraws(counts: Float64Array, draws: number): void {
    const scale = counts.length * TWO_TO_MINUS_32;
    let s0 = this.s0;
    let s1 = this.s1;
    let s2 = this.s2;
    let s3 = this.s3;
    for (let k = 0; k < draws; k++) {
      const m = Math.imul(s1, 5);
      const result = Math.imul((m << 7) | (m >>> 25), 9);
      const t = s1 << 9;
      s2 ^= s0;
      s3 ^= s1;
      s1 ^= s2;
      s0 ^= s3;
      s2 ^= t;
      s3 = (s3 << 11) | (s3 >>> 21);
      counts[Math.floor((result >>> 0) * scale)]! += 1;
    }
    this.s0 = s0;
    this.s1 = s1;
    this.s2 = s2;
    this.s3 = s3;
  }

  /** 32 random bits as a signed int32 (use `>>> 0` for unsigned). */
  nextInt32(): number {
    const s0 = this.s0;
    const s1 = this.s1;
    const s2 = this.s2;
    const s3 = this.s3;
    const result = Math.imul(rotl(Math.imul(s1, 5), 7), 9);
    const t = s1 << 9;
    let n2 = s2 ^ s0;
    let n3 = s3 ^ s1;
    const n1 = s1 ^ n2;
    const n0 = s0 ^ n3;
    n2 ^= t;
    n3 = rotl(n3, 11);
    this.s0 = n0;
    this.s1 = n1;
    this.s2 = n2;
    this.s3 = n3;
    return result;
  }

  /** A uniform integer in [0, n), n ≤ 2^32 (bias below n / 2^32, negligible for our sizes). */
  below(n: number): number {
    return Math.floor((this.nextInt32() >>> 0) * TWO_TO_MINUS_32 * n);
  }
}

const TWO_TO_MINUS_32 = 1 / 4294967296;

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}
