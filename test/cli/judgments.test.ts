/**
 * Judgments files on the command line (dist/cli.js): any format with --judgments, the missing-queries
 * policy, and compare's per-run inputs. Expected values are derived by hand from the fixture files.
 */
import { describe, expect, it } from 'vitest';
import { compareUsage } from '../../extension/cli/compareCommand';
import { evalUsage } from '../../extension/cli/evalCommand';
import { fixtureDir, runCli } from './support/runCli';

// One hardware-store query: the run returns d1 (score 3) and d2 (score 2); d3 (grade 3) is judged but not returned.
const dir = fixtureDir({
  'run.csv': 'query,item,score\ncordless drill,d1,3.0\ncordless drill,d2,2.0\n',
  'run.txt': 'cordless-drill Q0 d1 1 3.0 demo\ncordless-drill Q0 d2 2 2.0 demo\n',
  'grades.tsv': 'query\titem\tgrade\ncordless drill\td1\t0\ncordless drill\td2\t1\ncordless drill\td3\t3\nhex key\td9\t2\n',
  'grades.qrels': 'cordless-drill 0 d1 0\ncordless-drill 0 d2 1\ncordless-drill 0 d3 3\nhex-key 0 d9 2\n',
  'kinder.qrels': 'cordless-drill 0 d1 0\ncordless-drill 0 d2 1\n',
});
// NDCG@10 = (1/log2 3) / (7 + 1/log2 3), derived by hand (exponential gain).
const ndcg = (1 / Math.log2(3)) / (7 + 1 / Math.log2(3));

describe('gainline eval with a judgments file', () => {
  it('a CSV without grades takes them from a TSV judgments table; the unretrieved item counts in the ideal', () => {
    const r = runCli(['eval', 'run.csv', '--judgments', 'grades.tsv', '--metrics', 'ndcg@10', '--format', 'json'], dir);
    expect(r.stderr).toBe('');
    const doc = JSON.parse(r.stdout);
    expect(doc.summary['ndcg@10']).toBe(ndcg);
    expect(doc.judgments).toMatchObject({ unretrieved: 1, absentQueries: 1, absentExamples: ['hex key'], missingQueries: 'skip' });
    expect(doc.queries[0]).toMatchObject({ query: 'cordless drill', notRetrieved: 1, relevant: 2 });
    expect(doc.conventions.missingQueries).toBe('skip');
  });

  it('--missing-queries zero scores the judged query the run lacks as 0 and prints the policy', () => {
    const r = runCli(['eval', 'run.txt', '--judgments', 'grades.qrels', '--metrics', 'ndcg@10', '--missing-queries', 'zero'], dir);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain(`ndcg@10  ${(ndcg / 2).toFixed(4)}        2`);
    expect(r.stdout).toContain('missing queries: zero');
    expect(r.stdout).toMatch(/1 judged query has no row in the run \(e\.g\. hex-key\); each scores 0 on every metric/);
    expect(r.stdout).toMatch(/1 judged item was never retrieved by the run/);
  });

  it('the CSV report has each query\'s count of judged items never retrieved', () => {
    const r = runCli(['eval', 'run.csv', '--judgments', 'grades.tsv', '--metrics', 'ndcg@10', '--format', 'csv'], dir);
    expect(r.stdout).toBe(`query,items,relevant,notRetrieved,skipped,ndcg@10\ncordless drill,2,2,1,false,${ndcg}\n`);
  });

  it('--missing-queries without a judgments file is a usage error naming the option', () => {
    const r = runCli(['eval', 'run.csv', '--missing-queries', 'zero'], dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('--missing-queries: expected --judgments FILE to go with it (found "zero")\n');
  });

  it('help lists the options', () => {
    for (const option of ['--judgments FILE', '--judgments-columns', '--missing-queries']) expect(evalUsage).toContain(option);
    for (const option of ['--judgments-a FILE', '--judgments-b FILE', '--input-format-a F']) expect(compareUsage).toContain(option);
  });
});

describe('gainline compare with per-run inputs', () => {
  it('two formats: a run file with judgment lines against a CSV with a judgments table, the same data, no difference', () => {
    const sameIds = fixtureDir({
      'a.txt': 'cordless-drill Q0 d1 1 3.0 demo\ncordless-drill Q0 d2 2 2.0 demo\n',
      'a.qrels': 'cordless-drill 0 d1 0\ncordless-drill 0 d2 1\ncordless-drill 0 d3 3\n',
      'b.csv': 'query,item,score\ncordless-drill,d1,3.0\ncordless-drill,d2,2.0\n',
      'b.csv.grades': 'query,item,grade\ncordless-drill,d1,0\ncordless-drill,d2,1\ncordless-drill,d3,3\n',
    });
    const r = runCli(['compare', 'a.txt', 'b.csv', '--judgments-a', 'a.qrels', '--judgments-b', 'b.csv.grades', '--metrics', 'ndcg@10',
      '--format', 'json', '--bootstrap', '0', '--permutations', '10'], sameIds);
    expect(r.stderr).toBe('');
    const doc = JSON.parse(r.stdout);
    expect(doc.matching).toMatchObject({ common: 1, onlyInA: 0, onlyInB: 0 });
    expect(doc.metrics[0]).toMatchObject({ key: 'ndcg@10', paired: 1, meanA: ndcg, meanB: ndcg, meanDelta: 0 });
  });

  it('two judgments files: B judged more kindly (d3 not judged) scores higher on the same run', () => {
    const r = runCli(['compare', 'run.txt', 'run.txt', '--judgments-a', 'grades.qrels', '--judgments-b', 'kinder.qrels', '--metrics', 'ndcg@10',
      '--bootstrap', '0', '--permutations', '10'], dir);
    expect(r.stderr).toBe('');
    // A: the hand-derived NDCG; B: d2 (grade 1) at position 2 against ideal d2 at position 1 = 1/log2 3.
    expect(r.stdout).toContain(`ndcg@10  ${ndcg.toFixed(4)}  ${(1 / Math.log2(3)).toFixed(4)}`);
  });
});
