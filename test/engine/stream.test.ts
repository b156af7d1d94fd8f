/**
 * The streamed path (engine/stream/) against the in-memory path (readDump then evaluateDump) on the same
 * files: every per-query value, mean, count, warning and sensitivity row bit for bit, and the JSON report
 * byte for byte. Blocks are made tiny so queries straddle block boundaries, and one query spans many.
 * Runs on this thread (no thread scripts under vitest); test/worker/stream-threads.test.ts runs the workers.
 */
import { readFileSync, statSync } from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import { evaluateDump, readDump, streamOrRead } from '../../extension/engine/index';
import type { MetricSummary } from '../../extension/engine/evaluate/types';
import { DEFAULT_CONVENTIONS, type Conventions } from '../../extension/engine/metrics/conventions';
import { DEFAULT_METRICS } from '../../extension/engine/metrics/registry';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { blockBounds } from '../../extension/engine/stream/fileBlocks';
import { readQueryRows, streamedQueryDetail } from '../../extension/engine/stream/queryDetail';
import { streamEvaluate } from '../../extension/engine/stream/streamEvaluate';
import { queryDetail } from '../../extension/engine/evaluate/detail';
import { gradeRange } from '../../extension/engine/evaluate/evaluate';
import { joinTables } from '../../extension/engine/tables/join';
import { TempDir } from './fixtures/readers/tempFiles';
import { groupedDump, type GroupedShape } from './fixtures/streamFiles';
import { plainEvaluation } from './fixtures/plainEvaluation';
import { expectStreamedAsInMemory } from './fixtures/streamedAsInMemory';

const tmp = new TempDir();
afterAll(() => tmp.remove());

const METRICS = parseMetricList(DEFAULT_METRICS);


async function both(file: string, conventions: Conventions, metrics = METRICS, blockBytes = 700) {
  // As the command line reads it: a weight column of the dump is joined per query (tables/join.ts).
  const dump = joinTables(await readDump(file));
  const memory = await evaluateDump(dump, metrics, conventions, { threads: 1 });
  const streamed = await streamEvaluate(file, file.endsWith('.csv') ? 'csv' : 'tsv', metrics, conventions, { blockBytes });
  if (streamed.kind !== 'streamed') throw new Error(`fell back: ${streamed.reason}`);
  return { dump, memory, streamed };
}

async function expectIdentical(file: string, conventions: Conventions, metrics = METRICS, blockBytes = 700): Promise<number> {
  const { dump, memory, streamed } = await both(file, conventions, metrics, blockBytes);
  return expectStreamedAsInMemory(streamed, memory, dump, metrics).blocks;
}

const SHAPES: [string, GroupedShape][] = [
  ['plain', { queries: 60, maxRows: 12 }],
  ['ties', { queries: 60, maxRows: 14, scoreLevels: 3 }],
  ['no relevant queries', { queries: 60, maxRows: 10, noRelevantShare: 0.3 }],
  ['non-finite and missing scores', { queries: 60, maxRows: 10, badScoreShare: 0.15 }],
  ['repeated items', { queries: 60, maxRows: 10, duplicateShare: 0.2, scoreLevels: 4 }],
  ['unjudged rows', { queries: 50, maxRows: 10, unjudgedShare: 0.2 }],
  ['segments, blank lines and CRLF', { queries: 60, maxRows: 10, segments: true, ragged: true }],
  ['CSV', { queries: 60, maxRows: 10, delimiter: ',', segments: true }],
  ['quoted CSV (commas and doubled quotes inside)', { queries: 60, maxRows: 10, delimiter: ',', segments: true, quoted: true }],
  ['single-row queries', { queries: 200, maxRows: 1 }],
  ['query weights', { queries: 60, maxRows: 10, weights: true, noRelevantShare: 0.1, segments: true }],
];

