/**
 * Metrics of one query's ranked list, computed group by group.
 *
 * The list is given in ranked order, cut into groups. Under the `average` tie convention a group is a set
 * of tied scores and every function returns the exact expected value over all orderings of each group,
 * each ordering equally likely (McSherry & Najork 2008). Under the other conventions the caller has already
 * ordered the ties and every group has one item, so the same code gives the plain value.
 *
 * Grades are finite here (unjudged rows were turned into grade 0 by the caller). Positions are 1-based in
 * formulas, 0-based ("slots") in code.
 */
import { discountTable } from './discount';

export interface GroupedList {
  /** Items in the list. */
  readonly n: number;
  /** Grade per slot. */
  readonly grade: Float64Array;
  /** 1 where the row had no judgment (counted as grade 0). */
  readonly unjudged: Uint8Array;
  /** Group g covers slots bounds[g] .. bounds[g+1]-1. */
  readonly bounds: Uint32Array;
  readonly groups: number;
}

/**
 * DCG@k = Σ_{i≤k} gain_i / log2(i+1) (Järvelin & Kekäläinen 2002; discount common practice).
 * Ties: a group's expected gain at each of its slots is the group's mean gain, so the expectation is
 * mean gain × the group's summed discount within the cut-off. `gain` is aligned with the slots.
 * Empty list: 0.
 */
export function dcg(list: GroupedList, gain: Float64Array, k: number): number {
  const depth = Math.min(k, list.n);
  const { cumulative } = discountTable(depth);
  const b = list.bounds;
  let total = 0;
  for (let g = 0; g < list.groups; g++) {
    const s = b[g]!;
    if (s >= depth) break;
    const e = b[g + 1]!;
    if (e - s === 1) {
      total += gain[s]! * (cumulative[s + 1]! - cumulative[s]!);
      continue;
    }
    let sum = 0;
    for (let i = s; i < e; i++) sum += gain[i]!;
    total += (sum / (e - s)) * (cumulative[Math.min(e, depth)]! - cumulative[s]!);
  }
  return total;
}

/**
 * Ideal DCG@k from every labelled item of the query (not only those in the top k, and with a judgments
 * file also the judged items the run never retrieved, `n` then counting them): gains sorted descending. `distinctGain`/`count` list the query's gains (each with its number of items) already in
 * descending order of gain, so this is O(distinct gains).
 */
export function idealDcg(distinctGain: Float64Array, count: Uint32Array, distinct: number, k: number, n: number): number {
  const depth = Math.min(k, n);
  const { cumulative } = discountTable(depth);
  let slot = 0;
  let total = 0;
  for (let i = 0; i < distinct && slot < depth; i++) {
    const end = Math.min(depth, slot + count[i]!);
    total += distinctGain[i]! * (cumulative[end]! - cumulative[slot]!);
    slot += count[i]!;
  }
  return total;
}

/**
 * Expected number of relevant items (grade ≥ from) in the top k. Precision@k is this / k (divided by k even
 * when the list is shorter, common practice); recall@k is this / (relevant items in the query's judged set,
retrieved or not).
 * Ties: a group with r relevant of size m puts r/m relevant items on each of its slots.
 */
export function relevantInTop(list: GroupedList, from: number, k: number): number {
  const depth = Math.min(k, list.n);
  const b = list.bounds;
  const grade = list.grade;
  let total = 0;
  for (let g = 0; g < list.groups; g++) {
    const s = b[g]!;
    if (s >= depth) break;
    const e = b[g + 1]!;
    let r = 0;
    for (let i = s; i < e; i++) if (grade[i]! >= from) r++;
    if (r > 0) total += (r * (Math.min(e, depth) - s)) / (e - s);
  }
  return total;
}

/**
 * Reciprocal rank: 1 / position of the first relevant item (grade ≥ from), 0 if none in the top k
 * (common practice). Ties: only the first group holding a relevant item matters; with m items, r relevant,
 * starting at position s+1, P(first relevant at its j-th slot) = C(m−j, r−1) / C(m, r), taken by the ratio
 * P(j+1)/P(j) = (m−j−r+1)/(m−j) so no binomial is formed. Exact. Caller applies the no-relevant policy.
 */
