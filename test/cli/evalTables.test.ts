import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { queryDetail } from '../../extension/engine/evaluate/detail';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { readDump } from '../../extension/engine/readers/index';
import { CLI, fixtureDir, REPO, runCli } from './support/runCli';

// An invented store's searches: a dump with ids only, and side tables for the queries and the items.
const DUMP = [
  'qid,item_id,grade,score',
  'q1,SKU-1,3,0.9', 'q1,SKU-2,0,0.8', 'q1,SKU-3,1,0.7',
  'q2,SKU-4,0,0.4', 'q2,SKU-5,2,0.3',
  'q3,SKU-6,2,0.5', 'q3,SKU-7,0,0.6',
].join('\n') + '\n';
const QUERIES = 'query_id\ttext\tlocale\tweight\nq1\tcordless drill 18v\ten-GB\t3\nq2\twood screws 4x40\tde-DE\t1\nq3\tpvc pipe 32mm\ten-GB\t1\nq9\tladder 3 step\tfr-FR\t1\n';
const ITEMS = 'product_id,title,brand\nSKU-1,Oakridge drill 18v,Oakridge\nSKU-2,Vantor drill bits,Vantor\nSKU-5,Ferrow screws 4x40,Ferrow\n';
const files = { 'run.csv': DUMP, 'queries.tsv': QUERIES, 'items.csv': ITEMS };

function ok(args: string[], dir = fixtureDir(files)) {
  const r = runCli(args, dir);
  expect(r.stderr).toBe('');
  expect(r.code).toBe(0);
  return r.stdout;
}

describe('gainline eval --queries / --items', () => {
  it('adds text and segments to each JSON entry, weights the means and says so', () => {
    const doc = JSON.parse(ok(['eval', 'run.csv', '--queries', 'queries.tsv', '--metrics', 'rr', '--format', 'json']));
    expect(doc.queries[0]).toMatchObject({ query: 'q1', text: 'cordless drill 18v', segments: { locale: 'en-GB' } });
    // rr: q1 1, q2 1/2, q3 1/2; weights 3, 1, 1 → (3 + 0.5 + 0.5) / 5 (hand-derived).
    expect(doc.summary.rr).toBeCloseTo(0.8, 12);
    expect(doc.weights).toMatch(/column 'weight' of .*queries\.tsv/);
    expect(doc.warnings.join('\n')).toMatch(/1 row of .*queries\.tsv name queries the dump does not have \(e\.g\. 'q9'\)/);
  });

  it('prints the weighting beside the conventions and the text in the worst list', () => {
    const out = ok(['eval', 'run.csv', '--queries', 'queries.tsv', '--metrics', 'rr']);
    expect(out).toMatch(/Conventions\n .*\n  weighted means: column 'weight' of .*queries\.tsv/);
    expect(out).toMatch(/q2 +wood screws 4x40/);
  });

  it('stops with exit 2 and file:line on a key given twice, and on a missing file', () => {
    const dir = fixtureDir({ ...files, 'twice.tsv': 'query_id\ttext\nq1\ta\nq1\tb\n' });
    const twice = runCli(['eval', 'run.csv', '--queries', 'twice.tsv'], dir);
    expect(twice.code).toBe(2);
    expect(twice.stderr).toBe(`${join(dir, 'twice.tsv')}:3: expected each query_id once (also on line 2) (found "q1")\n`);
    const missing = runCli(['eval', 'run.csv', '--items', 'nowhere.csv'], dir);
    expect(missing.code).toBe(2);
    expect(missing.stderr.trim().split('\n')).toHaveLength(1);
    expect(missing.stderr).toMatch(/nowhere\.csv: expected a readable file/);
  });
});

