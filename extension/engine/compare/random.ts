/**
 * A small, fast, seeded pseudo-random generator for the resampling tests.
 *
 * xoshiro128** (Blackman & Vigna, "Scrambled linear pseudorandom number generators", 2021) uses only
 * 32-bit operations, so in JavaScript it runs on int32 arithmetic without BigInt. Every call yields
 * 32 random bits; the sign-flip test consumes them 8 (or 4) at a time. The state is seeded through
 * splitmix32 so that nearby seeds (1, 2, 3) give unrelated streams.
 */
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