describe('streamed against in memory, seeded files of every shape', () => {
  for (const [name, shape] of SHAPES) {
    it(name, async () => {
      for (const seed of [1, 2, 3]) {
        const file = tmp.file(`${name.replace(/\W+/g, '-')}-${seed}.${shape.delimiter === ',' ? 'csv' : 'tsv'}`, groupedDump(seed, shape));
        await expectIdentical(file, DEFAULT_CONVENTIONS);
      }
    });
  }

  it('under every tie convention, no-relevant policy and gain, with other metric lists', async () => {
    const file = tmp.file('conventions.tsv', groupedDump(7, { queries: 50, maxRows: 12, scoreLevels: 3, noRelevantShare: 0.2, badScoreShare: 0.05 }));
    const variants: Conventions[] = [
      { ...DEFAULT_CONVENTIONS, ties: 'pessimistic' },
      { ...DEFAULT_CONVENTIONS, ties: 'optimistic', noRelevant: 'zero' },
      { ...DEFAULT_CONVENTIONS, ties: 'file-order', noRelevant: 'one' },
      { ...DEFAULT_CONVENTIONS, gain: { kind: 'linear' }, relevantFrom: 2 },
      { ...DEFAULT_CONVENTIONS, gain: { kind: 'map', gains: new Map([[0, 0], [1, 1], [2, 3], [3, 7], [4, 15]]) } },
      { ...DEFAULT_CONVENTIONS, maxGrade: 6, rbpPersistence: 0.5 },
    ];
    for (const c of variants) await expectIdentical(file, c);
    await expectIdentical(file, DEFAULT_CONVENTIONS, parseMetricList('err@5,ndcg,tau,hit@3,judged@5,dcg@4'));
  });

  it('ERR scored with the highest grade of the whole file when it first appears in the last query', async () => {
    // Blocks before the last guess a lower g_max and are scored again once the file is read.
    const file = tmp.file('late-top.tsv', groupedDump(11, { queries: 60, maxRows: 10, topGrade: 6, lateTopGrade: true }));
    await expectIdentical(file, DEFAULT_CONVENTIONS, parseMetricList('err@10,ndcg@10'));
  });

  it('one query longer than many blocks', async () => {
    const file = tmp.file('long-query.tsv', groupedDump(5, { queries: 8, maxRows: 300, scoreLevels: 5 }));
    await expectIdentical(file, DEFAULT_CONVENTIONS, METRICS, 300);
  });

  it('block sizes from one line to the whole file give the same result', async () => {
    const file = tmp.file('sizes.tsv', groupedDump(9, { queries: 40, maxRows: 9, scoreLevels: 4 }));
    const memory = await evaluateDump(await readDump(file), METRICS, DEFAULT_CONVENTIONS, { threads: 1 });
    for (const blockBytes of [1, 50, 333, 4096, 1 << 20]) {
      const s = await streamEvaluate(file, 'tsv', METRICS, DEFAULT_CONVENTIONS, { blockBytes });
      expect(s.kind).toBe('streamed');
      if (s.kind === 'streamed') expect(plainEvaluation(s.evaluation)).toEqual(plainEvaluation(memory));
    }
  });
});

