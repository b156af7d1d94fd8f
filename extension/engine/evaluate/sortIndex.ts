/**
 * A stable sort of an index array by a numeric key, descending, with no comparator closures and no
 * allocation after warm-up: insertion sort on short runs, then bottom-up merging through a scratch array.
 * Stability is what keeps tied scores in file order.
 */
const RUN = 16;

export class IndexSorter {
  private scratch = new Uint32Array(64);

  /** Sorts idx[0..n) so that key[idx[i]] is non-increasing; equal keys keep their relative order. */
  sortDescending(idx: Uint32Array, key: Float64Array, n: number): void {
    for (let lo = 0; lo < n; lo += RUN) insertionDescending(idx, key, lo, Math.min(lo + RUN, n));
    if (n <= RUN) return;
    if (this.scratch.length < n) this.scratch = new Uint32Array(Math.max(n, this.scratch.length * 2));
    let from: Uint32Array = idx;
    let to: Uint32Array = this.scratch;
    for (let width = RUN; width < n; width *= 2) {
      for (let lo = 0; lo < n; lo += 2 * width) {
        const mid = Math.min(lo + width, n);
        const hi = Math.min(lo + 2 * width, n);
        let i = lo;
        let j = mid;
        let o = lo;
        while (i < mid && j < hi) {
          // Take from the right run only when strictly greater: ties stay in left-run (earlier) order.
          if (key[from[j]!]! > key[from[i]!]!) to[o++] = from[j++]!;
          else to[o++] = from[i++]!;
        }
        while (i < mid) to[o++] = from[i++]!;
        while (j < hi) to[o++] = from[j++]!;
      }
      const t = from;
      from = to;
      to = t;
    }
    if (from !== idx) idx.set(from.subarray(0, n));
  }
}

function insertionDescending(idx: Uint32Array, key: Float64Array, lo: number, hi: number): void {
  for (let i = lo + 1; i < hi; i++) {
    const v = idx[i]!;
    const kv = key[v]!;
    let j = i - 1;
    while (j >= lo && key[idx[j]!]! < kv) {
      idx[j + 1] = idx[j]!;
      j--;
    }
    idx[j + 1] = v;
  }
}
