// The committed demo data is what the generator makes, and every format of it scores the same.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { REPO, runCli } from './support/runCli';

function evalMeans(args: string[]): Record<string, number> {
  const r = runCli(['eval', ...args, '--format', 'json', '--metrics', 'ndcg@10,ap,rr,tau']);
  expect(r.stderr, args.join(' ')).toBe('');
  expect(r.code, args.join(' ')).toBe(0);
  return JSON.parse(r.stdout).summary;
}

describe('demo data', () => {
  it('is byte-identical to a fresh run of the generator (deterministic, and committed up to date)', () => {
    const dir = mkdtempSync(join(tmpdir(), 'gainline-demo-'));
    execFileSync(process.execPath, [join(REPO, 'test/support/make-demo-data.mjs'), '--dir', dir]);
    for (const sub of ['runs', 'judgments']) {
      const names = readdirSync(join(dir, sub)).sort();
      expect(names.length).toBeGreaterThan(0);
      for (const name of names) {
        expect(readFileSync(join(dir, sub, name)).equals(readFileSync(join(REPO, 'demo', sub, name))), `${sub}/${name}`).toBe(true);
      }
    }
  });

  it('has what the walkthrough promises: queries with nothing relevant, tied scores, duplicate rows, model B ahead on average', () => {
    const r = runCli(['eval', 'demo/runs/model-b.csv', '--format', 'json']);
    expect(r.code).toBe(0);
    const b = JSON.parse(r.stdout);
    expect(b.queryCount).toBe(300);
    expect(b.degenerate.noRelevantQueries).toBeGreaterThan(0);
    expect(b.degenerate.tiedScoreRows).toBeGreaterThan(0);
    expect(b.degenerate.duplicateRows).toBeGreaterThan(0);
    const a = evalMeans(['demo/runs/model-a.csv']);
    expect(b.summary['ndcg@10']).toBeGreaterThan(a['ndcg@10']!);
    // …but not everywhere: some queries are worse under B.
    const aQueries = JSON.parse(runCli(['eval', 'demo/runs/model-a.csv', '--format', 'json', '--metrics', 'ndcg@10']).stdout).queries;
    const worse = b.queries.filter((q: { 'ndcg@10': number | null }, i: number) => q['ndcg@10'] !== null && q['ndcg@10'] < aQueries[i]['ndcg@10'] - 0.05);
    expect(worse.length).toBeGreaterThan(10);
  });

});
