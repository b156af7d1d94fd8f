/**
 * Paired statistics checked against scipy 1.10 (Debian's python3-scipy through test/reference/python.mjs), against
 * worked examples from the papers that define the procedures, and against slow obvious implementations.
 */
import { describe, expect, it } from 'vitest';
import { CancelledError } from '../../extension/engine/errors';
import { metricStream, Xoshiro128 } from '../../extension/engine/compare/random';
import { SIGN_FLIP_STREAM } from '../../extension/engine/compare/signFlip';
import {
  benjaminiHochbergAdjust,
  bootstrapMeanIntervals,
  holmAdjust,
  pairedSummary,
  pairedTTest,
  quantileSorted,
  signFlipTest,
  wilcoxonSignedRank,
} from '../../extension/engine/compare/stats';
import { scipyReference, type ScipyCase } from '../reference/stats_reference';

/** Seeded pairs on a grid of quarters: differences are exact in binary, so ties and zeros are real. */
function gridPairs(rng: Xoshiro128, n: number, levels: number): { a: number[]; b: number[] } {
  const a: number[] = [];
  const b: number[] = [];
  for (let i = 0; i < n; i++) {
    a.push(rng.below(levels) / 4);
    b.push(rng.below(levels) / 4 + (rng.below(3) === 0 ? 0.25 : 0));
  }
  return { a, b };
}

function continuousPairs(rng: Xoshiro128, n: number): { a: number[]; b: number[] } {
  const a: number[] = [];
  const b: number[] = [];
  for (let i = 0; i < n; i++) {
    const base = (rng.nextInt32() >>> 0) / 2 ** 32;
    a.push(base);
    b.push(base + ((rng.nextInt32() >>> 0) / 2 ** 32 - 0.4) * 0.3);
  }
  return { a, b };
}

/** p-values agree with scipy 1.10 (ttest_rel, wilcoxon) to 1e-12 relative. */
function expectCloseP(actual: number, expected: number): void {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(1e-12 * expected);
}

const diff = (a: readonly number[], b: readonly number[]): Float64Array => Float64Array.from(b, (x, i) => x - a[i]!);

describe('Wilcoxon signed-rank', () => {
  // scipy 1.10.1, scipy/stats/_morestats.py, docstring of `wilcoxon` (corn plant height differences):
  //   >>> res = wilcoxon(d)                  -> (24.0, 0.041259765625)
  //   >>> res = wilcoxon(d, method='approx') -> (24.0, 0.04088813291185591)
  const corn = [6, 8, 14, 16, 23, 24, 28, 29, 41, -48, 49, 56, 60, -67, 75];

  it('reproduces the documented example, exact and approximate', () => {
    const exact = wilcoxonSignedRank(corn);
    expect(exact.method).toBe('exact');
    expect(exact.statistic).toBe(24);
    expect(exact.p).toBeCloseTo(0.041259765625, 14);
    const normal = wilcoxonSignedRank(corn, 'normal');
    expect(normal.statistic).toBe(24);
    expect(normal.p).toBeCloseTo(0.04088813291185591, 12);
  });

  it('rounds differences before ranking, so float noise neither creates zeros nor splits ties', () => {
    const clean = [0.1, 0.1, -0.2, 0, 0.3, 0.3, -0.1];
    const noisy = [0.3 - 0.2, 0.7 - 0.6, -0.2, 0.3 - 0.1 - 0.2, 0.1 + 0.2, 0.3, -(0.4 - 0.3)];
    expect(noisy[3]).not.toBe(0); // the noise is real
    const a = wilcoxonSignedRank(clean);
    const b = wilcoxonSignedRank(noisy);
    expect(b.zeros).toBe(1);
    expect(b.statistic).toBe(a.statistic);
    expect(b.p).toBe(a.p);
  });

  it('handles degenerate inputs', () => {
    expect(wilcoxonSignedRank([]).p).toBeNaN();
    expect(wilcoxonSignedRank([0, 0, 0]).p).toBe(1);
  });
});

