/**
 * Percentile bootstrap confidence interval of a mean (Efron & Tibshirani 1993, ch. 13), for paired
 * per-query differences. Several columns that share the same queries are resampled with the SAME
 * drawn queries (one index draw feeds every column), which is both cheaper and keeps the metrics'
 * intervals consistent with each other. The draws come from `metricStream('bootstrap', seed, '')`, the
 * same for every metric, so one metric's interval is the same whether it is resampled alone or beside
 * others, in any order. (A stream per metric was measured: 2.8× slower over 10k queries × 8 metrics and
 * 9× over 100k, where each index draw misses the cache, for no gain in that independence.)
 *
 * Quantiles use linear interpolation between order statistics (Hyndman & Fan 1996 type 7, the common
 * default of numerical libraries).
 */
import { Pacer, type LoopControl } from './pacer';
import { metricStream } from './random';

export const BOOTSTRAP_STREAM = 'bootstrap';

export interface BootstrapOptions extends LoopControl {
  readonly resamples: number;
  readonly seed: number;
  /** Two-sided confidence level; 0.95 by default. */
  readonly level?: number;
  /**
   * Per-row weights (same length as the columns): each resample's statistic is then the weighted mean
   * Σ c_i·w_i·x_i / Σ c_i·w_i, rows still drawn uniformly with replacement (the plain bootstrap of the
   * weighted-mean estimator). A resample whose drawn weights sum to 0 has no mean and is left out.
   */
  readonly weights?: Float64Array;
}

export interface Interval {
  readonly low: number;
  readonly high: number;
}


/** One interval per column; every column must have the same length. NaN bounds when there are no values. */
export async function bootstrapMeanIntervals(columns: readonly Float64Array[], options: BootstrapOptions): Promise<Interval[]> {
  const m = columns.length;
  const n = m === 0 ? 0 : columns[0]!.length;
  const resamples = Math.max(0, Math.floor(options.resamples));
  if (n === 0 || resamples === 0) return columns.map(() => ({ low: Number.NaN, high: Number.NaN }));
  for (const column of columns) if (column.length !== n) throw new RangeError('bootstrap columns differ in length');
  const weights = options.weights;
  if (weights !== undefined && weights.length !== n) throw new RangeError('bootstrap weights differ in length from the columns');
  // Weighted: sum w·x over the drawn rows and divide by the drawn weight instead of by n.
  const summed = weights === undefined ? columns : columns.map((c) => c.map((x, i) => x * weights[i]!));

  const means = columns.map(() => new Float64Array(resamples));
  const sparse = summed.map(nonZeroPart);
  const counts = new Float64Array(n);
  const rng = metricStream(BOOTSTRAP_STREAM, options.seed, '');
  const pacer = new Pacer(options, resamples);
  // About a few million multiply-adds between two cancellation checks, whatever the data size.
  const checkEvery = Math.max(1, Math.floor(4_000_000 / (n * (m + 1))));
  for (let done = 0; done < resamples; ) {
    const end = Math.min(resamples, done + checkEvery);
    for (; done < end; done++) {
      // One resample as multiplicities, then one sequential pass per column.
      counts.fill(0);
      rng.countDraws(counts, n);
      const divisor = weights === undefined ? n : weightedSum(counts, weights);
      for (let j = 0; j < m; j++) {
        const part = sparse[j];
        means[j]![done] = (part ? sparseWeightedSum(counts, part.rows, part.values) : weightedSum(counts, summed[j]!)) / divisor;
      }
    }
    await pacer.tick(done);
  }
  pacer.finish();
  const alpha = 1 - (options.level ?? 0.95);
  return means.map((all) => {
    const column = weights === undefined ? all : all.filter((x) => !Number.isNaN(x));
    column.sort();
    return { low: quantileSorted(column, alpha / 2), high: quantileSorted(column, 1 - alpha / 2) };
  });
}

/**
 * Rows where a column is zero add nothing to its resampled sums. Two runs often agree exactly on many
 * queries (same top of the list), so such columns are summed over their non-zero rows only.
 */
function nonZeroPart(column: Float64Array): { rows: Uint32Array; values: Float64Array } | undefined {
  let nonZero = 0;
  for (let i = 0; i < column.length; i++) if (column[i] !== 0) nonZero++;
  if (nonZero > column.length * 0.6) return undefined;
  const rows = new Uint32Array(nonZero);
  const values = new Float64Array(nonZero);
  for (let i = 0, k = 0; i < column.length; i++) {
    if (column[i] !== 0) {
      rows[k] = i;
      values[k++] = column[i]!;
    }
  }
  return { rows, values };
}

function sparseWeightedSum(counts: Float64Array, rows: Uint32Array, values: Float64Array): number {
  let s0 = 0;
  let s1 = 0;
  let k = 0;
  for (; k + 1 < rows.length; k += 2) {
    s0 += counts[rows[k]!]! * values[k]!;
    s1 += counts[rows[k + 1]!]! * values[k + 1]!;
  }
  if (k < rows.length) s0 += counts[rows[k]!]! * values[k]!;
  return s0 + s1;
}

/** Σ counts[i]·values[i] with four accumulators, so the additions do not wait on each other. */
function weightedSum(counts: Float64Array, values: Float64Array): number {
  const n = values.length;
  let s0 = 0;
  let s1 = 0;
  let s2 = 0;
  let s3 = 0;
  let i = 0;
  for (; i + 3 < n; i += 4) {
    s0 += counts[i]! * values[i]!;
    s1 += counts[i + 1]! * values[i + 1]!;
    s2 += counts[i + 2]! * values[i + 2]!;
    s3 += counts[i + 3]! * values[i + 3]!;
  }
  for (; i < n; i++) s0 += counts[i]! * values[i]!;
  return s0 + s1 + s2 + s3;
}

/** Type-7 quantile of an ascending array. */
export function quantileSorted(sorted: ArrayLike<number>, q: number): number {
  const n = sorted.length;
  if (n === 0) return Number.NaN;
  const position = (n - 1) * q;
  const below = Math.floor(position);
  const above = Math.min(n - 1, below + 1);
  const fraction = position - below;
  return sorted[below]! + fraction * (sorted[above]! - sorted[below]!);
}
