/**
 * `gainline compare BASE C1 C2 …` as users run it (dist/cli.js): every unadjusted figure of a candidate
 * equals the two-run `compare BASE C` with the same seed (whose figures test/engine/compare.test.ts and
 * the scipy checks cover), queries present in only some runs are counted per candidate, and
 * --fail-if-worse gates on any candidate. Invented hardware store queries.
 */
import { describe, expect, it } from 'vitest';
import { fixtureDir, runCli } from '../cli/support/runCli';

const NAMES = ['cordless drill 18v', 'wood screws 4x40', 'hex key set', 'paint roller 9in', 'tile spacers 3mm', 'pipe wrench 14in'];

/** 30 queries × 5 items with seeded scores; `shift` moves the relevant items up or down, `drop` omits queries. */
function run(seed: number, shift: number, drop: readonly number[] = [], extra?: string): string {
  let state = seed;
  const random = () => ((state = (Math.imul(state, 1103515245) + 12345) >>> 0) / 2 ** 32);
  const lines = ['query,product_id,grade,score'];
  for (let q = 0; q < 30; q++) {
    if (drop.includes(q)) continue;
    for (let i = 0; i < 5; i++) {
      const grade = (q + i) % 4 === 0 ? 2 : i % 3 === 0 ? 1 : 0;
      lines.push(`${NAMES[q % NAMES.length]} #${q},p${i},${grade},${(random() + shift * grade).toFixed(6)}`);
    }
  }
  if (extra) lines.push(`${extra},p0,1,0.5`);
  return lines.join('\n') + '\n';
}

const dir = fixtureDir({
  'base.csv': run(1, 0),
  'better.csv': run(2, 0.4),
  'worse.csv': run(3, -0.6, [3, 4], 'sanding discs 120'),
  'same.csv': run(1, 0),
  // One grade 3 where the others top out at 2: ERR's shared g_max differs for this pair.
  'higher-grade.csv': run(4, 0.2).replace('\n', '\ncordless drill 18v #0,p9,3,0.99\n'),
});
const STATS = ['--permutations', '3000', '--bootstrap', '400', '--seed', '7', '--metrics', 'ndcg@5,rr,ap'];

function json(args: string[]): any {
  const r = runCli([...args, '--format', 'json', ...STATS], dir);
  expect(r.stderr).toBe('');
  expect(r.code).toBe(0);
  return JSON.parse(r.stdout);
}

