/**
 * Multiple-testing adjustments for several metrics tested on the same pair of runs.
 * NaN p-values (a test that could not be run) stay NaN and do not count towards m.
 */

/**
 * Holm (1979), "A simple sequentially rejective multiple test procedure": with the m p-values sorted
 * ascending p(1) ≤ … ≤ p(m), the adjusted value is max over j ≤ i of min(1, (m − j + 1)·p(j)).
 */
export function holmAdjust(pValues: readonly number[]): number[] {
  const order = finiteOrder(pValues);
  const m = order.length;
  const out = pValues.map(() => Number.NaN);
  let running = 0;
  order.forEach((index, rank) => {
    running = Math.max(running, Math.min(1, (m - rank) * pValues[index]!));
    out[index] = running;
  });
  return out;
}

/**
 * Benjamini & Hochberg (1995) step-up false discovery rate: with p-values sorted ascending, the adjusted
 * value of p(i) is min over j ≥ i of min(1, m·p(j)/j).
 */
export function benjaminiHochbergAdjust(pValues: readonly number[]): number[] {
  const order = finiteOrder(pValues);
  const m = order.length;
  const out = pValues.map(() => Number.NaN);
  let running = 1;
  for (let rank = m - 1; rank >= 0; rank--) {
    const index = order[rank]!;
    running = Math.min(running, (m * pValues[index]!) / (rank + 1));
    out[index] = Math.min(1, running);
  }
  return out;
}

/** Indices of the finite p-values, ascending by value (stable for equal values). */
function finiteOrder(pValues: readonly number[]): number[] {
  const order: number[] = [];
  pValues.forEach((p, i) => {
    if (Number.isFinite(p)) order.push(i);
  });
  return order.sort((a, b) => pValues[a]! - pValues[b]! || a - b);
}
