import { describe, expect, it } from 'vitest';
import { fixtureDir, runCli } from './support/runCli';

// Three queries of an invented store's product search, small enough to score by hand.
const SMALL = [
  'query,product_id,grade,score,device',
  'cordless drill 18v,SKU-100001,3,0.9,mobile',
  'cordless drill 18v,SKU-100002,0,0.8,mobile',
  'cordless drill 18v,SKU-100003,1,0.7,mobile',
  'wood screws 4x40,SKU-200001,0,0.4,desktop',
  'wood screws 4x40,SKU-200002,0,0.3,desktop',
  'pvc pipe 32mm,SKU-300001,2,0.5,desktop',
  'pvc pipe 32mm,SKU-300002,0,0.5,desktop',
  'pvc pipe 32mm,SKU-300002,0,0.5,desktop',
].join('\n');

function evalJson(args: string[]) {
  const dir = fixtureDir({ 'small.csv': SMALL + '\n' });
  const r = runCli(['eval', 'small.csv', '--format', 'json', ...args], dir);
  expect(r.stderr).toBe('');
  expect(r.code).toBe(0);
  return JSON.parse(r.stdout);
}

describe('gainline eval --format json, hand-derived values', () => {
  const doc = evalJson(['--metrics', 'ndcg@10,err@10,ap,rr,rbp,tau']);
  const byName = (name: string) => doc.queries.find((q: { query: string }) => q.query === name);

  it('scores "cordless drill 18v" (order: grade 3, 0, 1)', () => {
    const q = byName('cordless drill 18v');
    expect(q).toMatchObject({ items: 3, relevant: 2, skipped: false });
    // Exponential gains 7, 0, 1 (2^g - 1, Burges et al. 2005); discount 1/log2(i+1) (Järvelin & Kekäläinen 2002).
    // DCG = 7 + 1/log2(4) = 7.5; ideal 7, 1, 0 → 7 + 1/log2(3).
    expect(q['ndcg@10']).toBeCloseTo(7.5 / (7 + 1 / Math.log2(3)), 12);
    // ERR (Chapelle et al. 2009), R = (2^g - 1) / 2^gmax with gmax = 3 (highest grade in the file):
    // 7/8 + (1 - 7/8)(1 - 0)(1/8)/3.
    expect(q['err@10']).toBeCloseTo(7 / 8 + (1 / 8) * (1 / 8) / 3, 12);
    // AP: relevant at positions 1 and 3 → (1/1 + 2/3) / 2 (common practice).
    expect(q.ap).toBeCloseTo(5 / 6, 12);
    expect(q.rr).toBe(1);
    // RBP, p = 0.8, binary relevance (Moffat & Zobel 2008): 0.2 (1 + 0.8^2); residual 0.8^3 (list ends at 3).
    expect(q.rbp).toBeCloseTo(0.2 * (1 + 0.64), 12);
    expect(q.rbp_residual).toBeCloseTo(0.512, 12);
    // Pairs by (score, grade): (0.9,3)-(0.8,0) concordant, (0.9,3)-(0.7,1) concordant, (0.8,0)-(0.7,1) discordant.
    // Kendall's tau-b with no ties = (C - D) / 3 = 1/3 (Kendall 1945).
    expect(q.tau).toBeCloseTo(1 / 3, 12);
    expect(q.inversions).toBe(1);
  });

  it('marks the query with nothing relevant as skipped, with null values', () => {
    expect(byName('wood screws 4x40')).toMatchObject({ items: 2, relevant: 0, skipped: true, 'ndcg@10': null, ap: null, rr: null });
  });

  it('averages over tied scores and drops the repeated row', () => {
    const q = byName('pvc pipe 32mm');
    expect(q).toMatchObject({ items: 2, relevant: 1, skipped: false });
    // Tie of grades 2 and 0 (McSherry & Najork 2008): mean DCG over both orders = (3 + 3/log2 3) / 2; ideal 3.
    expect(q['ndcg@10']).toBeCloseTo((3 + 3 / Math.log2(3)) / 2 / 3, 12);
    expect(doc.degenerate.duplicateRows).toBe(1);
    expect(doc.degenerate.noRelevantQueries).toBe(1);
  });

  it('summarises means over counted queries only, and prints the conventions', () => {
    const drill = byName('cordless drill 18v')['ndcg@10'];
    const pipe = byName('pvc pipe 32mm')['ndcg@10'];
    expect(doc.summary['ndcg@10']).toBeCloseTo((drill + pipe) / 2, 12);
    expect(doc.conventions).toMatchObject({ gain: 'exponential', ties: 'average', noRelevant: 'skip', relevantFrom: 1, rbpPersistence: 0.8 });
    expect(doc.warnings.length).toBeGreaterThan(0);
    expect(doc.sensitivity.length).toBeGreaterThan(0);
  });

  it('follows the conventions given on the command line', () => {
    const linear = evalJson(['--metrics', 'ndcg@10', '--gain', 'linear', '--no-relevant', 'zero', '--ties', 'pessimistic']);
    const drill = linear.queries[0];
    // Linear gains 3, 0, 1: DCG = 3 + 1/2; ideal 3 + 1/log2(3).
    expect(drill['ndcg@10']).toBeCloseTo(3.5 / (3 + 1 / Math.log2(3)), 12);
    expect(linear.queries[1]).toMatchObject({ skipped: false, 'ndcg@10': 0 });
    // Pessimistic: the grade-0 item of the tie goes first → DCG = 2/log2(3); ideal 2.
    expect(linear.queries[2]['ndcg@10']).toBeCloseTo(1 / Math.log2(3), 12);
    expect(linear.conventions).toMatchObject({ gain: 'linear', ties: 'pessimistic', noRelevant: 'zero' });
  });
});

