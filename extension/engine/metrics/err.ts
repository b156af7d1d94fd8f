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
 * the same M. Items with R = 0 are placed separately (see groupExpectation), so the cost is
 * O(G·w·min(w, L) + min(w, L)·L) for G distinct grades, w items with R > 0 and L slots of the group inside
 * the cut-off: cheap for ERR@k, and for whole-list ERR while few tied items can stop the user; a whole-list
 * ERR over a huge tied group of mostly relevant items is quadratic in the group size.
 */
import { withSmallGrades } from './gain';

export class ErrCalculator {
  private mean = new Float64Array(16);
  private terms = new Float64Array(16);
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
    // Items with R = 0 never stop the user; they only take slots. Split them off: the w others ("stoppers")
    // are equally likely in any order and on any w of the m slots, independently, so
    //   E = Σ_i B_i · C_i,  B_i = E[R of the i-th stopper · Π (1 − R) of the stoppers before it],
    //   C_i = E[1/(s + P_i)] over P_i = slot of the i-th stopper, 0 beyond the cut-off, with
    //   P(P_i = p) = C(p−1, i−1) · C(m−p, w−i) / C(m, w).
    // Work drops from O(G·m·slots) to O(G·w·min(w, slots) + min(w, slots)·slots).
    let zeros = 0;
    for (let d = 0; d < distinct; d++) if (rs[d] === 0) zeros = cs[d]!;
    const w = m - zeros;
    const depthInStoppers = Math.min(w, slots);
    const B = this.stopperTerms(distinct, w, depthInStoppers);
    if (zeros === 0) {
      let total = 0;
      for (let t = 0; t < depthInStoppers; t++) total += B[t]! / (s + t + 1);
      return total;
    }
    const logFactorial = logFactorialTable(m);
    const logAll = logFactorial[m]! - logFactorial[w]! - logFactorial[m - w]!;
    let total = 0;
    for (let i = 1; i <= depthInStoppers; i++) {
      const b = B[i - 1]!;
      if (b === 0) continue;
      let c = 0;
      const last = Math.min(slots, m - w + i);
      for (let p = i; p <= last; p++) {
        const logWays =
          logFactorial[p - 1]! - logFactorial[i - 1]! - logFactorial[p - i]! +
          (logFactorial[m - p]! - logFactorial[w - i]! - logFactorial[m - p - w + i]!);
        c += Math.exp(logWays - logAll) / (s + p);
      }
      total += b * c;
    }
    return total;
  }

  /**
   * B_t for t = 0..depth−1 over the w stoppers of the group (items with R > 0):
   * B_t = (1/w) Σ_grades count·R·M_t(the other w − 1 stoppers).
   */
  private stopperTerms(distinct: number, w: number, depth: number): Float64Array {
    const rs = this.distinctR;
    const cs = this.distinctCount;
    if (this.mean.length < depth + 1) this.mean = new Float64Array(depth + 1);
    if (this.terms.length < depth) this.terms = new Float64Array(depth);
    const M = this.mean;
    const B = this.terms;
    B.fill(0, 0, depth);
    for (let d = 0; d < distinct; d++) {
      if (rs[d] === 0) continue;
      // M_t over t-subsets of the stoppers minus one of this grade.
      M.fill(0, 0, depth + 1);
      M[0] = 1;
      let size = 0;
      for (let h = 0; h < distinct; h++) {
        if (rs[h] === 0) continue;
        const y = 1 - rs[h]!;
        const copies = cs[h]! - (h === d ? 1 : 0);
        for (let c = 0; c < copies; c++) {
          const top = Math.min(size + 1, depth - 1);
          for (let t = top; t >= 1; t--) M[t] = ((size + 1 - t) * M[t]! + t * y * M[t - 1]!) / (size + 1);
          size++;
        }
      }
      const weight = (cs[d]! * rs[d]!) / w;
      for (let t = 0; t < depth; t++) B[t] += weight * M[t]!;
    }
    return B;
  }
}

let logFactorials = new Float64Array(1);
/** ln(j!) for j = 0..n, kept and grown. */
function logFactorialTable(n: number): Float64Array {
  if (logFactorials.length <= n) {
    const size = Math.max(n + 1, logFactorials.length * 2);
    const table = new Float64Array(size);
    for (let j = 1; j < size; j++) table[j] = table[j - 1]! + Math.log(j);
    logFactorials = table;
  }
  return logFactorials;
}

/**
 * R(g) = (2^g − 1) / 2^gmax (Chapelle et al. 2009), written as 2^(g − gmax) − 2^(−gmax) so that it stays
 * finite for any gmax (2^1024 is already Infinity in a double). For integer grades below 53 both forms are
 * exact, so the values are the same bits.
 */
export function errStopProbability(gmax: number): (grade: number) => number {
  const floor = Math.pow(2, -gmax);
  return withSmallGrades((g) => Math.pow(2, g - gmax) - floor);
}
