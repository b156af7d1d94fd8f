/** Each query's share of the total loss on a metric bounded by 1 (the worst-queries list and --sort loss-share). */

/** (1 − v_q) / Σ(1 − v) over queries with a value, for the headline metric (NaN when skipped or Σ = 0). */
export function lossShares(headlineValues: Float64Array): Float64Array {
  let total = 0;
  for (const v of headlineValues) if (Number.isFinite(v)) total += 1 - v;
  const out = new Float64Array(headlineValues.length);
  for (let q = 0; q < out.length; q++) {
    const v = headlineValues[q]!;
    out[q] = Number.isFinite(v) && total > 0 ? (1 - v) / total : NaN;
  }
  return out;
}
