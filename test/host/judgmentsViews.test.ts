/**
 * The editor's view models with labels from a judgments file: the query detail's ideal list holds the
 * judged items the run never retrieved, marked, at their ideal places; the overview counts them. Values
 * derived by hand from the three-item example (d3, grade 3, judged but not retrieved).
 */
import { describe, expect, it } from 'vitest';
import { queryDetail } from '../../extension/engine/evaluate/detail';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { groupByQuery } from '../../extension/engine/model/groups';
import { QueryTable } from '../../extension/worker/queryTable';
import { detailView, overviewModel } from '../../extension/worker/viewModels';
import { joined } from '../engine/judgedSets';

describe('view models with judged items never retrieved', () => {
  const dump = joined(
    [{ query: 'cordless drill', item: 'd1', label: NaN, score: 3 }, { query: 'cordless drill', item: 'd2', label: NaN, score: 2 }],
    [{ query: 'cordless drill', item: 'd1', grade: 0 }, { query: 'cordless drill', item: 'd2', grade: 1 }, { query: 'cordless drill', item: 'd3', grade: 3 },
      { query: 'hex key', item: 'd9', grade: 2 }],
  );
  const evaluation = evaluate(dump, parseMetricList('ndcg@10,ap'), DEFAULT_CONVENTIONS);
  const groups = groupByQuery(dump);

  it('the ideal list puts d3 first, not retrieved, and the listed items after it', () => {
    const view = detailView(dump, evaluation, queryDetail(dump, 0, DEFAULT_CONVENTIONS, 10, { groups }), 0, new QueryTable({ dump, evaluation, groups }));
    expect(view.ideal.map((v) => [v.position, v.item, v.retrieved, v.predictedPosition])).toEqual([
      [1, 'd3', false, 0], [2, 'd2', true, 2], [3, 'd1', true, 1],
    ]);
  });

  it('the overview counts the unretrieved item and the missing query, and prints the policy', () => {
    const model = overviewModel(dump, evaluation, 0);
    expect(model.judgments).toEqual({ unretrieved: 1, absentQueries: 1, missingQueries: 'skip', disagreements: 0 });
    expect(model.warnings.join(' ')).toMatch(/1 judged item was never retrieved by the run/);
    expect(evaluation.conventions.missingQueries).toBe('skip');
  });
});
