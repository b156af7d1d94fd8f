// Every format the demo run is written in scores the same as its CSV.
import { describe, expect, it } from 'vitest';
import { runCli } from './support/runCli';

function evalMeans(args: string[]): Record<string, number> {
  const r = runCli(['eval', ...args, '--format', 'json', '--metrics', 'ndcg@10,ap,rr,tau']);
  expect(r.stderr, args.join(' ')).toBe('');
  expect(r.code, args.join(' ')).toBe(0);
  return JSON.parse(r.stdout).summary;
}

describe('demo data formats', () => {
  it('scores the same in every format it is written in', () => {
    const csvA = evalMeans(['demo/runs/model-a.csv']);
    expect(evalMeans(['demo/runs/model-a.jsonl.gz'])).toEqual(csvA);
    expect(evalMeans(['demo/runs/model-a.run', '--judgments', 'demo/judgments/grades.qrels'])).toEqual(csvA);
    expect(evalMeans(['demo/runs/model-a.sparse', '--scores', 'demo/runs/model-a.sparse.scores'])).toEqual(csvA);
    expect(evalMeans(['demo/runs/model-b.parquet'])).toEqual(evalMeans(['demo/runs/model-b.csv']));
  });
});
