import { describe, expect, it } from 'vitest';
import { conventionHelp, scoringSetupFrom } from '../../extension/cli/conventionArgs';
import { InputError } from '../../extension/engine/errors';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { DEFAULT_METRICS } from '../../extension/engine/metrics/registry';

function inputErrorOf(run: () => unknown): InputError {
  try {
    run();
  } catch (e) {
    if (e instanceof InputError) return e;
    throw e;
  }
  throw new Error('expected an InputError');
}

describe('shared scoring options', () => {
  it('gives the documented defaults when nothing is set', () => {
    const setup = scoringSetupFrom({});
    expect(setup.conventions).toEqual(DEFAULT_CONVENTIONS);
    expect(setup.metrics.map((m) => m.key).join(',')).toBe(DEFAULT_METRICS);
    expect(setup.read).toEqual({});
  });

  it('turns every option into reader options, metrics and conventions', () => {
    const setup = scoringSetupFrom(
      {
        'input-format': 'tsv',
        columns: 'query=search_id,item=sku,label=grade,score=p',
        judgments: 'judgments/grades.qrels',
        'judgments-columns': 'query=sid,item=pid,label=stars',
        'missing-queries': 'zero',
        scores: 'runs/a.sparse.scores',
        threads: '2',
        metrics: 'ndcg@5,rbp@20',
        gain: 'map:0=0,1=1,2=3',
        ties: 'optimistic',
        'no-relevant': 'zero',
        'relevant-from': '2',
        'max-grade': '4',
        'rbp-persistence': '0.95',
      },
      (p) => `/ws/${p}`,
    );
    expect(setup.read).toEqual({
      format: 'tsv',
      columns: { query: 'search_id', item: 'sku', label: 'grade', score: 'p' },
      judgments: '/ws/judgments/grades.qrels',
      judgmentsColumns: { query: 'sid', item: 'pid', label: 'stars' },
      missingQueries: 'zero',
      scores: '/ws/runs/a.sparse.scores',
      threads: 2,
    });
    expect(setup.metrics).toEqual([
      { name: 'ndcg', k: 5, key: 'ndcg@5' },
      { name: 'rbp', k: 20, key: 'rbp@20' },
    ]);
    expect(setup.conventions).toEqual({
      gain: { kind: 'map', gains: new Map([[0, 0], [1, 1], [2, 3]]) },
      ties: 'optimistic',
      noRelevant: 'zero',
      relevantFrom: 2,
      maxGrade: 4,
      rbpPersistence: 0.95,
      missingQueries: 'zero',
    });
  });

  it('prints the missing-queries policy with the conventions as soon as a judgments file is given', () => {
    expect(scoringSetupFrom({ judgments: 'grades.qrels' }).conventions.missingQueries).toBe('skip');
    expect(scoringSetupFrom({}).conventions.missingQueries).toBeUndefined();
    expect(() => scoringSetupFrom({ 'judgments-columns': 'query=sid' })).toThrow('--judgments-columns: expected --judgments FILE to go with it');
    expect(() => scoringSetupFrom({ judgments: 'g', 'missing-queries': 'some' })).toThrow('--missing-queries: expected one of skip, zero');
  });

  it('reads the earlier sparse-format value silently, and lists only the new one', () => {
    expect(scoringSetupFrom({ 'input-format': 'svmlight' }).read.format).toBe('sparse');
    expect(conventionHelp).toContain('sparse');
    expect(conventionHelp.toLowerCase()).not.toContain('svm');
  });

  it.each([
    ['input-format', 'xlsx', '--input-format'],
    ['ties', 'random', '--ties'],
    ['no-relevant', 'half', '--no-relevant'],
    ['gain', 'cubic', '--gain'],
    ['metrics', 'ndcg@ten', '--metrics'],
    ['columns', 'query', '--columns'],
    ['relevant-from', 'two', '--relevant-from'],
    ['max-grade', '0', '--max-grade'],
    ['rbp-persistence', '1', '--rbp-persistence'],
    ['rbp-persistence', '0', '--rbp-persistence'],
    ['threads', '1.5', '--threads'],
  ])('rejects --%s %s with a message naming the option and the value', (option, value, shown) => {
    const e = inputErrorOf(() => scoringSetupFrom({ [option]: value }));
    expect(e.message.startsWith(`${shown}: expected `)).toBe(true);
    expect(e.message).toContain(JSON.stringify(value));
  });
});
