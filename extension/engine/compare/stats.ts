/**
 * Paired statistics for two runs scored on the same queries: a_i (run A) and b_i (run B), d_i = b_i − a_i.
 * Descriptive figures and the paired t-test live here; the rank, resampling and adjustment procedures
 * have their own files and are re-exported for one import point.
 */
import { studentTwoSidedP } from './distributions';

export { benjaminiHochbergAdjust, holmAdjust } from './adjust';
export { bootstrapMeanIntervals, quantileSorted, type Interval } from './bootstrap';
export { signFlipTest, type SignFlipResult } from './signFlip';
export { WILCOXON_ROUNDING, wilcoxonSignedRank, type WilcoxonResult } from './wilcoxon';

export interface PairedSummary {
  readonly n: number;
  readonly meanA: number;
  readonly meanB: number;
  /** Mean of d = b − a (equals meanB − meanA up to rounding). */
  readonly meanDifference: number;
  /** Sample standard deviation of d (n − 1 in the denominator). */
  readonly sdDifference: number;
  /** Standardised mean difference of paired data, d_z = mean(d) / sd(d) (Cohen 1988; Lakens 2013). */
  readonly effectSize: number;
  /** Queries where B is better by more than the tolerance, equal within it, worse by more. */
  readonly wins: number;
  readonly ties: number;
  readonly losses: number;
  readonly tieTolerance: number;
}

export interface TTestResult {
  readonly t: number;
  readonly dof: number;
  /** Two-sided p-value; NaN when every difference is equal to zero (nothing to test). */
  readonly p: number;
}

export function differences(a: ArrayLike<number>, b: ArrayLike<number>): Float64Array {
  if (a.length !== b.length) throw new RangeError(`paired samples differ in length: ${a.length} vs ${b.length}`);
  const d = new Float64Array(a.length);
  for (let i = 0; i < a.length; i++) d[i] = b[i]! - a[i]!;
  return d;
}

export function pairedSummary(a: ArrayLike<number>, b: ArrayLike<number>, tieTolerance: number): PairedSummary {
  const n = a.length;
  const d = differences(a, b);
  let sumA = 0;
  let sumB = 0;
  let sumD = 0;
  let wins = 0;
  let losses = 0;
  for (let i = 0; i < n; i++) {
    sumA += a[i]!;
    sumB += b[i]!;
    sumD += d[i]!;
    if (d[i]! > tieTolerance) wins++;
    else if (d[i]! < -tieTolerance) losses++;
  }
  const meanDifference = n > 0 ? sumD / n : Number.NaN;
  const sdDifference = standardDeviation(d, meanDifference);
  return {
    n,
    meanA: n > 0 ? sumA / n : Number.NaN,
    meanB: n > 0 ? sumB / n : Number.NaN,
    meanDifference,
    sdDifference,
    effectSize: sdDifference > 0 ? meanDifference / sdDifference : Number.NaN,
    wins,
    ties: n - wins - losses,
    losses,
    tieTolerance,
  };
}

/**
 * Paired t-test (Student 1908), two-sided: t = mean(d) / √(var(d)/n) with n − 1 degrees of freedom, the
 * operations in the order of scipy's ttest_rel. When var(d) = 0 the statistic is ±∞ (p = 0) for a non-zero
 * mean and undefined (p = NaN) for a zero mean, as scipy reports it.
 * The sums are compensated: deep in the tail p changes about t² times faster than t (relatively), so at
 * |t| = 30 an error of 1e-14 in t would already cost 1e-11 in p.
 */
export function pairedTTest(d: ArrayLike<number>): TTestResult {
  const n = d.length;
  if (n < 2) return { t: Number.NaN, dof: n - 1, p: Number.NaN };
  const mean = compensatedSum(n, (i) => d[i]!) / n;
  const variance = sampleVariance(d, mean);
  const t = variance > 0 ? mean / Math.sqrt(variance / n) : mean === 0 ? Number.NaN : Math.sign(mean) * Number.POSITIVE_INFINITY;
  return { t, dof: n - 1, p: studentTwoSidedP(t, n - 1) };
}

function standardDeviation(d: ArrayLike<number>, mean: number): number {
  return Math.sqrt(sampleVariance(d, mean));
}

/** Σ(d_i − mean)² / (n − 1); NaN below two values. */
function sampleVariance(d: ArrayLike<number>, mean: number): number {
  const n = d.length;
  if (n < 2) return Number.NaN;
  return compensatedSum(n, (i) => (d[i]! - mean) ** 2) / (n - 1);
}

/**
 * Σ term(i) for i < n by Neumaier's compensated summation (Neumaier 1974): the error stays near one
 * rounding of the result whatever n, where a plain running sum drifts by up to n roundings.
 */
function compensatedSum(n: number, term: (i: number) => number): number {
  let sum = 0;
  let lost = 0;
  for (let i = 0; i < n; i++) {
    const x = term(i);
    const next = sum + x;
    lost += Math.abs(sum) >= Math.abs(x) ? sum - next + x : x - next + sum;
    sum = next;
  }
  return sum + lost;
}
