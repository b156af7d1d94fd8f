/**
 * Paired randomization (sign-flip) test of the mean difference, two-sided (Fisher 1935; common practice
 * for comparing retrieval runs). Under the null hypothesis each difference is equally likely to have
 * either sign, so the observed sum S = Σ d_i is compared with S* = Σ ±d_i over random sign patterns.
 *
 * - When 2^n ≤ permutations, every sign pattern is enumerated and p = #{|S*| ≥ |S|} / 2^n (exact; the
 *   identity pattern is one of them).
 * - Otherwise `permutations` random patterns are drawn and p = (1 + #{|S*| ≥ |S|}) / (1 + permutations)
 *   (Phipson & Smyth 2010: counting the observed pattern keeps p > 0 and the test valid).
 * "≥" allows a tolerance of 1e-12·Σ|d_i|, so sums equal in exact arithmetic but different in the last
 * bits (additions in another order) count as equal.
 *
 * Speed: flipping a set F of signs gives S* = S − 2·Σ_{i∈F} d_i. The differences are cut into blocks of
 * 8 (or 4) and every block's 256 (16) subset sums are tabulated once, so one random pattern costs one
 * table look-up per block, fed by 32 random bits per 4 (8) blocks.
 */
import { Pacer, type LoopControl } from './pacer';
import { Xoshiro128 } from './random';

export interface SignFlipOptions extends LoopControl {
  readonly permutations: number;
  readonly seed: number;
}

export interface SignFlipResult {
  readonly p: number;
  readonly method: 'exact' | 'monte-carlo' | 'none';
  /** Sign patterns evaluated (2^n when exact). */
  readonly patterns: number;
  /** Patterns at least as extreme as the observed one. */
  readonly asExtreme: number;
}

/** Upper bound of the look-up tables, so 1M+ differences stay within a few tens of MB. */
const MAX_TABLE_BYTES = 64 * 1024 * 1024;
/** Patterns between two pacer checks. */
const CHECK_EVERY = 256;

export async function signFlipTest(differences: Float64Array, options: SignFlipOptions): Promise<SignFlipResult> {
  const n = differences.length;
  if (n === 0) return { p: Number.NaN, method: 'none', patterns: 0, asExtreme: 0 };
  let observed = 0;
  let absoluteTotal = 0;
  for (let i = 0; i < n; i++) {
    observed += differences[i]!;
    absoluteTotal += Math.abs(differences[i]!);
  }
  const threshold = Math.abs(observed) - 1e-12 * absoluteTotal;
  const pacer = new Pacer(options, options.permutations);

  if (n < 31 && 2 ** n <= options.permutations) {
    const patterns = 2 ** n;
    let asExtreme = 0;
    for (let mask = 0; mask < patterns; mask++) {
      let flipped = 0;
      for (let i = 0; i < n; i++) if ((mask >>> i) & 1) flipped += differences[i]!;
      if (Math.abs(observed - 2 * flipped) >= threshold) asExtreme++;
      if ((mask & (CHECK_EVERY - 1)) === 0) await pacer.tick(mask);
    }
    pacer.finish();
    return { p: asExtreme / patterns, method: 'exact', patterns, asExtreme };
  }

  const blockBits = n * 32 * Float64Array.BYTES_PER_ELEMENT <= MAX_TABLE_BYTES ? 8 : 4;
  const table = subsetSumTable(differences, blockBits);
  const blocks = Math.ceil(n / blockBits);
  const rng = new Xoshiro128(options.seed);
  let asExtreme = 0;
  for (let done = 0; done < options.permutations; ) {
    const end = Math.min(options.permutations, done + CHECK_EVERY);
    for (; done < end; done++) {
      const flipped = blockBits === 8 ? randomSubsetSum8(table, blocks, rng) : randomSubsetSum4(table, blocks, rng);
      if (Math.abs(observed - 2 * flipped) >= threshold) asExtreme++;
    }
    await pacer.tick(done);
  }
  pacer.finish();
  const patterns = options.permutations;
  return { p: (1 + asExtreme) / (1 + patterns), method: 'monte-carlo', patterns, asExtreme };
}

/** table[block·2^bits + mask] = Σ of the block's differences whose bit is set in mask (zero-padded). */
function subsetSumTable(differences: Float64Array, bits: number): Float64Array {
  const size = 1 << bits;
  const blocks = Math.ceil(differences.length / bits);
  const table = new Float64Array(blocks * size);
  for (let block = 0; block < blocks; block++) {
    const base = block * size;
    for (let mask = 1; mask < size; mask++) {
      const lowest = 31 - Math.clz32(mask & -mask);
      const index = block * bits + lowest;
      table[base + mask] = table[base + (mask & (mask - 1))]! + (index < differences.length ? differences[index]! : 0);
    }
  }
  return table;
}

function randomSubsetSum8(table: Float64Array, blocks: number, rng: Xoshiro128): number {
  let sum = 0;
  let block = 0;
  const whole = blocks - (blocks & 3);
  for (; block < whole; block += 4) {
    const r = rng.nextInt32();
    const base = block << 8;
    sum +=
      table[base + (r & 255)]! +
      table[base + 256 + ((r >>> 8) & 255)]! +
      table[base + 512 + ((r >>> 16) & 255)]! +
      table[base + 768 + (r >>> 24)]!;
  }
  if (block < blocks) {
    let r = rng.nextInt32();
    for (; block < blocks; block++, r >>>= 8) sum += table[(block << 8) + (r & 255)]!;
  }
  return sum;
}

function randomSubsetSum4(table: Float64Array, blocks: number, rng: Xoshiro128): number {
  let sum = 0;
  for (let block = 0; block < blocks; block += 8) {
    let r = rng.nextInt32();
    const last = Math.min(blocks, block + 8);
    for (let b = block; b < last; b++, r >>>= 4) sum += table[(b << 4) + (r & 15)]!;
  }
  return sum;
}