describe('gainline eval, other output formats', () => {
  const dir = fixtureDir({ 'small.csv': SMALL + '\n' });

  it('prints the readable table by default, worst query first', () => {
    const r = runCli(['eval', 'small.csv', '--metrics', 'ndcg@10,ap', '--worst', '1'], dir);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('Means over queries');
    expect(r.stdout).toContain('Conventions');
    expect(r.stdout).toMatch(/Worst 1 query by ndcg@10\n.*\n\s+1\s+pvc pipe 32mm\s+2\s+1\s+0\.8155/);
  });

  it('writes one CSV row per query', () => {
    const r = runCli(['eval', 'small.csv', '--metrics', 'ndcg@10', '--format', 'csv'], dir);
    expect(r.code).toBe(0);
    const lines = r.stdout.trim().split('\n');
    expect(lines[0]).toBe('query,items,relevant,skipped,ndcg@10');
    expect(lines).toHaveLength(4);
    expect(lines[2]).toBe('wood screws 4x40,2,0,true,');
  });

  it('reports stage timings on standard error only when asked', () => {
    const r = runCli(['eval', 'small.csv', '--metrics', 'ndcg@10', '--format', 'json', '--timings'], dir);
    expect(r.code).toBe(0);
    expect(r.stderr).toMatch(/^timings: read \d+\.\d{3} s, score \d+\.\d{3} s, report \d+\.\d{3} s \(8 rows\)\n$/);
    expect(JSON.parse(r.stdout).queryCount).toBe(3);
  });

  it('writes Markdown tables', () => {
    const r = runCli(['eval', 'small.csv', '--metrics', 'ndcg@10', '--format', 'markdown'], dir);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('| metric | mean | queries |');
    expect(r.stdout).toContain('| 1 | pvc pipe 32mm | 2 | 1 |');
  });
});

describe('gainline exit codes and error lines', () => {
  const dir = fixtureDir({
    'bad.csv': 'query,product_id,grade,score\nq1,SKU-1,2,0.5\nq1,SKU-2,two,0.4\n',
    'small.csv': SMALL + '\n',
  });

  it('exits 2 with one line naming the file, the line and what was expected', () => {
    const r = runCli(['eval', 'bad.csv'], dir);
    expect(r.code).toBe(2);
    expect(r.stdout).toBe('');
    const lines = r.stderr.trim().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/bad\.csv:3: expected .*grade/);
    expect(lines[0]).toContain('"two"');
  });

  it('exits 2 for a missing file, a bad option value and an unknown option, without stack traces', () => {
    for (const args of [['eval', 'missing.csv'], ['eval', 'small.csv', '--ties', 'sideways'], ['eval', 'small.csv', '--frobnicate'], ['eval'], ['eval', 'small.csv', '--worst', '-1'], ['nonsense']]) {
      const r = runCli(args, dir);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.stderr.trim().split('\n'), args.join(' ')).toHaveLength(1);
      expect(r.stderr).not.toMatch(/\n\s+at /);
    }
    expect(runCli(['eval', 'missing.csv'], dir).stderr).toContain('missing.csv');
    expect(runCli(['eval', 'small.csv', '--ties', 'sideways'], dir).stderr).toMatch(/^--ties: expected .*average.*"sideways"/);
  });

  it('exits 0 for help and version', () => {
    expect(runCli(['--help']).code).toBe(0);
    expect(runCli(['help', 'eval']).stdout).toContain('--worst N');
    expect(runCli(['--version']).stdout.trim()).toMatch(/^\d+\.\d+\.\d+$/);
  });
});

// The reader's own notes were shown in the editor only; every report carries them now (describeReading).
describe('gainline eval shows what the reader noted', () => {
  const lines = Array.from({ length: 300 }, (_, r) => JSON.stringify({ query: `drill ${r >> 3}`, item: `SKU-${r}`, grade: r % 3, score: r / 300,
    ...(r >= 280 ? { shelf: 'aisle 4' } : {}) }));
  const dir = fixtureDir({ 'late.jsonl': lines.join('\n') + '\n', 'ranked.csv': 'query,item,grade,rank\nq,a,1,1\nq,b,0,2\n' });

  it('in the table, JSON and comparison reports: a JSON Lines field first written after the first lines, a rank standing in for the score', () => {
    const late = "20 lines hold fields the file's first lines do not ('shelf'; the first on line 281): those fields are not read";
    expect(runCli(['eval', 'late.jsonl'], dir).stdout).toContain(late);
    expect(JSON.parse(runCli(['eval', 'late.jsonl', '--format', 'json'], dir).stdout).warnings.join('\n')).toContain(late);
    expect(runCli(['eval', 'ranked.csv'], dir).stdout).toContain("no score column: ranked by 'rank' (score = -rank)");
    expect(runCli(['compare', 'late.jsonl', 'late.jsonl'], dir).stdout).toContain(`B: ${late}`);
  });
});
