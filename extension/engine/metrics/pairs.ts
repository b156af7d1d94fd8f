/**
 * Pairwise measures of one query: Kendall's tau-b between scores and grades, the number of discordant
 * pairs (pairwise inversions) and what they cost in NDCG.
 *
 * A query with fewer than two items, or with all scores or all grades equal, has tau NaN (undefined).
 *
 * O(n log G) for n items and G distinct grades: walk the list one score class at a time (a class = items
 * with the same score; items without a score form one last class), and query Fenwick trees indexed by grade
 * rank for the items already passed, which all have strictly higher scores. This is Knight's (1966)
 * O(n log n) idea with the inversion count done by a tree instead of a merge sort.
 */
export interface PairInput {
  readonly n: number;
  /** Grade rank per slot: 0 = lowest distinct grade of the query. */
  readonly rank: Uint32Array;
  /** Distinct grades in the query. */
  readonly distinct: number;
  /** Items per grade rank. */
  readonly rankCount: Uint32Array;
  /** Score classes: class c covers slots classBounds[c] .. classBounds[c+1]-1. */
  readonly classBounds: Uint32Array;
  readonly classes: number;
  /** Gain per slot and applied discount per slot (0 beyond the cut-off; the group mean under `average`). */
  readonly gain: Float64Array;
  readonly discount: Float64Array;
  /** Gain per grade rank, to take |gain difference| when gain is not increasing in grade. */
  readonly gainOfRank: Float64Array;
  readonly gainIncreasing: boolean;
}

export interface PairResult {
  /** Kendall's tau-b; NaN when all scores or all grades are equal (undefined, as in scipy). */
  tau: number;
  /** Pairs with strictly higher score and strictly lower grade. */
  discordant: number;
  /** Σ over discordant pairs of |gain_i − gain_j| · (discount_i − discount_j): divide by IDCG for Σ|ΔNDCG|. */
  swapGain: number;
}

const SMALL = 12;

export class PairCounter {
  private cnt = new Float64Array(8);
  private sumD = new Float64Array(8);
  private sumG = new Float64Array(8);
  private sumGD = new Float64Array(8);
  private sameGrade = new Float64Array(8);

