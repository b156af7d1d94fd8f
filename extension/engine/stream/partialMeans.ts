/**
 * Running means over the queries scored so far, for the partial results while a dump streams in. Each
 * block's queries are added once, when the block is taken in, so a partial costs that block's queries
 * instead of a pass over every query so far (on 100M rows, a million queries times some 200 blocks).
 *
 * The sums are taken exactly as `summarise` (evaluate.ts) takes them over the per-query columns at that
 * moment: in query order, skipping NaN values (undefined metrics, and the queries cut by a block boundary,
 * which are scored only at the end); weighted, Σ w·x / Σ w over the queries with both. So each partial mean
 * is the one recomputing from scratch would give, to the bit (test/engine/stream.test.ts). Mean of no
 * query: NaN. The final result never comes from here: it is computed over the finished columns.
 */
import type { MetricSummary } from '../evaluate/types';

export class PartialMeans {
  private readonly sum: Float64Array;
  private readonly total: Float64Array;
  private readonly counted: Float64Array;

  /** `weighted`: the means are weighted by query (a weight column), as the final ones. */
  constructor(private readonly keys: readonly string[], private readonly weighted: boolean) {
    this.sum = new Float64Array(keys.length);
    this.total = new Float64Array(keys.length);
    this.counted = new Float64Array(keys.length);
  }

  /** Adds queries [from, to) of the per-query columns (`weight` is read when the means are weighted). */
  add(values: readonly Float64Array[], weight: Float64Array | undefined, from: number, to: number): void {
    for (let m = 0; m < this.keys.length; m++) {
      const column = values[m]!;
      let sum = this.sum[m]!;
      let total = this.total[m]!;
      let counted = this.counted[m]!;
      for (let q = from; q < to; q++) {
        const v = column[q]!;
        if (!this.weighted || weight === undefined) {
          if (v === v) {
            sum += v;
            counted++;
          }
          continue;
        }
        const w = weight[q]!;
        if (v === v && w === w) {
          sum += w * v;
          total += w;
          counted++;
        }
      }
      this.sum[m] = sum;
      this.total[m] = total;
      this.counted[m] = counted;
    }
  }

  summary(): MetricSummary[] {
    return this.keys.map((key, m) => {
      const counted = this.counted[m]!;
      const mean = this.weighted ? (this.total[m]! > 0 ? this.sum[m]! / this.total[m]! : NaN) : counted > 0 ? this.sum[m]! / counted : NaN;
      return { key, mean, counted };
    });
  }
}
