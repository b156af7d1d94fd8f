/**
 * The grade range metrics use (ERR's g_max, the gain check): hand-derived cases for the rule that an
 * unjudged row counts as grade 0, and ranges summarised in parts adding up to the whole.
 */
import { describe, expect, it } from 'vitest';
import { addSummaries, gradeRangeOf, summariseRows } from '../../extension/engine/model/rowSummary';

const f64 = (xs: number[]) => Float64Array.from(xs);

describe('row summaries', () => {
  it('counts gaps and finds the judged extremes', () => {
    expect(summariseRows(f64([2, NaN, 4, 1]), f64([0.5, 0.1, NaN, NaN]), 0, 4)).toEqual({ unjudged: 1, missing: 2, lowest: 1, highest: 4 });
  });

  it('counts unjudged rows as grade 0 and an all-unjudged dump as 0..0', () => {
    const judged = summariseRows(f64([2, 3]), f64([1, 2]), 0, 2);
    expect(gradeRangeOf(judged)).toEqual({ lowest: 2, highest: 3 });
    expect(gradeRangeOf({ ...judged, unjudged: 1 })).toEqual({ lowest: 0, highest: 3 });
    expect(gradeRangeOf(summariseRows(f64([NaN, NaN]), f64([1, 2]), 0, 2))).toEqual({ lowest: 0, highest: 0 });
    expect(gradeRangeOf(summariseRows(f64([]), f64([]), 0, 0))).toEqual({ lowest: 0, highest: 0 });
    // Negative grades stay below 0 when some rows are unjudged.
    expect(gradeRangeOf(summariseRows(f64([-2, NaN]), f64([1, 2]), 0, 2))).toEqual({ lowest: -2, highest: 0 });
  });

  it('adds up ranges to the summary of the whole', () => {
    const label = f64([3, NaN, 0, 1, NaN, 4, 2]);
    const score = f64([NaN, 1, 2, NaN, 3, 4, 5]);
    expect(addSummaries([summariseRows(label, score, 0, 3), summariseRows(label, score, 3, 3), summariseRows(label, score, 3, 7)]))
      .toEqual(summariseRows(label, score, 0, 7));
  });
});
