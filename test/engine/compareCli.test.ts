/**
 * `gainline compare` as users run it (dist/cli.js, built by `npm run build`): exit codes 0 / 1 / 2 and
 * the report formats, on small fixture runs of an invented hardware store's product search.
 */
import { describe, expect, it } from 'vitest';
import { compareUsage } from '../../extension/cli/compareCommand';
import { fixtureDir, runCli } from '../cli/support/runCli';

const QUERIES = ['cordless drill 18v', 'wood screws 4x40', 'hex key set', 'paint roller 9in', 'tile spacers 3mm', 'pipe wrench 14in'];

/** 24 queries × 4 items; item p0 (grade 2) is the only relevant one. `sinkFrom` = queries where p0 is scored last. */
function runCsv(sinkFrom: number, extraQuery?: string): string {
  const lines = ['query,product_id,grade,score'];
  for (let q = 0; q < 24; q++) {
    const name = `${QUERIES[q % QUERIES.length]} #${q}`;
    for (let i = 0; i < 4; i++) {
      const top = i === 0 ? (q >= sinkFrom ? 0.05 : 0.95) : 0.5 - i / 10;
      lines.push(`${name},p${i},${i === 0 ? 2 : 0},${top}`);
    }
  }
  if (extraQuery) lines.push(`${extraQuery},p0,1,0.3`);
  return lines.join('\n') + '\n';
}

// good.csv ranks p0 first everywhere; worse.csv sinks it in 20 of the 24 queries.
const dir = fixtureDir({
  'good.csv': runCsv(24, 'sanding discs 120'),
  'worse.csv': runCsv(4, 'measuring tape 5m'),
  'empty.csv': 'query,product_id,grade,score\n',
});

describe('gainline compare exit codes', () => {
  it('exits 1 with --fail-if-worse when B is significantly worse on the headline metric', () => {
    const r = runCli(['compare', 'good.csv', 'worse.csv', '--fail-if-worse', '0.05', '--permutations', '2000'], dir);
    expect(r.stderr).toMatch(/B is worse than A on ndcg@10/);
    expect(r.code).toBe(1);
    expect(r.stdout).toMatch(/24 queries in both runs \(1 only in A, 1 only in B\)/);
  });

  it('exits 0 when B is better, or worse but not at the level asked', () => {
    expect(runCli(['compare', 'worse.csv', 'good.csv', '--fail-if-worse', '0.05'], dir).code).toBe(0);
    // 20 of 24 sunk: the randomization p is about 2^-20·(number of patterns as extreme), far below 1e-3,
    // but with only 50 random patterns the smallest reachable p is 1/51 ≈ 0.0196 > 0.01.
    expect(runCli(['compare', 'good.csv', 'worse.csv', '--fail-if-worse', '0.01', '--permutations', '50'], dir).code).toBe(0);
    expect(runCli(['compare', 'good.csv', 'worse.csv'], dir).code).toBe(0);
  });

  it.each([
    [['compare', 'good.csv'], /two runs/],
    [['compare', 'good.csv', 'missing.csv'], /missing\.csv.*not found/],
    [['compare', 'good.csv', 'worse.csv', '--permutations', 'many'], /--permutations/],
    [['compare', 'good.csv', 'worse.csv', '--fail-if-worse', '5'], /--fail-if-worse/],
    [['compare', 'good.csv', 'worse.csv', '--format', 'html'], /--format/],
    [['compare', 'good.csv', 'worse.csv', '--metrics', 'ndcg@ten'], /--metrics/],
    [['compare', 'good.csv', 'empty.csv'], /empty\.csv/],
  ])('exits 2 with one line for bad input: %j', (args, message) => {
    const r = runCli(args, dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(message);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
  });
});

describe('gainline compare output', () => {
  it('help gives the bootstrap default, 2000 resamples', () => {
    expect(compareUsage).toMatch(/--bootstrap N .*\(default 2000; 0 = none\)/);
  });

  it('JSON carries the hand-derived means and counts', () => {
    const r = runCli(['compare', 'good.csv', 'worse.csv', '--format', 'json', '--metrics', 'rr,p@1', '--bootstrap', '500'], dir);
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.matching).toMatchObject({ common: 24, onlyInA: 1, onlyInB: 1, onlyInAExamples: ['sanding discs 120'] });
    const [rr, p1] = out.metrics;
    // A: p0 first everywhere -> RR 1. B: p0 last (position 4) in 20 queries -> RR 1/4 there.
    expect(rr.meanA).toBe(1);
    expect(rr.meanB).toBeCloseTo((4 + 20 * 0.25) / 24, 12);
    expect([rr.wins, rr.ties, rr.losses]).toEqual([0, 4, 20]);
    expect(p1.meanDelta).toBeCloseTo(-20 / 24, 12);
    // All 20 non-zero differences equal −0.75: Wilcoxon uses the normal approximation (ties), zeros dropped.
    expect(rr.wilcoxon).toMatchObject({ nonZero: 20, zeros: 4, method: 'normal' });
    expect(out.perQuery.query).toHaveLength(24);
    expect(out.perQuery.b.rr[23]).toBe(0.25);
  });

  it('Markdown has the summary table and the biggest regressions', () => {
    const r = runCli(['compare', 'good.csv', 'worse.csv', '--format', 'markdown', '--top', '2', '--bootstrap', '200'], dir);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/^\| metric \| A \| B \| Δ \| 95% CI \| p \(t\) \| p \(Wilcoxon\) \| p \(randomization\) \| Holm \| BH \| wins \/ ties \/ losses \|$/m);
    expect(r.stdout).toMatch(/#### Biggest regressions in ndcg@10\n\n(.*\n){2}\| 1 \| .* #4 \|/);
    expect(r.stdout).toMatch(/#### Biggest improvements in ndcg@10\n\nNone\./);
  });
});
