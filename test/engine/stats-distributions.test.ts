/**
 * Tails of the t and normal distributions, and the p-values built on them, against scipy 1.10.1 (Debian's
 * python3-scipy through test/reference/python.mjs), to 1e-12 relative:
 * - the t tail against `2*scipy.special.stdtr(dof, -|t|)`, the exact expression of `ttest_rel`'s two-sided
 *   p, on a grid of dof 2..100,000 (log-spaced) and |t| from 1e-300 to 1e100;
 * - the normal tail against `scipy.stats.norm.sf`, the tail behind `wilcoxon`'s normal approximation;
 * - end to end, `ttest_rel` and `wilcoxon(method='approx')` on samples built to land deep in the tail.
 * Below the smallest normal double (2.2e-308) a result has lost precision in any implementation (IEEE 754
 * calls it underflow); there only "both underflowed" is checked. scipy is the limit there: stdtr returns
 * exactly 0 for t = 1e6 at dof 63 (true value about 5e-323, from our betainc) and norm.sf returns 0 from
 * z ≈ 37.7, where erfc still gives subnormal values. (scipy.special.betainc, Cephes' incbet, was also tried
 * as a reference and is off by up to 3e-11 relative near dof 8e4, so stdtr is the one checked against.)
 */
import { describe, expect, it } from 'vitest';
import { normalTwoSidedP, normalUpperTail, studentTwoSidedP, studentUpperTail } from '../../extension/engine/compare/distributions';
import { pairedTTest, wilcoxonSignedRank } from '../../extension/engine/compare/stats';
import { Xoshiro128 } from '../../extension/engine/compare/random';
import { runReference } from '../reference/runPython';
import { scipyReference } from '../reference/stats_reference';

const SMALLEST_NORMAL = 2.2250738585072014e-308;

/** |actual − expected| ≤ 1e-12·expected while expected is a normal double; both below it otherwise. */
function expectMatchesScipy(actual: number, expected: number, what: string): void {
  if (expected >= SMALLEST_NORMAL) {
    expect(Math.abs(actual - expected), `${what}: ours ${actual}, scipy ${expected}`).toBeLessThanOrEqual(1e-12 * expected);
  } else {
    expect(actual, `${what}: scipy underflowed to ${expected}`).toBeLessThan(SMALLEST_NORMAL);
    expect(actual).toBeGreaterThanOrEqual(0);
  }
}

describe('t and normal tails against scipy 1.10', () => {
  // dof 1 (two pairs) as well, the Cauchy case.
  const dofs = [1, ...new Set(Array.from({ length: 48 }, (_, i) => Math.round(2 * 50_000 ** (i / 47))))];
  const ts = [1e-300, 1e-8, 1e-3, 0.1, 0.5, 1, 1.5, 2, 2.5, 3, 4, 5, 6, 8, 10, 12, 15, 20, 25, 30, 35, 40, 1e3, 1e6, 1e20, 1e100];
  const pairs: [number, number][] = dofs.flatMap((dof) => ts.map((t) => [t, dof] as [number, number]));
  const zs = Array.from({ length: 175 }, (_, i) => -5 + i * 0.25).concat([Math.PI, 8.3, 8.5, 12.345678, 36.9999]);
  const reference = runReference<{ scipy: string; t_two_sided: number[]; norm_sf: number[] }>('distributions_scipy.py', { t: pairs, z: zs });

  it('runs against scipy 1.10, and the grid spans dof 2..100,000', () => {
    expect(reference.scipy).toMatch(/^1\.10\./);
    expect(dofs[1]).toBe(2);
    expect(dofs.at(-1)).toBe(100_000);
  });

  it('two-sided t p-values equal 2·stdtr(dof, −|t|) to 1e-12 relative, for either sign of t', () => {
    pairs.forEach(([t, dof], i) => {
      const expected = reference.t_two_sided[i]!;
      expectMatchesScipy(studentTwoSidedP(t, dof), Math.min(1, expected), `t = ${t}, dof = ${dof}`);
      expectMatchesScipy(studentTwoSidedP(-t, dof), Math.min(1, expected), `t = ${-t}, dof = ${dof}`);
      expectMatchesScipy(studentUpperTail(t, dof), expected / 2, `upper tail at t = ${t}, dof = ${dof}`);
    });
  });

  it('normal upper tails equal norm.sf to 1e-12 relative from z = −5 to 38.5', () => {
    zs.forEach((z, i) => expectMatchesScipy(normalUpperTail(z), reference.norm_sf[i]!, `z = ${z}`));
  });

  it('is never exactly 0 unless the value underflows a double', () => {
    // Past |z| ≈ 8.3 the old 1 + erf form returned 0. Hand-derived bound (common practice, Mills' ratio):
    // P(Z ≥ z) < φ(z)/z, so at z = 39 the tail is below e^−760.5 / (39·√(2π)) ≈ 5e-333, under the smallest
    // subnormal double (4.9e-324), while at z = 38.4 it is above φ(z)·z/(z² + 1) ≈ 7e-323.
    for (let z = 8; z <= 38.4; z += 0.1) expect(normalTwoSidedP(z), `z = ${z}`).toBeGreaterThan(0);
    expect(normalUpperTail(39)).toBe(0);
    for (const dof of dofs) {
      for (let t = 2; t <= 40; t += 1) {
        // Past t = 2 the t tail is heavier than the normal one (common practice), so it is a normal double
        // wherever the normal tail is.
        if (normalTwoSidedP(t) >= SMALLEST_NORMAL) expect(studentTwoSidedP(t, dof), `t = ${t}, dof = ${dof}`).toBeGreaterThan(0);
      }
    }
  });

  it('handles infinite, NaN and degenerate arguments', () => {
    expect(studentTwoSidedP(Number.POSITIVE_INFINITY, 5)).toBe(0);
    expect(studentTwoSidedP(0, 5)).toBe(1);
    expect(studentUpperTail(Number.NEGATIVE_INFINITY, 5)).toBe(1);
    expect(studentTwoSidedP(Number.NaN, 5)).toBeNaN();
    expect(studentTwoSidedP(2, 0)).toBeNaN();
    expect(normalTwoSidedP(0)).toBe(1);
    expect(normalTwoSidedP(Number.NEGATIVE_INFINITY)).toBe(0);
    expect(normalTwoSidedP(Number.NaN)).toBeNaN();
  });
});