  compute(input: PairInput, out: PairResult): void {
    const { n, rank, distinct, classBounds, classes, gain, discount } = input;
    this.reset(distinct);
    const cnt = this.cnt;
    const sumD = this.sumD;
    const sumG = this.sumG;
    const sumGD = this.sumGD;
    const same = this.sameGrade;
    let discordant = 0;
    let swap = 0;
    let scoreTies = 0;
    let jointTies = 0;
    /** Up to SMALL distinct grades, per-grade totals (index = rank); beyond, Fenwick trees (index = rank + 1). */
    const small = distinct <= SMALL;
    for (let c = 0; c < classes; c++) {
      const s = classBounds[c]!;
      const e = classBounds[c + 1]!;
      const size = e - s;
      scoreTies += (size * (size - 1)) / 2;
      if (c > 0) {
        if (small) {
          // Few grades: plain per-grade totals, summed below the item's grade (cheaper than a tree).
          for (let j = s; j < e; j++) {
            const r = rank[j]!;
            if (r === 0) continue;
            let qs = 0;
            let qd = 0;
            let qg = 0;
            let qgd = 0;
            for (let h = 0; h < r; h++) {
              qs += cnt[h]!;
              qd += sumD[h]!;
              qg += sumG[h]!;
              qgd += sumGD[h]!;
            }
            discordant += qs;
            if (input.gainIncreasing) {
              const gj = gain[j]!;
              const dj = discount[j]!;
              swap += gj * qd - gj * dj * qs - qgd + dj * qg;
            } else {
              const gj = input.gainOfRank[r]!;
              const dj = discount[j]!;
              for (let h = 0; h < r; h++) swap += Math.abs(gj - input.gainOfRank[h]!) * (sumD[h]! - dj * cnt[h]!);
            }
          }
        } else {
          for (let j = s; j < e; j++) {
            const r = rank[j]!;
            if (r === 0) continue;
            if (input.gainIncreasing) {
              let qs = 0;
              let qd = 0;
              let qg = 0;
              let qgd = 0;
              for (let i = r; i > 0; i -= i & -i) {
                qs += cnt[i]!;
                qd += sumD[i]!;
                qg += sumG[i]!;
                qgd += sumGD[i]!;
              }
              discordant += qs;
              const gj = gain[j]!;
              const dj = discount[j]!;
              swap += gj * qd - gj * dj * qs - qgd + dj * qg;
            } else {
              discordant += this.lowerCount(r);
              swap += this.absSwap(r, input.gainOfRank, discount[j]!);
            }
          }
        }
      }
      if (size > 1) {
        for (let j = s; j < e; j++) same[rank[j]!] = 0;
        for (let j = s; j < e; j++) jointTies += same[rank[j]!]!++;
      }
      for (let j = s; j < e; j++) {
        const d = discount[j]!;
        const g = gain[j]!;
        if (small) {
          const r = rank[j]!;
          cnt[r]!++;
          sumD[r] += d;
          sumG[r] += g;
          sumGD[r] += g * d;
          continue;
        }
        for (let i = rank[j]! + 1; i <= distinct; i += i & -i) {
          cnt[i]!++;
          sumD[i] += d;
          sumG[i] += g;
          sumGD[i] += g * d;
        }
      }
    }
    let gradeTies = 0;
    for (let r = 0; r < distinct; r++) {
      const c = input.rankCount[r]!;
      gradeTies += (c * (c - 1)) / 2;
    }
    const all = (n * (n - 1)) / 2;
    const concordant = all - scoreTies - gradeTies + jointTies - discordant;
    const denominator = Math.sqrt((all - scoreTies) * (all - gradeTies));
    out.tau = denominator > 0 ? (concordant - discordant) / denominator : NaN;
    out.discordant = discordant;
    out.swapGain = swap;
  }

  private reset(distinct: number): void {
    if (this.cnt.length < distinct + 1) {
      const size = Math.max(distinct + 1, this.cnt.length * 2);
      this.cnt = new Float64Array(size);
      this.sumD = new Float64Array(size);
      this.sumG = new Float64Array(size);
      this.sumGD = new Float64Array(size);
      this.sameGrade = new Float64Array(size);
    } else {
      // A loop, not four fill() calls: a query has a handful of grades, and each call into the runtime cost more.
      const { cnt, sumD, sumG, sumGD } = this;
      for (let i = 0; i <= distinct; i++) {
        cnt[i] = 0;
        sumD[i] = 0;
        sumG[i] = 0;
        sumGD[i] = 0;
      }
    }
  }

  /** Items passed so far with grade rank < r (Fenwick prefix). */
  private lowerCount(r: number): number {
    let k = 0;
    for (let i = r; i > 0; i -= i & -i) k += this.cnt[i]!;
    return k;
  }

  /** Slow path for gain maps that are not increasing: one term per lower grade, O(G log G) per item. */
  private absSwap(r: number, gainOfRank: Float64Array, dj: number): number {
    let total = 0;
    const gj = gainOfRank[r]!;
    for (let h = 0; h < r; h++) {
      const count = this.rangeSum(this.cnt, h);
      if (count === 0) continue;
      total += Math.abs(gj - gainOfRank[h]!) * (this.rangeSum(this.sumD, h) - dj * count);
    }
    return total;
  }

  private rangeSum(tree: Float64Array, rank: number): number {
    let hi = 0;
    for (let i = rank + 1; i > 0; i -= i & -i) hi += tree[i]!;
    let lo = 0;
    for (let i = rank; i > 0; i -= i & -i) lo += tree[i]!;
    return hi - lo;
  }
}