describe('gainline eval --query', () => {
  it('gives the engine\'s query detail as JSON, with item titles from the items table', async () => {
    const dir = fixtureDir(files);
    const doc = JSON.parse(ok(['eval', 'run.csv', '--items', 'items.csv', '--query', 'q1', '--metrics', 'ndcg@10,ap', '--format', 'json'], dir));
    const dump = await readDump(join(dir, 'run.csv'));
    const detail = queryDetail(dump, dump.queries.find('q1'), DEFAULT_CONVENTIONS, 10, { metrics: parseMetricList('ndcg@10,ap') });
    expect(doc.positions.map((p: { item: string; contribution: number }) => [p.item, p.contribution]))
      .toEqual(detail.positions.map((p) => [p.item, p.contribution]));
    expect(doc.values['ndcg@10']).toBe(detail.values['ndcg@10']);
    expect(doc.positions[0]).toMatchObject({ item: 'SKU-1', title: 'Oakridge drill 18v', attributes: { brand: 'Oakridge' } });
    expect(doc.positions[2]).toMatchObject({ item: 'SKU-3', title: '' });
    // SKU-2 (grade 0) above SKU-3 (grade 1): one inverted pair.
    expect(doc.invertedPairsTotal).toBe(1);
  });

  it('finds a query by its text and prints predicted against ideal order; an unknown query is exit 2', () => {
    const out = ok(['eval', 'run.csv', '--queries', 'queries.tsv', '--query', 'pvc pipe 32mm']);
    expect(out).toMatch(/query q3 · pvc pipe 32mm · 2 items/);
    expect(out).toMatch(/ +1 +SKU-7 +0 .* +2 +SKU-6 +2\n/);
    const r = runCli(['eval', 'run.csv', '--query', 'nothing'], fixtureDir(files));
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('--query: expected a query id of the dump (found "nothing")\n');
  });
});

describe('gainline eval --segment and --sort', () => {
  it('--segment gives weighted means per value of a column from the queries table', () => {
    const doc = JSON.parse(ok(['eval', 'run.csv', '--queries', 'queries.tsv', '--metrics', 'rr', '--segment', 'locale', '--format', 'json']));
    // en-GB: q1 (rr 1, w 3) and q3 (rr 1/2, w 1) → 3.5 / 4; de-DE: q2 → 1/2.
    expect(doc.values).toEqual([
      { value: 'en-GB', queries: 2, means: { rr: 3.5 / 4 } },
      { value: 'de-DE', queries: 1, means: { rr: 0.5 } },
    ]);
    const r = runCli(['eval', 'run.csv', '--segment', 'market'], fixtureDir(files));
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('--segment: expected a segment column (this dump has none) (found "market")\n');
  });

  it('--sort orders the worst list by inversion cost, share of loss or a metric', () => {
    const byCost = ok(['eval', 'run.csv', '--metrics', 'ndcg@10', '--sort', 'inversion-cost', '--worst', '3']);
    expect(byCost).toMatch(/Worst 3 queries by inversion cost/);
    const order = (text: string) => [...text.split('Worst')[1]!.matchAll(/^ +\d +(q\d)/gm)].map((m) => m[1]);
    // q2 and q3 each have a grade-2 item below a grade-0 one at the top: a swap recovers
    // 3·(1 − 1/log2 3)/3 ≈ 0.369 each (equal, so query order); q1's swap of positions 2 and 3
    // recovers 1·(1/log2 3 − 1/2)/(7 + 1/log2 3) ≈ 0.017 (Burges 2010, hand-derived).
    expect(order(byCost)).toEqual(['q2', 'q3', 'q1']);
    const byShare = ok(['eval', 'run.csv', '--metrics', 'ndcg@10', '--sort', 'loss-share']);
    expect(byShare).toMatch(/by share of the ndcg@10 loss/);
    expect(order(byShare)).toEqual(order(ok(['eval', 'run.csv', '--metrics', 'ndcg@10'])));
    const r = runCli(['eval', 'run.csv', '--sort', 'speed'], fixtureDir(files));
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^--sort: expected a metric of --metrics .* or one of loss-share, inversion-cost/);
  });
});