export function reciprocalRank(list: GroupedList, from: number, k: number): number {
  const depth = Math.min(k, list.n);
  const b = list.bounds;
  const grade = list.grade;
  for (let g = 0; g < list.groups; g++) {
    const s = b[g]!;
    if (s >= depth) return 0;
    const e = b[g + 1]!;
    const m = e - s;
    let r = 0;
    for (let i = s; i < e; i++) if (grade[i]! >= from) r++;
    if (r === 0) continue;
    let p = r / m;
    let expected = 0;
    for (let j = 1; j <= m - r + 1 && s + j <= depth; j++) {
      expected += p / (s + j);
      p *= (m - j - r + 1) / (m - j);
    }
    return expected;
  }
  return 0;
}

/**
 * Average precision = (1/R) Σ over relevant items of precision at their position (common practice;
 * R = relevant items in the query's whole judged set, so relevant items never retrieved count 0). `judgedRelevant`
 * gives R when judged items lie outside the list (labels from a judgments file); without it R is the
 * list's own relevant count. Ties (McSherry & Najork
 * 2008): a relevant item of a group of m with r relevant is equally likely on each slot u = 0..m−1; given
 * slot u the other r−1 relevant items of the group sit before it u(r−1)/(m−1) times on average, so the
 * group adds (r/m) Σ_u (before + 1 + u(r−1)/(m−1)) / (s+u+1), `before` = relevant items in earlier groups.
 * Exact, because precision at a fixed slot is linear in those counts. Returns 0 when R = 0 (caller applies
 * the no-relevant policy).
 * AP@k sums only the slots within the top k and divides by min(k, R), so a top k holding nothing but
 * relevant items scores 1 (as NDCG@k's ideal is cut at k too); with k = ∞ this is plain AP.
 */
export function averagePrecision(list: GroupedList, from: number, k = Infinity, judgedRelevant?: number): number {
  const depth = Math.min(k, list.n);
  const b = list.bounds;
  const grade = list.grade;
  let before = 0;
  let sum = 0;
  for (let g = 0; g < list.groups; g++) {
    const s = b[g]!;
    const e = b[g + 1]!;
    const m = e - s;
    let r = 0;
    for (let i = s; i < e; i++) if (grade[i]! >= from) r++;
    if (r === 0) continue;
    if (s >= depth) {
      // Below the cut-off: counts towards R only.
    } else if (m === 1) {
      sum += (before + 1) / (s + 1);
    } else {
      const share = (r - 1) / (m - 1);
      const slots = Math.min(m, depth - s);
      let inner = 0;
      for (let u = 0; u < slots; u++) inner += (before + 1 + u * share) / (s + u + 1);
      sum += (r / m) * inner;
    }
    before += r;
  }
  const denominator = judgedRelevant ?? before;
  return denominator === 0 ? 0 : sum / Math.min(k, denominator);
}

/**
 * Rank-biased precision (Moffat & Zobel 2008) with binary relevance (grade ≥ from):
 * RBP = (1−p) Σ_{i=1}^{d} r_i p^{i−1} over the list to depth d (the whole list unless a depth is given).
 * Residual = p^d (the weight of everything below depth d) plus (1−p) p^{i−1} for each unjudged item within
 * depth d, Moffat & Zobel's bound on how much RBP could still rise. Ties: slots of a group carry the group's
 * relevant (and unjudged) share; a group over slots s..e−1 weighs Σ (1−p)p^i = p^s − p^e.
 * Writes [rbp, residual] into `out`. An empty list: RBP 0, residual 1.
 */
export function rankBiasedPrecision(list: GroupedList, from: number, p: number, depth: number, out: Float64Array): void {
  const d = Math.min(depth, list.n);
  const b = list.bounds;
  const grade = list.grade;
  const unjudged = list.unjudged;
  let value = 0;
  let residual = Math.pow(p, d);
  let weightStart = 1; // p^s
  for (let g = 0; g < list.groups; g++) {
    const s = b[g]!;
    if (s >= d) break;
    const e = Math.min(b[g + 1]!, d);
    const m = b[g + 1]! - s;
    let r = 0;
    let u = 0;
    for (let i = s; i < s + m; i++) {
      if (grade[i]! >= from) r++;
      u += unjudged[i]!;
    }
    const weightEnd = m === 1 ? weightStart * p : Math.pow(p, e);
    const weight = weightStart - weightEnd;
    if (r > 0) value += (r / m) * weight;
    if (u > 0) residual += (u / m) * weight;
    weightStart = m === 1 ? weightEnd : Math.pow(p, b[g + 1]!);
  }
  out[0] = value;
  out[1] = residual;
}