describe('paired tests deep in the tail against scipy 1.10', () => {
  /**
   * n pairs whose differences have a t statistic of about `target`: seeded uniform noise of unit spread,
   * shifted by target·sd/√n. A is 0.5 + noise so both columns are ordinary metric-like numbers.
   */
  function pairsWithT(n: number, target: number, seed: number): { a: number[]; b: number[] } {
    const rng = new Xoshiro128(seed);
    const noise = Array.from({ length: n }, () => (rng.nextInt32() >>> 0) / 2 ** 32 - 0.5);
    const mean = noise.reduce((s, x) => s + x, 0) / n;
    const sd = Math.sqrt(noise.reduce((s, x) => s + (x - mean) ** 2, 0) / (n - 1));
    const shift = (target * sd) / Math.sqrt(n) - mean;
    const a = noise.map((_, i) => 0.5 + ((i * 7919) % 1000) / 4000);
    const b = a.map((x, i) => x + noise[i]! + shift);
    return { a, b };
  }
  const shapes: [number, number][] = [
    [3, 2], [3, 40], [6, 15], [31, 8], [31, 40], [200, 12], [1001, 25], [1001, 38], [30_001, 30], [100_001, 4], [100_001, 35],
  ];
  const tCases = shapes.map(([n, t], i) => pairsWithT(n, t, 100 + i));
  // Wilcoxon on differences that are multiples of 1/8 (exact in binary, so the 1e-9 rounding before ranking
  // changes nothing scipy does not also see), with zeros, ties and a growing lean to positive.
  const wilcoxonShapes: [number, number][] = [[80, 0], [500, 1], [5000, 1], [20_000, 2], [100_000, 1]];
  const tied = wilcoxonShapes.map(([n, lean], i) => {
    const rng = new Xoshiro128(500 + i);
    const b = Array.from({ length: n }, () => (rng.below(9) - 4 + (rng.below(4) === 0 ? lean : 0)) / 8);
    return { a: b.map(() => 0), b };
  });
  // Every difference positive and distinct: T = 0 and z = −(n(n+1)/4) / √(n(n+1)(2n+1)/24) ≈ −0.866·√n, which
  // is −36.7 at n = 1800 (p ≈ 1e-295), −37.7 at n = 1900 (p subnormal) and −39.7 at n = 2100 (p underflows).
  const allPositive = [60, 300, 1800, 1900, 2100].map((n) => ({
    a: Array.from({ length: n }, () => 0),
    b: Array.from({ length: n }, (_, i) => (i + 1) / 1024),
  }));
  const wilcoxonCases = [...tied, ...allPositive];
  const cases = [...tCases, ...wilcoxonCases].map((c) => ({ ...c, wilcoxon_method: 'approx' as const }));
  const reference = scipyReference(cases);
  const diff = (c: { a: number[]; b: number[] }) => Float64Array.from(c.b, (x, i) => x - c.a[i]!);

  it.each(shapes.map(([n, t], i) => [i, n - 1, t] as const))('case %i: ttest_rel at dof %i, t ≈ %i', (i) => {
    const ref = reference[i]!;
    const ours = pairedTTest(diff(cases[i]!));
    // A few roundings apart: numpy sums pairwise, this code with compensation.
    expect(Math.abs(ours.t - ref.t!)).toBeLessThanOrEqual(2e-15 * Math.abs(ref.t!));
    expectMatchesScipy(ours.p, ref.t_p!, `ttest_rel case ${i}`);
    if (ref.t_p! >= SMALLEST_NORMAL) expect(ours.p).toBeGreaterThan(0);
  });

  const w0 = tCases.length;
  it.each(wilcoxonCases.map((c, i) => [w0 + i, c.a.length] as const))('case %i: wilcoxon normal approximation, n = %i', (i) => {
    const ref = reference[i]!;
    const ours = wilcoxonSignedRank(diff(cases[i]!), 'normal');
    expect(ours.statistic).toBe(ref.w_stat);
    expectMatchesScipy(ours.p, ref.w_p!, `wilcoxon case ${i}`);
  });

  it('reaches deep into the tail (the cases are not all easy)', () => {
    const tPs = reference.slice(0, w0).map((r) => r.t_p!);
    const wPs = reference.slice(w0).map((r) => r.w_p!);
    expect(Math.min(...tPs.filter((p) => p > 0))).toBeLessThan(1e-250);
    expect(Math.min(...wPs.filter((p) => p > 0))).toBeLessThan(1e-290);
    expect(wPs.at(-1)).toBe(0); // n = 2100: the true p is below the smallest subnormal double
    expect(wilcoxonSignedRank(diff(cases.at(-1)!), 'normal').p).toBe(0);
  });
});