describe('gainline eval - (standard input)', () => {
  const run = (input: Uint8Array, args: string[]) => spawnSync(process.execPath, [CLI, 'eval', '-', ...args], { cwd: REPO, input, encoding: 'utf8' });

  it('reads plain and gzip input and gives the same numbers as the file', () => {
    const file = JSON.parse(ok(['eval', 'demo/runs/model-b.csv', '--format', 'json'], REPO));
    const csv = readFileSync(join(REPO, 'demo/runs/model-b.csv'));
    for (const input of [csv, gzipSync(csv)]) {
      const r = run(input, ['--format', 'json']);
      expect(r.status).toBe(0);
      const doc = JSON.parse(r.stdout);
      expect(doc.source).toBe('-');
      expect(doc.summary).toEqual(file.summary);
    }
  });

  it('names standard input in errors', () => {
    const r = run(Buffer.from('query,item_id,grade,score\ndrill,SKU-1,two,0.5\n'), []);
    expect(r.status).toBe(2);
    expect(r.stderr).toBe('-:2: expected a finite number in column \'grade\' (found "two")\n');
  });
});

describe('gainline eval --diagnostics', () => {
  it('gives scores per grade and DCG by position whose model column sums to the mean NDCG@10', () => {
    const doc = JSON.parse(ok(['eval', 'demo/runs/model-b.csv', '--diagnostics', '--format', 'json'], REPO));
    const summary = JSON.parse(ok(['eval', 'demo/runs/model-b.csv', '--format', 'json', '--metrics', 'ndcg@10'], REPO)).summary;
    const positions = doc.dcgByPosition.positions as { predicted: number; ideal: number }[];
    expect(positions).toHaveLength(11);
    expect(positions.reduce((s, p) => s + p.predicted, 0)).toBeCloseTo(summary['ndcg@10'], 12);
    expect(positions.reduce((s, p) => s + p.ideal, 0)).toBeCloseTo(1, 12);
    const grades = doc.scoresByGrade.grades as { grade: number; count: number; median: number }[];
    expect(grades.map((g) => g.grade)).toEqual([0, 1, 2, 3, 4]);
    // The demo's model B separates the grades on average: medians rise with the grade.
    for (let i = 1; i < grades.length; i++) expect(grades[i]!.median).toBeGreaterThan(grades[i - 1]!.median);
    const r = runCli(['eval', 'demo/runs/model-b.csv', '--diagnostics', '--segment', 'locale'], REPO);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--segment and --diagnostics each replace the report/);
  });
});

describe('gainline compare with query weights', () => {
  it('weights the means and the difference, and says which statistics stay unweighted', () => {
    // Run B puts q2's relevant SKU-5 first: rr of q2 goes from 1/2 to 1; q1 and q3 unchanged.
    const b = DUMP.replace('q2,SKU-4,0,0.4', 'q2,SKU-4,0,0.1');
    const dir = fixtureDir({ ...files, 'b.csv': b });
    const doc = JSON.parse(ok(['compare', 'run.csv', 'b.csv', '--queries', 'queries.tsv', '--metrics', 'rr', '--format', 'json', '--permutations', '200'], dir));
    const rr = doc.metrics[0];
    // Weights 3, 1, 1 (q1, q2, q3): A (3·1 + 0.5 + 0.5) / 5, B (3·1 + 1 + 0.5) / 5 (hand-derived).
    expect(rr.meanA).toBeCloseTo(0.8, 12);
    expect(rr.meanB).toBeCloseTo(0.9, 12);
    expect(rr.meanDelta).toBeCloseTo(0.1, 12);
    // Δ is 0.5 on q2 and 0 elsewhere, so every resample's weighted mean lies in [0, 0.5].
    expect(rr.interval95.low).toBeGreaterThanOrEqual(0);
    expect(rr.interval95.high).toBeLessThanOrEqual(0.5);
    expect(doc.weights).toMatch(/column 'weight' of .*queries\.tsv/);
    expect(doc.methodNotes.join('\n')).toMatch(/draws queries uniformly with replacement .* The t-test, Wilcoxon, randomization test, d_z and wins \/ ties \/ losses are unweighted/);
  });
});