describe('files the stream gives way on', () => {
  it('a query that comes back after its rows ended is never merged: the stream gives way and says where', async () => {
    const text = 'query\titem\tgrade\tscore\nwood screws 4x40\ta\t1\t0.5\ncordless drill 18v\tb\t2\t0.4\nwood screws 4x40\tc\t0\t0.9\n';
    const file = tmp.file('ungrouped.tsv', text);
    const s = await streamEvaluate(file, 'tsv', METRICS, DEFAULT_CONVENTIONS, { blockBytes: 1 << 20 });
    expect(s).toEqual({ kind: 'fallback', reason: "the rows are not grouped by query: query 'wood screws 4x40' appears again at line 4 after its rows ended" });
    // Across blocks too.
    const far = await streamEvaluate(file, 'tsv', METRICS, DEFAULT_CONVENTIONS, { blockBytes: 10 });
    expect(far.kind).toBe('fallback');
    expect(far.kind === 'fallback' && far.reason).toContain("query 'wood screws 4x40' appears again at line 4");
    // Through the entry, the in-memory path then scores the query as one (as it always has).
    const r = await streamOrRead(file, {}, METRICS, DEFAULT_CONVENTIONS, { reading: 'stream' });
    expect(r.kind).toBe('read');
    expect(r.kind === 'read' && r.tried).toBe(true);
  });

  it('a quoted newline where the file is cut gives way; away from the cuts it streams', async () => {
    const file = tmp.file('quoted-newlines.csv', groupedDump(4, { queries: 60, maxRows: 10, delimiter: ',', quoted: true, quotedNewlines: true }));
    expect(readFileSync(file, 'utf8')).toMatch(/"SKU-\d+\nboxed"/);
    // Blocks of one byte cut at every newline, the quoted ones too.
    expect(await streamEvaluate(file, 'csv', METRICS, DEFAULT_CONVENTIONS, { blockBytes: 1 })).toEqual({ kind: 'fallback',
      reason: 'a quoted field holds a newline where the file was cut into blocks' });
    // One block: no cut at all.
    const { memory, streamed } = await both(file, DEFAULT_CONVENTIONS, METRICS, 1 << 20);
    expect(plainEvaluation(streamed.evaluation)).toEqual(plainEvaluation(memory));
  });

  it('weights that disagree within a query and grades the conventions cannot score give way too', async () => {
    const weighted = tmp.file('weighted.tsv', 'query\titem\tgrade\tscore\tweight\npaint roller\ta\t1\t0.5\t2\npaint roller\tb\t0\t0.4\t3\n');
    expect(await streamEvaluate(weighted, 'tsv', METRICS, DEFAULT_CONVENTIONS)).toEqual({ kind: 'fallback',
      reason: 'the rows of a query disagree on its weight (reading in memory names the row)' });
    // The in-memory join then names the row, as it always has.
    await expect(readDump(weighted).then(joinTables)).rejects.toThrow(/weighted\.tsv:3/);
    const negative = tmp.file('negative.tsv', 'query\titem\tgrade\tscore\npaint roller\ta\t-1\t0.5\npaint roller\tb\t1\t0.2\n');
    const s = await streamEvaluate(negative, 'tsv', METRICS, DEFAULT_CONVENTIONS);
    expect(s.kind === 'fallback' && s.reason).toMatch(/^the conventions cannot score this data/);
    // The in-memory path then names the row at fault, as it always has.
    const dump = await readDump(negative);
    await expect(evaluateDump(dump, METRICS, DEFAULT_CONVENTIONS)).rejects.toThrow(/negative\.tsv:2/);
  });

  it('a bad row is the same one-line error, at the same line, as in memory', async () => {
    const rows = groupedDump(3, { queries: 40, maxRows: 8 }).split('\n');
    rows[123] = rows[123]!.replace(/\t[^\t]*$/, '\tlots');
    const file = tmp.file('bad.tsv', rows.join('\n'));
    const memory = await readDump(file).then(() => 'read', (e: Error) => e.message);
    const streamed = await streamEvaluate(file, 'tsv', METRICS, DEFAULT_CONVENTIONS, { blockBytes: 200 }).then(() => 'read', (e: Error) => e.message);
    expect(memory).toContain(':124:');
    expect(streamed).toBe(memory);
  });
});

describe('conventions settled at the end', () => {
  it('an alternative gain the data cannot take is left out of the sensitivity rows as in memory', async () => {
    // Grade 1100: exponential gain 2^1100 − 1 is beyond a double, so under linear gain its row is n/a.
    const file = tmp.file('huge-grades.tsv', groupedDump(13, { queries: 40, maxRows: 8, topGrade: 1100, lateTopGrade: true }));
    const linear: Conventions = { ...DEFAULT_CONVENTIONS, gain: { kind: 'linear' } };
    const { streamed } = await both(file, linear, parseMetricList('ndcg@10,ap'));
    expect(streamed.evaluation.sensitivity.some((row) => row.unavailable !== undefined)).toBe(true);
    await expectIdentical(file, linear, parseMetricList('ndcg@10,ap,err@10'));
  });
});

describe('the headline while the rest streams in', () => {
  it.each([['unweighted', false], ['weighted by a query weight column', true]])('reports after every block the mean over the queries scored so far (%s), marked by how much was read', async (_name, weights) => {
    const file = tmp.file(`partial-${weights}.tsv`, groupedDump(17, { queries: 80, maxRows: 10, weights }));
    const dump = joinTables(await readDump(file));
    const memory = await evaluateDump(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 1 });
    const partials: { queries: number; rows: number; bytesRead: number; totalBytes: number; mean: number; counted: number; summary: readonly MetricSummary[] }[] = [];
    const s = await streamEvaluate(file, 'tsv', METRICS, DEFAULT_CONVENTIONS, {
      blockBytes: 600,
      onPartial: (p) => partials.push({ ...p, mean: p.summary[0]!.mean, counted: p.summary[0]!.counted }),
    });
    if (s.kind !== 'streamed') throw new Error('fell back');
    expect(partials.length).toBe(s.blocks);
    for (let i = 1; i < partials.length; i++) {
      expect(partials[i]!.rows).toBeGreaterThan(partials[i - 1]!.rows);
      expect(partials[i]!.bytesRead).toBeGreaterThan(partials[i - 1]!.bytesRead);
      expect(partials[i]!.queries).toBeGreaterThanOrEqual(partials[i - 1]!.queries);
    }
    const last = partials.at(-1)!;
    expect(last.bytesRead).toBe(last.totalBytes);
    expect(last.rows).toBe(s.dump.rowCount);
    // Each partial mean is the in-memory mean over the queries it counted: those scored inside blocks so
    // far (the ones cut by a block boundary come at the end, so they are not in it yet), summed from scratch
    // in query order here (the slow obvious way) while the stream adds each block's queries to running sums.
    // ERR is left out: blocks score it with the highest grade seen so far, settled only at the end.
    const edges = await edgeQueries(file, s.dump.locations, 600);
    expect(edges.size).toBeGreaterThan(s.blocks);
    const weight = dump.joined?.queryWeight;
    if (weights) expect(weight).toBeDefined();
    for (const p of partials) {
      expect(p.counted).toBeLessThan(memory.summary[0]!.counted);
      METRICS.forEach((metric, m) => {
        if (metric.key.startsWith('err')) return;
        const values = memory.perQuery.values[m]!;
        let sum = 0;
        let total = 0;
        let counted = 0;
        for (let q = 0; q < p.queries; q++) {
          const w = weight ? weight[q]! : 1;
          if (edges.has(q) || Number.isNaN(values[q]!) || Number.isNaN(w)) continue;
          sum += weight ? w * values[q]! : values[q]!;
          total += w;
          counted++;
        }
        expect(p.summary[m]!.counted).toBe(counted);
        expect(Object.is(p.summary[m]!.mean, weight ? (total > 0 ? sum / total : NaN) : counted > 0 ? sum / counted : NaN)).toBe(true);
      });
    }
    expect(s.evaluation.summary).toEqual(memory.summary);
  });
});