describe('paired tests against scipy', () => {
  const rng = new Xoshiro128(20260512);
  const cases: ScipyCase[] = [];
  const expectedMethod: string[] = [];
  // Small continuous samples: no ties, no zeros -> exact Wilcoxon (scipy method='auto'), exact sign-flip.
  for (const n of [5, 8, 11, 13, 20, 35, 50]) {
    cases.push({ ...continuousPairs(rng, n), wilcoxon_method: 'auto', exact_permutation: n <= 13 });
    expectedMethod.push('exact');
  }
  // Many ties and zeros (and large continuous samples) -> normal approximation with tie correction.
  for (const [n, levels] of [[9, 3], [12, 5], [30, 4], [60, 6], [200, 5], [1000, 9], [400, 2]] as const) {
    cases.push({ ...gridPairs(rng, n, levels), wilcoxon_method: 'approx', exact_permutation: n <= 13 });
    expectedMethod.push('normal');
  }
  cases.push({ ...continuousPairs(rng, 300), wilcoxon_method: 'auto', bootstrap: 20_000 });
  expectedMethod.push('normal');
  const reference = scipyReference(cases);

  it.each(cases.map((c, i) => [i, c.a.length] as const))('case %i (n = %i): t-test and Wilcoxon', (i) => {
    const c = cases[i]!;
    const ref = reference[i]!;
    const d = diff(c.a, c.b);
    const t = pairedTTest(d);
    expect(t.t).toBeCloseTo(ref.t!, 9);
    expectCloseP(t.p, ref.t_p!);
    const w = wilcoxonSignedRank(d);
    expect(w.method).toBe(expectedMethod[i]);
    expect(w.statistic).toBe(ref.w_stat);
    expectCloseP(w.p, ref.w_p!);
  });

  it.each(cases.flatMap((c, i) => (c.exact_permutation ? [[i, c.a.length] as const] : [])))(
    'case %i (n = %i): exact sign-flip enumeration equals scipy permutation_test',
    async (i) => {
      const c = cases[i]!;
      const result = await signFlipTest(diff(c.a, c.b), { permutations: 10_000, seed: 1, key: 'ndcg@10' });
      expect(result.method).toBe('exact');
      expect(result.p).toBeCloseTo(reference[i]!.perm_p!, 12);
    },
  );

  it('percentile bootstrap interval agrees with scipy.stats.bootstrap up to resampling noise', async () => {
    const i = cases.findIndex((c) => c.bootstrap);
    const c = cases[i]!;
    const ref = reference[i]!;
    const [ours] = await bootstrapMeanIntervals([diff(c.a, c.b)], { resamples: 20_000, seed: 9 });
    // Different generators: the endpoints differ by Monte Carlo noise only, about 1% of the width
    // at 20,000 resamples; allow 4%.
    const width = ref.boot_high! - ref.boot_low!;
    expect(Math.abs(ours!.low - ref.boot_low!)).toBeLessThan(0.04 * width);
    expect(Math.abs(ours!.high - ref.boot_high!)).toBeLessThan(0.04 * width);
  });
});

