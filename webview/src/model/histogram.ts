/**
 * Equal-width histogram binning for the per-query metric and per-query difference charts.
 *
 * Bin membership follows the usual convention (every bin half-open [lo, hi) except the last, which
 * is closed), computed the same way numpy.histogram does — an index from the scaled offset,
 * then corrected against the actual edge values — so counts agree exactly with a notebook even for
 * values that sit on an edge.
 */

export interface Histogram {
  /** binCount + 1 edges, ascending. */
  readonly edges: Float64Array;
  readonly counts: Uint32Array;
  /** Values that were NaN (skipped queries) and so are in no bin. */
  readonly missing: number;
  /** Finite values outside [edges[0], edges[last]] (only possible with an explicit range). */
  readonly outside: number;
}

export interface BinOptions {
  readonly bins: number;
  /** Explicit [lo, hi]; by default the finite values' min and max. */
  readonly range?: readonly [number, number];
}

export function binValues(values: ArrayLike<number>, options: BinOptions): Histogram {
  const bins = options.bins;
  if (!Number.isInteger(bins) || bins < 1) throw new RangeError(`bins must be a positive integer, got ${bins}`);
  let missing = 0;
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < values.length; i++) {
    const v = values[i]!;
    if (Number.isNaN(v)) {
      missing++;
      continue;
    }
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (options.range) [lo, hi] = options.range;
  if (!(lo <= hi) || !Number.isFinite(lo) || !Number.isFinite(hi)) {
    lo = 0;
    hi = 1;
  }
  // A single repeated value still gets a visible bar (same widening numpy applies).
  if (lo === hi) {
    lo -= 0.5;
    hi += 0.5;
  }
  const edges = new Float64Array(bins + 1);
  const step = (hi - lo) / bins;
  for (let i = 0; i < bins; i++) edges[i] = i * step + lo;
  edges[bins] = hi;
  const counts = new Uint32Array(bins);
  const norm = bins / (hi - lo);
  let outside = 0;
  for (let i = 0; i < values.length; i++) {
    const v = values[i]!;
    if (Number.isNaN(v)) continue;
    if (v < lo || v > hi) {
      outside++;
      continue;
    }
    counts[binIndex(v, lo, norm, edges, bins)]!++;
  }
  return { edges, counts, missing, outside };
}

function binIndex(v: number, lo: number, norm: number, edges: Float64Array, bins: number): number {
  let index = Math.trunc((v - lo) * norm);
  if (index === bins) index--;
  if (v < edges[index]!) index--;
  else if (index !== bins - 1 && v >= edges[index + 1]!) index++;
  return index;
}

/** A bin count that shows shape without noise: Sturges' rule (Sturges 1926), clamped to [5, 50]. */
export function suggestedBins(finiteCount: number): number {
  if (finiteCount <= 1) return 5;
  return Math.min(50, Math.max(5, Math.ceil(Math.log2(finiteCount) + 1)));
}

/** A range symmetric about zero, so a histogram of differences shows regressions and gains alike. */
export function symmetricRange(values: ArrayLike<number>): [number, number] {
  let m = 0;
  for (let i = 0; i < values.length; i++) {
    const v = Math.abs(values[i]!);
    if (Number.isFinite(v) && v > m) m = v;
  }
  return m === 0 ? [-0.5, 0.5] : [-m, m];
}

/** "[0.4500, 0.5000)" — the bin's interval, for tooltips; the last bin is closed. */
export function binLabel(h: Histogram, i: number, format: (x: number) => string): string {
  const last = i === h.counts.length - 1;
  return `[${format(h.edges[i]!)}, ${format(h.edges[i + 1]!)}${last ? ']' : ')'}`;
}
