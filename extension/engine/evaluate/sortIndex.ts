/**
 * A stable sort of an index array by a numeric key, descending, with no comparator closures and no
 * allocation after warm-up. Stability is what keeps tied scores in file order.
 *
 * Keys travel with their indices in parallel scratch arrays, so comparisons never go through an index.
 * Lists of a few dozen items or more are first distributed into n buckets by key value (a stable counting
 * pass; model scores spread fairly evenly between a query's extremes, so buckets hold one or two items),
 * then each bucket is finished by insertion sort, or by bottom-up merging if a bucket came out large.
 * (The built-in typed-array sort is far slower on the ~100-element lists of a typical query.)
 */
const SMALL = 24;
const RUN = 16;

export class IndexSorter {
  private keyA = new Float64Array(64);
  private keyB = new Float64Array(64);
  private idxA = new Uint32Array(64);
  private idxB = new Uint32Array(64);
  private bucketStart = new Uint32Array(66);
  private bucketFill = new Uint32Array(66);

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
      this.bucketStart = new Uint32Array(size + 2);
      this.bucketFill = new Uint32Array(size + 2);
    }
    const ka = this.keyA;
    const ia = this.idxA;
    if (n < SMALL || !this.distribute(idx, key, n)) {
      for (let i = 0; i < n; i++) {
        const v = idx[i]!;
        ia[i] = v;
        ka[i] = key[v]!;
      }
      this.mergeSort(0, n);
    }
    for (let i = 0; i < n; i++) idx[i] = ia[i]!;
  }

  /**
   * Stable counting pass into n buckets by key (highest keys first) into keyA/idxA, then sorts each bucket.
   * Returns false when the keys' range is unusable (overflowing), leaving the caller to merge sort.
   */
  private distribute(idx: Uint32Array, key: Float64Array, n: number): boolean {
    let max = -Infinity;
    let min = Infinity;
    for (let i = 0; i < n; i++) {
      const k = key[idx[i]!]!;
      if (k > max) max = k;
      if (k < min && k !== -Infinity) min = k;
    }
    const range = max - min;
    if (!(range > 0 && range < Infinity)) return false;
    // Buckets 0..n-1 for finite keys, bucket n for -Infinity (missing scores), all in file order.
    const scale = n / range;
    const start = this.bucketStart;
    start.fill(0, 0, n + 2);
    const ka = this.keyA;
    const ia = this.idxA;
    const bucket = this.idxB; // free until the buckets are sorted
    for (let i = 0; i < n; i++) {
      const k = key[idx[i]!]!;
      let b = n;
      if (k !== -Infinity) {
        b = ((max - k) * scale) | 0;
        if (b >= n) b = n - 1;
      }
      bucket[i] = b;
      start[b + 1]!++;
    }
    for (let b = 0; b <= n; b++) start[b + 1] += start[b]!;
    const next = this.bucketFill;
    for (let b = 0; b <= n; b++) next[b] = start[b]!;
    for (let i = 0; i < n; i++) {
      const v = idx[i]!;
      const o = next[bucket[i]!]!++;
      ka[o] = key[v]!;
      ia[o] = v;
    }
    for (let b = 0; b < n; b++) {
      const lo = start[b]!;
      const hi = start[b + 1]!;
      if (hi - lo < 2) continue;
      if (hi - lo <= RUN) insertion(ka, ia, lo, hi);
      else this.mergeSort(lo, hi);
    }
    return true;
  }

  /** Stable descending sort of keyA/idxA over [lo, hi), result left in keyA/idxA. */
  private mergeSort(lo0: number, hi0: number): void {
    let ka = this.keyA;
    let ia = this.idxA;
    let kb = this.keyB;
    let ib = this.idxB;
    for (let lo = lo0; lo < hi0; lo += RUN) insertion(ka, ia, lo, Math.min(lo + RUN, hi0));
    let swapped = false;
    for (let width = RUN; width < hi0 - lo0; width *= 2) {
      for (let lo = lo0; lo < hi0; lo += 2 * width) {
        const mid = Math.min(lo + width, hi0);
        const hi = Math.min(lo + 2 * width, hi0);
        let i = lo;
        let j = mid;
        let o = lo;
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
      [ka, kb] = [kb, ka];
      [ia, ib] = [ib, ia];
      swapped = !swapped;
    }
    if (swapped) {
      // The result ended in the B arrays: copy the range back to A.
      this.keyA.set(ka.subarray(lo0, hi0), lo0);
      this.idxA.set(ia.subarray(lo0, hi0), lo0);
    }
  }
}

function insertion(ka: Float64Array, ia: Uint32Array, lo: number, hi: number): void {
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