describe('sign-flip randomization test', () => {
  /**
   * Obviously-correct version of the documented bit order: word (g, p) is the (g·N + p)-th draw, and bit j
   * of it flips difference 32g + j in pattern p.
   */
  function slowSignFlip(d: Float64Array, permutations: number, seed: number, key: string): number {
    const rng = metricStream(SIGN_FLIP_STREAM, seed, key);
    const groups = Math.ceil(d.length / 32);
    const words: number[][] = [];
    for (let g = 0; g < groups; g++) words.push(Array.from({ length: permutations }, () => rng.nextInt32()));
    const observed = d.reduce((s, x) => s + x, 0);
    const tolerance = 1e-12 * d.reduce((s, x) => s + Math.abs(x), 0);
    let asExtreme = 0;
    for (let p = 0; p < permutations; p++) {
      let sum = 0;
      for (let i = 0; i < d.length; i++) sum += (words[i >> 5]![p]! >>> (i & 31)) & 1 ? -d[i]! : d[i]!;
      if (Math.abs(sum) >= Math.abs(observed) - tolerance) asExtreme++;
    }
    return asExtreme;
  }

  it.each([
    [37, 400],
    [1000, 300],
    [100_003, 12],
  ])('blocked table look-ups agree with the slow version (n = %i)', async (n, permutations) => {
    const rng = new Xoshiro128(n);
    // Differences on a coarse grid, so many patterns land exactly on |S|; a weak effect for the small
    // samples, none for the large one (any effect there would leave no pattern as extreme).
    const lift = n < 10_000 ? 1 : 0;
    const d = Float64Array.from({ length: n }, () => (rng.below(7) - 3 + (rng.below(5) === 0 ? lift : 0)) / 10);
    const fast = await signFlipTest(d, { permutations, seed: 99, key: 'ap' });
    expect(fast.method).toBe('monte-carlo');
    expect(fast.asExtreme).toBe(slowSignFlip(d, permutations, 99, 'ap'));
    expect(fast.asExtreme).toBeGreaterThan(0);
    expect(fast.p).toBe((1 + fast.asExtreme) / (1 + permutations));
  });

  it('Monte Carlo p is close to the exact p', async () => {
    const rng = new Xoshiro128(5);
    const d = Float64Array.from({ length: 16 }, () => (rng.nextInt32() >>> 0) / 2 ** 32 - 0.35);
    const exact = await signFlipTest(d, { permutations: 2 ** 16, seed: 3, key: 'rr' });
    const sampled = await signFlipTest(d, { permutations: 20_000, seed: 3, key: 'rr' });
    expect(exact.method).toBe('exact');
    expect(sampled.method).toBe('monte-carlo');
    const se = Math.sqrt((exact.p * (1 - exact.p)) / 20_000);
    expect(Math.abs(sampled.p - exact.p)).toBeLessThan(5 * se + 1e-4);
  });

  it('is deterministic for a seed and metric key, and differs across seeds and across keys', async () => {
    const rng = new Xoshiro128(8);
    const d = Float64Array.from({ length: 500 }, () => (rng.below(11) - 5) / 50 + 0.003);
    const one = await signFlipTest(d, { permutations: 3000, seed: 11, key: 'ndcg@10' });
    const again = await signFlipTest(d, { permutations: 3000, seed: 11, key: 'ndcg@10' });
    const otherSeed = await signFlipTest(d, { permutations: 3000, seed: 12, key: 'ndcg@10' });
    const otherKey = await signFlipTest(d, { permutations: 3000, seed: 11, key: 'ndcg@5' });
    // Seeds 1 and 2^32 + 1 are different seeds (a 32-bit seed would wrap them onto one stream).
    const wrapped = await signFlipTest(d, { permutations: 3000, seed: 2 ** 32 + 11, key: 'ndcg@10' });
    expect(again.asExtreme).toBe(one.asExtreme);
    expect(otherSeed.asExtreme).not.toBe(one.asExtreme);
    expect(otherKey.asExtreme).not.toBe(one.asExtreme);
    expect(wrapped.asExtreme).not.toBe(one.asExtreme);
  });

  it('reports progress and stops on cancellation', async () => {
    const d = new Float64Array(200_000).fill(0.01);
    const seen: number[] = [];
    const controller = new AbortController();
    const run = signFlipTest(d, {
      permutations: 1_000_000,
      seed: 1,
      key: 'ap',
      signal: controller.signal,
      onProgress: (done) => {
        seen.push(done);
        controller.abort();
      },
    });
    await expect(run).rejects.toBeInstanceOf(CancelledError);
    expect(seen.length).toBe(1);
    expect(seen[0]!).toBeLessThan(1_000_000);
  });
});

describe('bootstrap interval', () => {
  it('type-7 quantiles (hand-derived: position (n − 1)q, linear between neighbours)', () => {
    expect(quantileSorted([1, 2, 3, 4], 0.25)).toBeCloseTo(1.75, 15);
    expect(quantileSorted([1, 2, 3, 4], 0.5)).toBeCloseTo(2.5, 15);
    expect(quantileSorted([10], 0.975)).toBe(10);
  });

  it('collapses on a constant difference and brackets the mean like the normal interval on a large sample', async () => {
    const [constant] = await bootstrapMeanIntervals([new Float64Array(50).fill(0.125)], { resamples: 500, seed: 1 });
    expect(constant).toEqual({ low: 0.125, high: 0.125 });
    const rng = new Xoshiro128(77);
    const d = Float64Array.from({ length: 4000 }, () => (rng.nextInt32() >>> 0) / 2 ** 32 - 0.45);
    const mean = d.reduce((s, x) => s + x, 0) / d.length;
    const sd = Math.sqrt(d.reduce((s, x) => s + (x - mean) ** 2, 0) / (d.length - 1));
    const half = (1.959964 * sd) / Math.sqrt(d.length); // large-sample normal interval (common practice)
    const [interval] = await bootstrapMeanIntervals([d, d.map((x) => 2 * x)], { resamples: 4000, seed: 2 });
    expect(interval!.low).toBeGreaterThan(mean - half * 1.1);
    expect(interval!.low).toBeLessThan(mean - half * 0.9);
    expect(interval!.high).toBeGreaterThan(mean + half * 0.9);
    expect(interval!.high).toBeLessThan(mean + half * 1.1);
  });

  it('sums mostly-zero columns over their non-zero rows without changing the result', async () => {
    const rng = new Xoshiro128(21);
    const dense = Float64Array.from({ length: 2000 }, () => rng.below(100) / 100 - 0.45);
    const mostlyZero = dense.map((x, i) => (i % 4 === 0 ? x : 0)); // 25% non-zero: summed sparsely
    const [, sparse] = await bootstrapMeanIntervals([dense, mostlyZero], { resamples: 300, seed: 6 });
    // Reference: the same column made dense by a tiny offset that is removed afterwards.
    const offset = 1e-3;
    const [, shifted] = await bootstrapMeanIntervals([dense, mostlyZero.map((x) => x + offset)], { resamples: 300, seed: 6 });
    expect(sparse!.low).toBeCloseTo(shifted!.low - offset, 12);
    expect(sparse!.high).toBeCloseTo(shifted!.high - offset, 12);
  });

  it('resamples columns with the same drawn queries', async () => {
    const rng = new Xoshiro128(3);
    const d = Float64Array.from({ length: 300 }, () => rng.below(100) / 100);
    const [one, twice] = await bootstrapMeanIntervals([d, d.map((x) => 2 * x)], { resamples: 999, seed: 4 });
    expect(twice!.low).toBeCloseTo(2 * one!.low, 12);
    expect(twice!.high).toBeCloseTo(2 * one!.high, 12);
  });
});

