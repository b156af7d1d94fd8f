/**
 * Expected reciprocal rank (Chapelle, Metzler, Zhang & Grinspan 2009):
 *   ERR@k = Σ_{r=1}^{k} (1/r) · R_r · Π_{i<r} (1 − R_i),   R(g) = (2^g − 1) / 2^gmax,
 * gmax the highest grade (conventions.maxGrade, else the highest grade in the data). Uses grades directly,
 * not the gain convention. Not normalised: a query with no relevant item scores what its grades give (0
 * when all are 0). Empty list: 0.
 *
 * Ties, exact expectation over all orderings of each tied group: Π(1 − R) over a whole group does not
 * depend on its order, so groups factor. Inside a group of m items starting at position s+1,
 *   E = Σ_t 1/(s+t+1) · A_t,  A_t = E[R of the item at slot t · Π (1 − R) of the t items before it]
 *     = (1/m) Σ_items R_item · M_t(others),
 * where M_t(others) is the mean of Π(1 − R) over all t-subsets of the other m − 1 items. M_t is built one item
 * at a time with M'_t = ((N+1−t)·M_t + t·y·M_{t−1}) / (N+1) (a convex combination, so it stays in [0, 1] and
 * never overflows the way elementary symmetric polynomials of large groups would). Items of equal grade share
 * the same M, so the cost is O(distinct grades in the group × m × min(m, k − s)).
 */
export class ErrCalculator {
  private mean = new Float64Array(16);
  private distinctR = new Float64Array(16);
  private distinctCount = new Uint32Array(16);

  /** ERR@k of slots with stop probability `stop` (R of each slot's grade), split into groups by `bounds`. */
  compute(stop: Float64Array, bounds: Uint32Array, groups: number, n: number, k: number): number {
    const depth = Math.min(k, n);
    let reach = 1; // probability the user reaches the group's first slot
    let total = 0;
    for (let g = 0; g < groups && reach > 0; g++) {
      const s = bounds[g]!;
      if (s >= depth) break;
      const e = bounds[g + 1]!;
      if (e - s === 1) {
        const r = stop[s]!;
        total += (reach * r) / (s + 1);
        reach *= 1 - r;
        continue;
      }
      const distinct = this.collect(stop, s, e);
      total += reach * this.groupExpectation(distinct, e - s, s, Math.min(e, depth) - s);
      for (let d = 0; d < distinct; d++) reach *= Math.pow(1 - this.distinctR[d]!, this.distinctCount[d]!);
    }
    return total;
  }

  private collect(stop: Float64Array, s: number, e: number): number {
    if (this.distinctR.length < e - s) {
      this.distinctR = new Float64Array(e - s);
      this.distinctCount = new Uint32Array(e - s);
    }
    let distinct = 0;
    outer: for (let i = s; i < e; i++) {
      const r = stop[i]!;
      for (let d = 0; d < distinct; d++) {
        if (this.distinctR[d] === r) {
          this.distinctCount[d]!++;
          continue outer;
        }
      }
      this.distinctR[distinct] = r;
      this.distinctCount[distinct++] = 1;
    }
    return distinct;
  }

  /** Σ_{t<slots} A_t / (s+t+1) for one group of m items; `slots` = its slots inside the cut-off. */
  private groupExpectation(distinct: number, m: number, s: number, slots: number): number {
    const rs = this.distinctR;
    const cs = this.distinctCount;
    if (distinct === 1) {
      // All alike: the plain formula with a constant R.
      const r = rs[0]!;
      let total = 0;
      let survive = 1;
      for (let t = 0; t < slots; t++) {
        total += (r * survive) / (s + t + 1);
        survive *= 1 - r;
      }
      return total;
    }
    if (this.mean.length < slots + 1) this.mean = new Float64Array(slots + 1);
    const M = this.mean;
    let total = 0;
    for (let d = 0; d < distinct; d++) {
      if (rs[d] === 0) continue;
      // M_t over t-subsets of the group minus one item of this grade.
      M.fill(0, 0, slots + 1);
      M[0] = 1;
      let size = 0;
      for (let h = 0; h < distinct; h++) {
        const y = 1 - rs[h]!;
        const copies = cs[h]! - (h === d ? 1 : 0);
        for (let c = 0; c < copies; c++) {
          const top = Math.min(size + 1, slots - 1);
          for (let t = top; t >= 1; t--) M[t] = ((size + 1 - t) * M[t]! + t * y * M[t - 1]!) / (size + 1);
          size++;
        }
      }
      let sum = 0;
      for (let t = 0; t < slots; t++) sum += M[t]! / (s + t + 1);
      total += (cs[d]! * rs[d]! * sum) / m;
    }
    return total;
  }
}

/** R(g) = (2^g − 1) / 2^gmax (Chapelle et al. 2009). */
export function errStopProbability(gmax: number): (grade: number) => number {
  const scale = Math.pow(2, gmax);
  return (g) => (Math.pow(2, g) - 1) / scale;
}
