/**
 * Segment means of a streamed dump (each query's segment values kept as it streams, stream/segmentRows.ts)
 * against the in-memory segment means of the same file: every row, value, query count and mean bit for
 * bit, with tiny blocks so queries straddle block boundaries and are stitched, unweighted and weighted.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { evaluateDump, readDump, segmentRowsOf } from '../../extension/engine/index';
import { segmentBreakdown } from '../../extension/engine/evaluate/segments';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { DEFAULT_METRICS } from '../../extension/engine/metrics/registry';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { streamEvaluate } from '../../extension/engine/stream/streamEvaluate';
import { joinTables } from '../../extension/engine/tables/join';
import { TempDir } from './fixtures/readers/tempFiles';
import { groupedDump, type GroupedShape } from './fixtures/streamFiles';

const tmp = new TempDir();
afterAll(() => tmp.remove());
const METRICS = parseMetricList(DEFAULT_METRICS);

const CASES: [string, number, GroupedShape][] = [
  ['segments', 41, { queries: 120, maxRows: 12, segments: true, scoreLevels: 4 }],
  ['segments and query weights', 42, { queries: 120, maxRows: 12, segments: true, weights: true }],
  ['segments, blank lines and CRLF', 43, { queries: 90, maxRows: 10, segments: true, ragged: true, noRelevantShare: 0.2 }],
];

describe('segment means of a streamed dump', () => {
  it.each(CASES)('%s: the in-memory rows to the bit', async (name, seed, shape) => {
    const file = tmp.file(`${name.replace(/\W+/g, '-')}.tsv`, groupedDump(seed, shape));
    const dump = joinTables(await readDump(file));
    const memory = await evaluateDump(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 1 });
    const streamed = await streamEvaluate(file, 'tsv', METRICS, DEFAULT_CONVENTIONS, { blockBytes: 500, segments: true });
    if (streamed.kind !== 'streamed') throw new Error(`fell back: ${streamed.reason}`);
    expect(streamed.blocks).toBeGreaterThan(5);
    const rows = segmentRowsOf(streamed.dump);
    // The weight column is no segment in memory (the join takes it), nor here.
    expect(rows.segments.map((s) => s.name)).toEqual(dump.segments.map((s) => s.name));
    expect(rows.segments.length).toBe(2);
    dump.segments.forEach((_, k) => {
      const expected = segmentBreakdown(dump, memory, k);
      const got = segmentBreakdown(rows, streamed.evaluation, k);
      expect(got.map((r) => [r.value, r.queries])).toEqual(expected.map((r) => [r.value, r.queries]));
      got.forEach((r, i) => r.means.forEach((m, j) => expect(Object.is(m, expected[i]!.means[j])).toBe(true)));
    });
  });

  it('keeps no segment values unless asked', async () => {
    const file = tmp.file('unasked.tsv', groupedDump(44, { queries: 40, maxRows: 8, segments: true }));
    const streamed = await streamEvaluate(file, 'tsv', METRICS, DEFAULT_CONVENTIONS, { blockBytes: 500 });
    if (streamed.kind !== 'streamed') throw new Error('fell back');
    expect(streamed.dump.querySegments).toBeUndefined();
  });
});
