import { describe, expect, it } from 'vitest';
import { BOOTSTRAP_STREAM, bootstrapMeanIntervals, quantileSorted } from '../../extension/engine/compare/bootstrap';
import { metricStream } from '../../extension/engine/compare/random';
import { seededRandom } from '../reference/random';

/**
 * The slow, obvious weighted bootstrap: per resample, draw n rows uniformly with replacement (the same
 * generator and draws as the engine), then Σ w·x / Σ w over the drawn rows, one row at a time.
 * Percentile interval with type-7 quantiles (Hyndman & Fan 1996). Efron & Tibshirani 1993, ch. 13.
 */
function slowWeightedInterval(x: number[], w: number[], resamples: number, seed: number): { low: number; high: number } {
  const n = x.length;
  const rng = metricStream(BOOTSTRAP_STREAM, seed, '');
  const counts = new Float64Array(n);
  const means: number[] = [];
  for (let r = 0; r < resamples; r++) {
    counts.fill(0);
    rng.countDraws(counts, n);
    let num = 0;
    let den = 0;
    for (let i = 0; i < n; i++) {
      for (let c = 0; c < counts[i]!; c++) {
        num += w[i]! * x[i]!;
        den += w[i]!;
      }
    }
    if (den > 0) means.push(num / den);
  }
  means.sort((a, b) => a - b);
  return { low: quantileSorted(means, 0.025), high: quantileSorted(means, 0.975) };
}

describe('weighted bootstrap of the mean', () => {
  it('matches the slow implementation on seeded random data, dense and mostly-zero columns', async () => {
    const random = seededRandom(77);
    for (const n of [5, 40, 300]) {
      const dense = Array.from({ length: n }, () => random() * 2 - 1);
      const sparse = Array.from({ length: n }, () => (random() < 0.8 ? 0 : random() - 0.3));
      const w = Array.from({ length: n }, (_, i) => (i % 7 === 0 ? 0 : random() * 4));
      const found = await bootstrapMeanIntervals([Float64Array.from(dense), Float64Array.from(sparse)],
        { resamples: 500, seed: 9, weights: Float64Array.from(w) });
      const slowDense = slowWeightedInterval(dense, w, 500, 9);
      const slowSparse = slowWeightedInterval(sparse, w, 500, 9);
      expect(found[0]!.low).toBeCloseTo(slowDense.low, 12);
      expect(found[0]!.high).toBeCloseTo(slowDense.high, 12);
      expect(found[1]!.low).toBeCloseTo(slowSparse.low, 12);
      expect(found[1]!.high).toBeCloseTo(slowSparse.high, 12);
    }
  });

  it('equal weights give the unweighted interval (invariant), unequal weights move it', async () => {
    const random = seededRandom(5);
    const x = Float64Array.from({ length: 200 }, (_, i) => (i < 50 ? 1 : 0) + random() * 0.1);
    const plain = await bootstrapMeanIntervals([x], { resamples: 400, seed: 3 });
    const equal = await bootstrapMeanIntervals([x], { resamples: 400, seed: 3, weights: new Float64Array(200).fill(2.5) });
    expect(equal[0]!.low).toBeCloseTo(plain[0]!.low, 12);
    expect(equal[0]!.high).toBeCloseTo(plain[0]!.high, 12);
    // Weighting the first 50 rows (values near 1) ten times pulls the interval up.
    const heavy = await bootstrapMeanIntervals([x], { resamples: 400, seed: 3, weights: Float64Array.from(x, (_, i) => (i < 50 ? 10 : 1)) });
    expect(heavy[0]!.low).toBeGreaterThan(plain[0]!.high);
  });
});