describe('side tables with a judgments file', () => {
  // The same store's searches as judgments: SKU-8 (grade 3) for q1 and all of q4 were never retrieved.
  const JUDGMENTS = ['q1 0 SKU-1 3', 'q1 0 SKU-2 0', 'q1 0 SKU-3 1', 'q1 0 SKU-8 3', 'q2 0 SKU-4 0', 'q2 0 SKU-5 2',
    'q3 0 SKU-6 2', 'q3 0 SKU-7 0', 'q4 0 SKU-9 1', 'q5 0 SKU-9 2'].join('\n') + '\n';
  const IDS = 'qid,item_id,score\n' + DUMP.split('\n').slice(1, -1).map((l) => l.split(',')).map(([q, i, , s]) => `${q},${i},${s}`).join('\n') + '\n';
  const QUERIES4 = QUERIES.replace('q9\tladder 3 step\tfr-FR\t1\n', 'q4\tladder 3 step\tfr-FR\t4\n');
  const judgedFiles = { ...files, 'ids.csv': IDS, 'grades.qrels': JUDGMENTS, 'queries4.tsv': QUERIES4 };

  it('weighs judged queries added under --missing-queries zero by the queries table, else 1', () => {
    const doc = JSON.parse(ok(['eval', 'ids.csv', '--judgments', 'grades.qrels', '--missing-queries', 'zero', '--queries', 'queries4.tsv',
      '--metrics', 'rr', '--format', 'json'], fixtureDir(judgedFiles)));
    // rr: q1 1 (w 3), q2 1/2 (w 1), q3 1/2 (w 1), q4 0 (w 4 from the table), q5 0 (no row anywhere: w 1);
    // (3 + 0.5 + 0.5 + 0 + 0) / 10 (hand-derived).
    expect(doc.queryCount).toBe(5);
    expect(doc.summary.rr).toBeCloseTo(0.4, 12);
    expect(doc.warnings.join('\n')).toMatch(/1 judged query missing from the run \(scored 0\) has no weight of its own \(e\.g\. 'q5'\); it weighs 1\./);
    expect(doc.queries.find((q: { query: string }) => q.query === 'q4')).toMatchObject({ text: 'ladder 3 step', items: 0, notRetrieved: 1, rr: 0 });
  });

  it('JSON entries and CSV rows carry both the judged items never retrieved and the text and segments', () => {
    const dir = fixtureDir(judgedFiles);
    const doc = JSON.parse(ok(['eval', 'ids.csv', '--judgments', 'grades.qrels', '--queries', 'queries.tsv', '--metrics', 'rr', '--format', 'json'], dir));
    expect(doc.queries[0]).toMatchObject({ query: 'q1', text: 'cordless drill 18v', notRetrieved: 1, segments: { locale: 'en-GB' } });
    const csv = ok(['eval', 'ids.csv', '--judgments', 'grades.qrels', '--queries', 'queries.tsv', '--metrics', 'rr', '--format', 'csv'], dir).split('\n');
    expect(csv[0]).toBe('query,text,locale,items,relevant,notRetrieved,skipped,rr');
    expect(csv[1]).toBe('q1,cordless drill 18v,en-GB,3,3,1,false,1');
  });

  it('--query lists the judged items never retrieved in the ideal order, with their titles', () => {
    const dir = fixtureDir({ ...judgedFiles, 'items8.csv': ITEMS + 'SKU-8,Oakridge drill 18v kit,Oakridge\n' });
    const doc = JSON.parse(ok(['eval', 'ids.csv', '--judgments', 'grades.qrels', '--items', 'items8.csv', '--query', 'q1', '--format', 'json'], dir));
    // Grades 3, 0, 1 retrieved and 3 never retrieved: ideal order SKU-1 (3, listed first), SKU-8 (3), SKU-3, SKU-2.
    expect(doc.idealOrder).toEqual([
      { item: 'SKU-1', title: 'Oakridge drill 18v', attributes: { brand: 'Oakridge' }, grade: 3 },
      { item: 'SKU-8', title: 'Oakridge drill 18v kit', attributes: { brand: 'Oakridge' }, grade: 3, retrieved: false },
      { item: 'SKU-3', title: '', attributes: { brand: '' }, grade: 1 },
      { item: 'SKU-2', title: 'Vantor drill bits', attributes: { brand: 'Vantor' }, grade: 0 },
    ]);
    const text = ok(['eval', 'ids.csv', '--judgments', 'grades.qrels', '--query', 'q1'], dir);
    expect(text).toMatch(/1 judged item the run never retrieved counts in the ideal order only/);
    expect(text).toMatch(/\n +SKU-2 +0\n/);
    expect(text).toMatch(/SKU-8 \(not retrieved\) +3/);
  });
});
