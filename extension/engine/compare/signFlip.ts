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
 * Speed: flipping a set F of signs gives S* = S − 2·Σ_{i∈F} d_i. The differences are cut into blocks of 8;
 * each block's 256 subset sums are tabulated (2 KB, stays in L1 cache) just before use, and the loop runs
 * over all patterns for four blocks at a time, so one random 32-bit word serves four blocks of one pattern
 * and one pattern costs one table look-up per 8 differences. Pattern p's flipped sum accumulates in
 * flipped[p]. Bits are consumed block group by block group: word (g, p) is drawn before (g, p + 1) and
 * all words of group g come before group g + 1; bit j of word (g, p) flips difference 32g + j.
 * The words come from the metric's own stream, `metricStream('sign-flip', seed, key)`, so the p-value
 * of one metric does not depend on which other metrics are tested beside it.
 */
import { Pacer, type LoopControl } from './pacer';
import { metricStream } from './random';

export interface SignFlipOptions extends LoopControl {
  readonly permutations: number;
  readonly seed: number;
  /** Key of the metric tested (e.g. "ndcg@10"): with the seed, it fixes the random stream. */
  readonly key: string;
}

export const SIGN_FLIP_STREAM = 'sign-flip';

export interface SignFlipResult {
  readonly p: number;
  readonly method: 'exact' | 'monte-carlo' | 'none';
  /** Sign patterns evaluated (2^n when exact). */
  readonly patterns: number;
  /** Patterns at least as extreme as the observed one. */
  readonly asExtreme: number;
}

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

  const rng = metricStream(SIGN_FLIP_STREAM, options.seed, options.key);
  const permutations = options.permutations;
  const flipped = new Float64Array(permutations);
  const tables = new Float64Array(4 * 256);
  const groups = Math.ceil(n / 32);
  for (let group = 0; group < groups; group++) {
    fillSubsetSums(tables, differences, group * 32);
    for (let p = 0; p < permutations; p++) {
      const r = rng.nextInt32();
      flipped[p]! += tables[r & 255]! + tables[256 + ((r >>> 8) & 255)]! + tables[512 + ((r >>> 16) & 255)]! + tables[768 + (r >>> 24)]!;
    }
    if ((group & 7) === 7) await pacer.tick(Math.floor(((group + 1) / groups) * permutations));
  }
  let asExtreme = 0;
  for (let p = 0; p < permutations; p++) if (Math.abs(observed - 2 * flipped[p]!) >= threshold) asExtreme++;
  pacer.finish();
  return { p: (1 + asExtreme) / (1 + permutations), method: 'monte-carlo', patterns: permutations, asExtreme };
}

/**
 * tables[256·b + mask] = Σ of d[start + 8b + j] over the bits j set in mask, for the four blocks b of the
 * group starting at `start` (differences past the end count as 0).
 */
function fillSubsetSums(tables: Float64Array, differences: Float64Array, start: number): void {
  for (let b = 0; b < 4; b++) {
    const base = b * 256;
    tables[base] = 0;
    for (let mask = 1; mask < 256; mask++) {
      const lowest = 31 - Math.clz32(mask & -mask);
      const index = start + b * 8 + lowest;
      tables[base + mask] = tables[base + (mask & (mask - 1))]! + (index < differences.length ? differences[index]! : 0);
    }
  }
}