/**
 * The queries a block hands back to be stitched (scored only at the end): in each block, the query of its
 * first row and the query of its last row, found from each query's byte range.
 */
async function edgeQueries(file: string, locations: { start: Float64Array; end: Float64Array }, blockBytes: number): Promise<Set<number>> {
  const size = statSync(file).size;
  const bounds = await blockBounds(file, locations.start[0]!, size, blockBytes);
  const queryAt = (byte: number) => {
    let q = 0;
    while (q + 1 < locations.start.length && locations.start[q + 1]! <= byte) q++;
    return q;
  };
  const edges = new Set<number>();
  for (let k = 0; k + 1 < bounds.length; k++) {
    edges.add(queryAt(bounds[k]!));
    edges.add(queryAt(bounds[k + 1]! - 1));
  }
  return edges;
}

describe('choosing the reading', () => {
  it('auto reads a file below 1 GiB in memory, and memory never streams', async () => {
    const file = tmp.file('choice.tsv', groupedDump(23, { queries: 10, maxRows: 5 }));
    const auto = await streamOrRead(file, {}, METRICS, DEFAULT_CONVENTIONS, { reading: 'auto' });
    expect(auto.kind === 'read' && [auto.why, auto.tried]).toEqual(['smaller than 1 GiB', false]);
    const memory = await streamOrRead(file, {}, METRICS, DEFAULT_CONVENTIONS, { reading: 'memory' });
    expect(memory.kind === 'read' && memory.why).toBe('asked for');
    const streamed = await streamOrRead(file, {}, METRICS, DEFAULT_CONVENTIONS, { reading: 'stream' });
    expect(streamed.kind).toBe('streamed');
  });
});

describe('a query in detail from its byte range', () => {
  it('gives the in-memory detail of every query, rows numbered as in the whole file', async () => {
    const file = tmp.file('detail.tsv', groupedDump(29, { queries: 40, maxRows: 12, scoreLevels: 3, duplicateShare: 0.1, badScoreShare: 0.05, ragged: true }));
    const dump = await readDump(file);
    const s = await streamEvaluate(file, 'tsv', METRICS, DEFAULT_CONVENTIONS, { blockBytes: 500 });
    if (s.kind !== 'streamed') throw new Error('fell back');
    const range = gradeRange(dump);
    for (let q = 0; q < dump.queries.size; q++) {
      const memory = queryDetail(dump, q, DEFAULT_CONVENTIONS, 10, { metrics: METRICS, gradeRange: range });
      expect(await streamedQueryDetail(s.dump, q, DEFAULT_CONVENTIONS, 10, { metrics: METRICS })).toEqual(memory);
      const rows = await readQueryRows(s.dump, q);
      const first = memory.positions.length > 0 ? Math.min(...memory.positions.map((p) => p.row)) : 0;
      expect(Array.from(rows.line)).toEqual(Array.from(dump.line.subarray(first, first + rows.rowCount)));
      expect(Array.from(rows.offset)).toEqual(Array.from(dump.offset.subarray(first, first + rows.rowCount)));
    }
  });
});
