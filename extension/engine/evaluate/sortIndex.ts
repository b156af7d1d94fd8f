/**
 * A stable sort of an index array by a numeric key, descending, with no comparator closures and no
 * allocation after warm-up. Stability is what keeps tied scores in file order.
 *
 * Keys travel with their indices in parallel scratch arrays, so comparisons never go through an index:
 * insertion sort on short runs, then bottom-up merging. (The built-in typed-array sort is far slower on the
 * ~100-element lists of a typical query, and would need a second pass to carry the indices.)
 */
const RUN = 16;

export class IndexSorter {
  private keyA = new Float64Array(64);
  private keyB = new Float64Array(64);
  private idxA = new Uint32Array(64);
  private idxB = new Uint32Array(64);

  /** Sorts idx[0..n) so that key[idx[i]] is non-increasing; equal keys keep their relative order. */
  sortDescending(idx: Uint32Array, key: Float64Array, n: number): void {
    if (n < 2) return;
    // Dumps written by a ranker are often already in score order: one scan settles it.
    let sorted = true;
    for (let i = 1; i < n && sorted; i++) sorted = key[idx[i - 1]!]! >= key[idx[i]!]!;
    if (sorted) return;
    if (this.keyA.length < n) {
      const size = Math.max(n, this.keyA.length * 2);
      this.keyA = new Float64Array(size);
      this.keyB = new Float64Array(size);
      this.idxA = new Uint32Array(size);
      this.idxB = new Uint32Array(size);
    }
    let ka = this.keyA;
    let ia = this.idxA;
    let kb = this.keyB;
    let ib = this.idxB;
    for (let i = 0; i < n; i++) {
      const v = idx[i]!;
      ia[i] = v;
      ka[i] = key[v]!;
    }
    for (let lo = 0; lo < n; lo += RUN) {
      const hi = Math.min(lo + RUN, n);
      for (let i = lo + 1; i < hi; i++) {
        const k = ka[i]!;
        const v = ia[i]!;
        let j = i - 1;
        while (j >= lo && ka[j]! < k) {
          ka[j + 1] = ka[j]!;
          ia[j + 1] = ia[j]!;
          j--;
        }
        ka[j + 1] = k;
        ia[j + 1] = v;
      }
    }
    for (let width = RUN; width < n; width *= 2) {
      for (let lo = 0; lo < n; lo += 2 * width) {
        const mid = Math.min(lo + width, n);
        const hi = Math.min(lo + 2 * width, n);
        let i = lo;
        let j = mid;
        let o = lo;
        if (mid === hi || ka[mid - 1]! >= ka[mid]!) {
          // Already in order (common for presorted dumps): copy the block through.
          for (; i < hi; i++, o++) {
            kb[o] = ka[i]!;
            ib[o] = ia[i]!;
          }
          continue;
        }
        while (i < mid && j < hi) {
          // Take from the right run only when strictly greater: ties keep left-run (earlier) order.
          if (ka[j]! > ka[i]!) {
            kb[o] = ka[j]!;
            ib[o++] = ia[j++]!;
          } else {
            kb[o] = ka[i]!;
            ib[o++] = ia[i++]!;
          }
        }
        for (; i < mid; i++, o++) {
          kb[o] = ka[i]!;
          ib[o] = ia[i]!;
        }
        for (; j < hi; j++, o++) {
          kb[o] = ka[j]!;
          ib[o] = ia[j]!;
        }
      }
      const tk = ka;
      ka = kb;
      kb = tk;
      const ti = ia;
      ia = ib;
      ib = ti;
    }
    for (let i = 0; i < n; i++) idx[i] = ia[i]!;
  }
}