describe('gainline compare with several candidates', () => {
  const many = json(['compare', 'base.csv', 'better.csv', 'worse.csv', 'same.csv']);

  it('has one entry per candidate whose unadjusted fields equal the two-run comparison, field by field', () => {
    expect(many.candidates.map((c: any) => c.run)).toEqual(['better.csv', 'worse.csv', 'same.csv']);
    for (const candidate of many.candidates) {
      const pair = json(['compare', 'base.csv', candidate.run]);
      expect(candidate.matching).toEqual(pair.matching);
      expect(candidate.metrics).toHaveLength(pair.metrics.length);
      candidate.metrics.forEach((metric: any, m: number) => {
        const two = pair.metrics[m];
        const unadjusted = (x: any) => {
          const { tTest, wilcoxon, randomization, ...rest } = x;
          const drop = ({ adjusted: _a, ...keep }: any) => keep;
          return { ...rest, tTest: drop(tTest), wilcoxon: drop(wilcoxon), randomization: drop(randomization) };
        };
        for (const [field, value] of Object.entries(unadjusted(two))) {
          expect(unadjusted(metric)[field], `${candidate.run} ${metric.key} ${field}`).toEqual(value);
        }
      });
    }
  });

  it('adjusts across candidates × metrics: Holm is never below the pair-level Holm, nor below the raw p', () => {
    expect(many.adjustment).toEqual({ family: 'candidates × metrics', tests: 9, methods: ['holm', 'benjaminiHochberg'] });
    for (const candidate of many.candidates) {
      const pair = json(['compare', 'base.csv', candidate.run]);
      candidate.metrics.forEach((metric: any, m: number) => {
        for (const test of ['tTest', 'wilcoxon', 'randomization']) {
          if (metric[test].p === null) continue;
          expect(metric[test].adjusted.holm).toBeGreaterThanOrEqual(pair.metrics[m][test].adjusted.holm - 1e-15);
          expect(metric[test].adjusted.benjaminiHochberg).toBeGreaterThanOrEqual(metric[test].p);
        }
      });
    }
  });

  it('ranks by the headline mean Δ and counts queries found in only some runs, with examples', () => {
    expect(many.ranking.order).toEqual(['better.csv', 'same.csv', 'worse.csv']);
    expect(many.candidates.map((c: any) => c.rank)).toEqual([1, 3, 2]);
    const worse = many.candidates[1];
    expect(worse.matching).toMatchObject({ common: 28, onlyInA: 2, onlyInB: 1, onlyInBExamples: ['sanding discs 120'] });
    expect(worse.matching.onlyInAExamples).toEqual(['paint roller 9in #3', 'tile spacers 3mm #4']);
    expect(many.queries).toEqual({ baseline: 30, inEveryRun: 28 });
  });

  it('table, Markdown and CSV name every candidate; CSV has one row per candidate × metric', () => {
    const args = ['compare', 'base.csv', 'better.csv', 'worse.csv', 'same.csv', ...STATS];
    const table = runCli(args, dir).stdout;
    expect(table).toMatch(/worse\.csv: 28 shared; 2 only in the baseline \(e\.g\. "paint roller 9in #3", "tile spacers 3mm #4"\); 1 only in the candidate/);
    expect(runCli([...args, '--format', 'markdown'], dir).stdout).toMatch(/^#### ndcg@5\n\n\| rank \| candidate \|/m);
    const csv = runCli([...args, '--format', 'csv'], dir).stdout.trim().split('\n');
    expect(csv).toHaveLength(1 + 3 * 3);
    expect(csv[1]).toMatch(/^better\.csv,1,ndcg@5,30,/);
  });

  it('--fail-if-worse exits 1 when any candidate is worse, naming it', () => {
    const r = runCli(['compare', 'base.csv', 'better.csv', 'worse.csv', '--fail-if-worse', '0.05', ...STATS], dir);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/^gainline compare: worse\.csv is worse than the baseline on ndcg@5 .*Holm-adjusted/);
    expect(runCli(['compare', 'base.csv', 'better.csv', 'same.csv', '--fail-if-worse', '0.05', ...STATS], dir).code).toBe(0);
  });

  it('a missing candidate is one line naming it, exit 2', () => {
    const r = runCli(['compare', 'base.csv', 'better.csv', 'gone.csv', ...STATS], dir);
    expect(r.code).toBe(2);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/gone\.csv/);
  });
});

describe('the baseline scored once per set of shared conventions', () => {
  it("with ERR, a candidate with a higher grade gets the baseline scored on that pair's scale, as the two-run comparison does", () => {
    const args = ['--metrics', 'err@5,ndcg@5', '--permutations', '500', '--bootstrap', '100', '--format', 'json'];
    const many = JSON.parse(runCli(['compare', 'base.csv', 'better.csv', 'higher-grade.csv', 'same.csv', ...args], dir).stdout);
    expect(many.candidates.map((c: any) => c.conventions.maxGrade)).toEqual([2, 3, 2]);
    for (const candidate of many.candidates) {
      const pair = JSON.parse(runCli(['compare', 'base.csv', candidate.run, ...args], dir).stdout);
      candidate.metrics.forEach((metric: any, m: number) => {
        expect([metric.meanA, metric.meanB, metric.tTest.t, metric.randomization.p]).toEqual(
          [pair.metrics[m].meanA, pair.metrics[m].meanB, pair.metrics[m].tTest.t, pair.metrics[m].randomization.p]);
      });
    }
    // The baseline's ERR differs between the two scales, so a reused evaluation would have shown here.
    expect(many.candidates[1].metrics[0].meanA).not.toBe(many.candidates[0].metrics[0].meanA);
  });
});

describe('gainline compare A B --format csv', () => {
  it('one row per metric with the pair-level adjustments of the JSON report', () => {
    const pair = json(['compare', 'base.csv', 'worse.csv']);
    const lines = runCli(['compare', 'base.csv', 'worse.csv', '--format', 'csv', ...STATS], dir).stdout.trim().split('\n');
    const header = lines[0]!.split(',');
    expect(lines).toHaveLength(4);
    lines.slice(1).forEach((line, m) => {
      const cells = Object.fromEntries(line.split(',').map((cell, i) => [header[i], cell]));
      expect(cells.metric).toBe(pair.metrics[m].key);
      expect(Number(cells.delta)).toBe(pair.metrics[m].meanDelta);
      expect(Number(cells.p_randomization_holm)).toBe(pair.metrics[m].randomization.adjusted.holm);
      expect(Number(cells.interval95_low)).toBe(pair.metrics[m].interval95.low);
    });
  });
});
