/**
 * `gainline eval --reading stream` against `--reading memory` through the built command line (the
 * stream worker threads and the compiled record kernel of dist/): the same report, byte for byte, in
 * every format, on the demo runs and on seeded files grouped by query; and what it says when it reads
 * in memory instead.
 */
import { describe, expect, it } from 'vitest';
import { groupedDump } from '../engine/fixtures/streamFiles';
import { fixtureDir, REPO, runCli } from './support/runCli';

function both(args: string[], cwd: string) {
  const memory = runCli(['eval', ...args, '--reading', 'memory'], cwd);
  const streamed = runCli(['eval', ...args, '--reading', 'stream', '--timings'], cwd);
  expect(memory.code).toBe(0);
  expect(streamed.code).toBe(0);
  return { memory, streamed };
}

describe('eval --reading stream', () => {
  const demoCases = ['demo/runs/model-a.csv', 'demo/runs/model-b.csv'].flatMap((run) =>
    [['--format', 'json'], ['--format', 'table'], ['--format', 'csv'], ['--format', 'markdown'], ['--sort', 'inversion-cost', '--worst', '30'],
      ['--metrics', 'err@10,ndcg@5,tau', '--ties', 'pessimistic', '--no-relevant', 'zero']].map((extra) => [run, ...extra]));
  it.each(demoCases)('prints the in-memory report byte for byte: %s %s %s', (...args: string[]) => {
    const { memory, streamed } = both(args, REPO);
    expect(streamed.stderr).toMatch(/^timings: streamed read and score/);
    expect(streamed.stdout).toBe(memory.stdout);
  });

  it('prints the in-memory report on seeded TSV files with ties, repeated items, non-finite scores and query weights', () => {
    const dir = fixtureDir({
      'ties.tsv': groupedDump(31, { queries: 300, maxRows: 20, scoreLevels: 3, duplicateShare: 0.05, noRelevantShare: 0.1, badScoreShare: 0.05, segments: true }),
      'late.tsv': groupedDump(32, { queries: 300, maxRows: 20, topGrade: 7, lateTopGrade: true, unjudgedShare: 0.05 }),
      'weighted.tsv': groupedDump(33, { queries: 300, maxRows: 20, weights: true, scoreLevels: 5 }),
    });
    for (const file of ['ties.tsv', 'late.tsv', 'weighted.tsv']) {
      const { memory, streamed } = both([file, '--format', 'json', '--metrics', 'ndcg@10,err@10,ap,rbp,tau'], dir);
      expect(streamed.stdout).toBe(memory.stdout);
    }
  });

  it('prints the in-memory segment means byte for byte, weighted too, and the same refusal of an unknown column', () => {
    const dir = fixtureDir({
      'segments.tsv': groupedDump(34, { queries: 300, maxRows: 20, segments: true, scoreLevels: 4 }),
      'weighted.tsv': groupedDump(35, { queries: 300, maxRows: 20, segments: true, weights: true }),
    });
    for (const file of ['segments.tsv', 'weighted.tsv']) {
      for (const column of ['locale', 'device']) {
        for (const format of ['table', 'json']) {
          const { memory, streamed } = both([file, '--segment', column, '--format', format], dir);
          expect(streamed.stderr).toMatch(/^timings: streamed read and score/);
          expect(streamed.stdout).toBe(memory.stdout);
        }
      }
    }
    const memory = runCli(['eval', 'weighted.tsv', '--segment', 'weight', '--reading', 'memory'], dir);
    const streamed = runCli(['eval', 'weighted.tsv', '--segment', 'weight', '--reading', 'stream'], dir);
    expect(memory.code).toBe(2);
    expect(streamed.code).toBe(2);
    expect(streamed.stderr).toBe(memory.stderr);
  });

  it('says why it read in memory: a file not grouped by query, a gzip file, a run file\'s format', () => {
    const dir = fixtureDir({
      'mixed.tsv': 'query\titem\tgrade\tscore\npaint roller\ta\t1\t0.5\nled bulb e27\tb\t0\t0.2\npaint roller\tc\t2\t0.1\n',
    });
    const r = runCli(['eval', 'mixed.tsv', '--reading', 'stream', '--format', 'json'], dir);
    expect(r.code).toBe(0);
    expect(r.stderr).toBe('');
    const timed = runCli(['eval', 'mixed.tsv', '--reading', 'stream', '--timings'], dir);
    expect(timed.stderr.split('\n')[0]).toBe("reading: in memory, since the rows are not grouped by query: query 'paint roller' appears again at line 4 after its rows ended");
    // Read in memory, the query is one query with its two rows, as always.
    expect(JSON.parse(r.stdout).queries.find((q: { query: string }) => q.query === 'paint roller').items).toBe(2);
    const gz = runCli(['eval', 'demo/runs/model-a.jsonl.gz', '--reading', 'stream', '--timings'], REPO);
    expect(gz.stderr.split('\n')[0]).toBe('reading: in memory, since only CSV and TSV stream (this is jsonl)');
    const judged = runCli(['eval', 'demo/runs/model-a.run', '--judgments', 'demo/judgments/grades.qrels', '--reading', 'stream', '--timings'], REPO);
    expect(judged.stderr.split('\n')[0]).toBe('reading: in memory, since only CSV and TSV stream (this is run)');
  });

  it('streams a TSV whose labels come from --judgments, with the in-memory report byte for byte', () => {
    const dir = fixtureDir({
      'scores.tsv': 'query\titem\tscore\nq1\tsku-1\t0.9\nq1\tsku-2\t0.4\nq1\tsku-3\t0.1\nq2\tsku-4\t0.8\nq2\tsku-5\t0.7\n',
      'grades.qrels': 'q1 0 sku-2 2\nq1 0 sku-9 3\nq2 0 sku-4 1\nq3 0 sku-1 1\n',
    });
    const args = ['eval', 'scores.tsv', '--judgments', 'grades.qrels', '--missing-queries', 'zero', '--format', 'json'];
    const streamed = runCli([...args, '--reading', 'stream', '--timings'], dir);
    expect(streamed.code).toBe(0);
    expect(streamed.stderr).toMatch(/^timings: streamed read and score/);
    const memory = runCli([...args, '--reading', 'memory'], dir);
    expect(streamed.stdout).toBe(memory.stdout);
    const report = JSON.parse(streamed.stdout);
    // q3 is judged but has no row: scored 0 under --missing-queries zero; sku-9 was never retrieved.
    expect(report.queryCount).toBe(3);
  });

  it('streams with a --queries table: every format and the table\'s segments as in memory; --items reads in memory and says why', () => {
    const text = groupedDump(36, { queries: 300, maxRows: 20, segments: true, weights: true });
    const names = [...new Set(text.split('\n').slice(1).filter(Boolean).map((l) => l.split('\t')[0]!))];
    // Every other query, with text, a weight (some empty) and a `device` that replaces the dump's own; one query the dump lacks.
    const table = ['query\ttext\tdevice\tquery_weight', ...names.filter((_, k) => k % 2 === 0).map((n, k) => `${n}\tthe words of ${n}\t${k % 3 === 0 ? 'kiosk' : 'tablet'}\t${k % 7 === 0 ? '' : (k % 5) + 0.5}`),
      'stepladder 9\tno such query\tkiosk\t1'];
    const dir = fixtureDir({ 'weighted.tsv': text, 'queries.tsv': table.join('\n') + '\n', 'items.tsv': 'product_id\ttitle\nSKU-10000\tpipe wrench\n' });
    for (const extra of [['--format', 'json'], ['--format', 'table'], ['--format', 'csv'], ['--format', 'markdown'], ['--segment', 'device'], ['--segment', 'locale', '--format', 'json']]) {
      const { memory, streamed } = both(['weighted.tsv', '--queries', 'queries.tsv', ...extra], dir);
      expect(streamed.stderr).toMatch(/^timings: streamed read and score/);
      expect(streamed.stdout).toBe(memory.stdout);
    }
    const json = JSON.parse(runCli(['eval', 'weighted.tsv', '--queries', 'queries.tsv', '--format', 'json', '--reading', 'stream'], dir).stdout);
    expect(json.queries[0].text).toBe(`the words of ${names[0]}`);
    const items = runCli(['eval', 'weighted.tsv', '--queries', 'queries.tsv', '--items', 'items.tsv', '--reading', 'stream', '--timings'], dir);
    expect(items.code).toBe(0);
    expect(items.stderr.split('\n')[0]).toBe('reading: in memory, since an items table (--items) joins by item, which needs the rows');
  });

  it('refuses an unknown reading mode in one line', () => {
    const r = runCli(['eval', 'demo/runs/model-a.csv', '--reading', 'sideways'], REPO);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe("--reading: expected one of auto, stream, memory (found \"sideways\")\n");
  });
});
