/**
 * Wilcoxon signed-rank test on paired differences (Wilcoxon 1945), two-sided.
 *
 * Choices, each stated in the result so reports can say so:
 * - Differences are ROUNDED to the nearest multiple of `WILCOXON_ROUNDING` (1e-9) before anything else,
 *   so that float noise (0.3 − 0.1 − 0.2 ≠ 0) neither turns a real zero into a tiny non-zero difference
 *   nor splits a tie between equal differences into distinct ranks.
 * - Zero differences are dropped before ranking (Wilcoxon's original treatment; scipy's default
 *   zero_method='wilcox').
 * - Tied |d| get the average of the ranks they span.
 * - p-value: exact null distribution when there are at most 50 differences, no zeros and no ties;
 *   otherwise the normal approximation with the tie correction of the variance and no continuity
 *   correction. The 50 cut and the absence of continuity correction follow scipy 1.10's defaults
 *   (method='auto', correction=False). Unlike scipy 1.10, ties among |d| also select the normal
 *   approximation, because the exact distribution assumes untied ranks 1..n.
 */
import { normalTwoSidedP } from './distributions';

export const WILCOXON_ROUNDING = 1e-9;
export const WILCOXON_EXACT_MAX_N = 50;

export interface WilcoxonResult {
  /** min(R+, R−): the smaller of the signed rank sums. */
  readonly statistic: number;
  readonly rankSumPositive: number;
  readonly rankSumNegative: number;
  /** Non-zero differences that were ranked. */
  readonly n: number;
  /** Differences that rounded to zero and were dropped. */
  readonly zeros: number;
  /** Whether some |d| were tied (after rounding). */
  readonly hasTies: boolean;
  readonly method: 'exact' | 'normal' | 'none';
  /** z statistic of the normal approximation (NaN for exact). */
  readonly z: number;
  /** Two-sided p-value; 1 when every difference is zero (nothing to rank), NaN when there are no pairs. */
  readonly p: number;
}

export function roundDifference(d: number): number {
  return Math.round(d / WILCOXON_ROUNDING) * WILCOXON_ROUNDING;
}

/** `method` 'auto' chooses as described above; 'normal' forces the approximation (for checks against references). */
export function wilcoxonSignedRank(differences: ArrayLike<number>, method: 'auto' | 'normal' = 'auto'): WilcoxonResult {
  const total = differences.length;
  const magnitudes: number[] = [];
  const positiveMagnitudes: number[] = [];
  for (let i = 0; i < total; i++) {
    const d = roundDifference(differences[i]!);
    if (d === 0) continue;
    magnitudes.push(Math.abs(d));
    if (d > 0) positiveMagnitudes.push(d);
  }
  const n = magnitudes.length;
  const zeros = total - n;
  const all = Float64Array.from(magnitudes).sort();
  const positive = Float64Array.from(positiveMagnitudes).sort();

  // Walk the tie groups of the sorted |d|; positives are a sorted sub-multiset, so one pointer suffices.
  let rankSumPositive = 0;
  let tieTerm = 0; // Σ t(t² − 1) over tie groups
  let hasTies = false;
  let p = 0;
  for (let start = 0; start < n; ) {
    let end = start + 1;
    while (end < n && all[end] === all[start]) end++;
    const size = end - start;
    const averageRank = (start + 1 + end) / 2;
    let positivesInGroup = 0;
    while (p < positive.length && positive[p] === all[start]) {
      positivesInGroup++;
      p++;
    }
    rankSumPositive += positivesInGroup * averageRank;
    if (size > 1) {
      hasTies = true;
      tieTerm += size * (size * size - 1);
    }
    start = end;
  }
  const rankSumNegative = (n * (n + 1)) / 2 - rankSumPositive;
  const statistic = Math.min(rankSumPositive, rankSumNegative);
  const base = { statistic, rankSumPositive, rankSumNegative, n, zeros, hasTies };

  if (total === 0) return { ...base, statistic: Number.NaN, method: 'none', z: Number.NaN, p: Number.NaN };
  if (n === 0) return { ...base, method: 'none', z: Number.NaN, p: 1 };

  if (method === 'auto' && total <= WILCOXON_EXACT_MAX_N && zeros === 0 && !hasTies) {
    return { ...base, method: 'exact', z: Number.NaN, p: exactTwoSidedP(n, rankSumPositive) };
  }
  const mean = (n * (n + 1)) / 4;
  const variance = (n * (n + 1) * (2 * n + 1) - 0.5 * tieTerm) / 24;
  const z = variance > 0 ? (statistic - mean) / Math.sqrt(variance) : Number.NaN;
  return { ...base, method: 'normal', z, p: variance > 0 ? normalTwoSidedP(z) : 1 };
}

/**
 * Exact two-sided p-value from the null distribution of R+ (each of the 2^n sign patterns equally
 * likely): 2·min(P(R+ ≤ r), P(R+ ≥ r)), and 1 at the centre of the distribution, as scipy does.
 */
function exactTwoSidedP(n: number, rankSumPositive: number): number {
  const maxSum = (n * (n + 1)) / 2;
  // counts[s] = number of subsets of {1..n} summing to s; below 2^53 for n ≤ 50, so exact in doubles.
  const counts = new Float64Array(maxSum + 1);
  counts[0] = 1;
  for (let rank = 1; rank <= n; rank++) {
    for (let s = (rank * (rank + 1)) / 2; s >= rank; s--) counts[s]! += counts[s - rank]!;
  }
  const r = Math.round(rankSumPositive);
  if (r === Math.floor(maxSum / 2)) return 1;
  let lower = 0;
  let upper = 0;
  for (let s = 0; s <= maxSum; s++) {
    if (s <= r) lower += counts[s]!;
    if (s >= r) upper += counts[s]!;
  }
  const all = 2 ** n;
  return Math.min(1, (2 * Math.min(lower, upper)) / all);
}
