/**
 * The distinct grades of one query, ascending, with a rank per slot: what the pair counter's Fenwick trees
 * and the O(distinct grades) ideal DCG need.
 */
export class GradeIndex {
  distinct = 0;
  /** Distinct grades, ascending. */
  values = new Float64Array(16);
  /** Items per grade rank. */
  count = new Uint32Array(16);
  /** Grade rank per slot of the array given to `build`. */
  rank = new Uint32Array(16);
  private sorted = new Float64Array(16);

  /** Distinct grades in first-seen order while collecting (a handful in practice). */
  private seen = new Float64Array(16);
  private seenRank = new Uint32Array(16);

  build(grade: Float64Array, n: number): void {
    if (this.sorted.length < n) {
      const size = Math.max(n, this.sorted.length * 2);
      this.sorted = new Float64Array(size);
      this.values = new Float64Array(size);
      this.count = new Uint32Array(size);
      this.rank = new Uint32Array(size);
    }
    if (!this.buildFew(grade, n)) this.buildMany(grade, n);
  }

  /**
   * Few distinct grades (the usual 0..4 scale): a linear scan of a short list per item, then ranks from
   * sorting that short list. Gives up beyond FEW distinct values.
   */
  private buildFew(grade: Float64Array, n: number): boolean {
    const FEW = 16;
    const seen = this.seen;
    const rank = this.rank;
    let distinct = 0;
    for (let i = 0; i < n; i++) {
      const g = grade[i]!;
      let d = 0;
      while (d < distinct && seen[d] !== g) d++;
      if (d === distinct) {
        if (distinct === FEW) return false;
        seen[distinct++] = g;
      }
      rank[i] = d; // first-seen id for now
    }
    // Rank of each first-seen id = number of distinct values below it.
    const values = this.values;
    const count = this.count;
    for (let d = 0; d < distinct; d++) {
      let below = 0;
      for (let e = 0; e < distinct; e++) if (seen[e]! < seen[d]!) below++;
      this.seenRank[d] = below;
      values[below] = seen[d]!;
    }
    count.fill(0, 0, distinct);
    for (let i = 0; i < n; i++) {
      const r = this.seenRank[rank[i]!]!;
      rank[i] = r;
      count[r]!++;
    }
    this.distinct = distinct;
    return true;
  }

  private buildMany(grade: Float64Array, n: number): void {
    const sorted = this.sorted.subarray(0, n);
    sorted.set(grade.subarray(0, n));
    sorted.sort();
    let distinct = 0;
    for (let i = 0; i < n; i++) {
      if (distinct === 0 || sorted[i] !== this.values[distinct - 1]) this.values[distinct++] = sorted[i]!;
    }
    this.distinct = distinct;
    this.count.fill(0, 0, distinct);
    const values = this.values;
    for (let i = 0; i < n; i++) {
      const g = grade[i]!;
      let lo = 0;
      let hi = distinct - 1;
      while (lo < hi) {
        const mid = (lo + hi) >> 1;
        if (values[mid]! < g) lo = mid + 1;
        else hi = mid;
      }
      this.rank[i] = lo;
      this.count[lo]!++;
    }
  }

  /** Items with grade >= from. */
  atLeast(from: number): number {
    let total = 0;
    for (let r = this.distinct - 1; r >= 0 && this.values[r]! >= from; r--) total += this.count[r]!;
    return total;
  }
}