describe('summary, wins and effect size', () => {
  it('counts wins, ties and losses with the tolerance (hand-derived)', () => {
    const a = [0.5, 0.5, 0.5, 0.5, 0.5];
    const b = [0.6, 0.5005, 0.4995, 0.3, 0.5];
    const s = pairedSummary(a, b, 0.001);
    expect([s.wins, s.ties, s.losses]).toEqual([1, 3, 1]);
    expect(s.meanDifference).toBeCloseTo(-0.02, 12);
    // d = [0.1, 0.0005, -0.0005, -0.2, 0]; mean -0.02; Σ(d − mean)² = 0.0144 + 2·0.00042025 + ... computed:
    const d = [0.1, 0.0005, -0.0005, -0.2, 0];
    const sd = Math.sqrt(d.reduce((acc, x) => acc + (x + 0.02) ** 2, 0) / 4);
    expect(s.effectSize).toBeCloseTo(-0.02 / sd, 12);
    expect(pairedSummary(a, b, 0).ties).toBe(1);
  });

  it('t-test edge cases follow scipy: constant non-zero difference gives p = 0, all-zero gives NaN', () => {
    expect(pairedTTest([0.25, 0.25, 0.25]).p).toBe(0);
    // 0.1 is not exact in binary: the mean rounds to 0.10000000000000002 and leaves a variance of ~3e-34.
    // scipy 1.10.1: ttest_rel([0.1, 0.1, 0.1], [0, 0, 0]) -> (1.0190482676041238e+16, 9.629649721936175e-33).
    const noisy = pairedTTest([0.1, 0.1, 0.1]);
    expect(noisy.t).toBe(1.0190482676041238e16);
    expectCloseP(noisy.p, 9.629649721936175e-33);
    expect(pairedTTest([0, 0, 0]).p).toBeNaN();
  });
});

describe('multiple-testing adjustment', () => {
  it('Holm, hand-derived from Holm (1979): sorted p (0.005, 0.01, 0.03, 0.04) × (4, 3, 2, 1), running max', () => {
    // 0.005·4 = 0.02; 0.01·3 = 0.03; 0.03·2 = 0.06; 0.04·1 = 0.04 -> max(0.06, 0.04) = 0.06
    const adjusted = holmAdjust([0.01, 0.04, 0.03, 0.005]);
    [0.03, 0.06, 0.06, 0.02].forEach((v, i) => expect(adjusted[i]).toBeCloseTo(v, 14));
  });

  it('Benjamini–Hochberg, hand-derived: m·p(i)/i with a running minimum from the top', () => {
    // 0.005·4/1 = 0.02; 0.01·4/2 = 0.02; 0.03·4/3 = 0.04; 0.04·4/4 = 0.04
    const adjusted = benjaminiHochbergAdjust([0.01, 0.04, 0.03, 0.005, Number.NaN]);
    [0.02, 0.04, 0.04, 0.02].forEach((v, i) => expect(adjusted[i]).toBeCloseTo(v, 14));
    expect(adjusted[4]).toBeNaN();
  });

  it('Benjamini & Hochberg (1995), section 4 example: 15 p-values, q = 0.05 rejects four (Holm three)', () => {
    // The fifteen p-values of the paper's worked example (quoted from memory of the paper).
    const p = [0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344, 0.0459, 0.324, 0.4262, 0.5719, 0.6528, 0.759, 1];
    expect(benjaminiHochbergAdjust(p).filter((x) => x <= 0.05)).toHaveLength(4);
    expect(holmAdjust(p).filter((x) => x <= 0.05)).toHaveLength(3);
  });
});
