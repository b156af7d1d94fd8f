/**
 * Multi-threaded reading must give exactly the single-thread result: same ids, rows, lines, offsets,
 * segments, notes, and the same error (with the same line) for bad input. The parse worker is
 * bundled fresh from source into a temp folder, as the build does into dist/.
 */
import { describe, expect, it } from 'vitest';
import { CancelledError, InputError } from '../../extension/engine/errors';
import { gradeRange } from '../../extension/engine/evaluate/evaluate';
import type { RankedDump } from '../../extension/engine/model/dump';
import { groupByQuery, usableValues } from '../../extension/engine/model/groups';
import { evaluateDump } from '../../extension/engine/index';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { joinJudgments } from '../../extension/engine/readers/judgments';
import { readDump, readJudgments } from '../../extension/engine/readers/index';
import { readParallelDelimited } from '../../extension/engine/threads/parallel';
import { configureEngine, engineActivity } from '../../extension/engine/config';
import { TempDir } from '../engine/fixtures/readers/tempFiles';
import { expectSameReading } from '../engine/fixtures/sameReading';
import { seededRandom } from '../reference/random';
import { useBundledWorkers } from './support/workers';

const tmp = new TempDir();

useBundledWorkers(tmp, ['parseWorker']);

function randomPlainCsv(seed: number, rows: number): string {
  const rnd = seededRandom(seed);
  const eol = rnd() < 0.5 ? '\r\n' : '\n';
  let out = 'query_id\titem_id\tlabel\tscore\tdevice\n'.replace(/\t/g, ',').replace('\n', eol);
  for (let r = 0; r < rows; r++) {
    if (rnd() < 0.01) out += eol;
    const label = rnd() < 0.05 ? '' : String(Math.floor(rnd() * 5));
    const score = rnd() < 0.03 ? 'NaN' : (rnd() * 20 - 10).toFixed(Math.floor(rnd() * 9));
    out += `cordless drill ${Math.floor(r / 37)},sku-${Math.floor(rnd() * 5000)},${label},${score},${rnd() < 0.5 ? 'mobile' : 'desktop'}${eol}`;
  }
  return out;
}

/** `offsets` false: `b` was read without row offsets (ReadOptions.rowOffsets), and has none; all else is the same. */
function expectSameDump(a: RankedDump, b: RankedDump, offsets = true): void {
  expectSameReading(a, b, { offsets });
  if (!offsets) expect(b.offset).toHaveLength(0);
  expect(a.offset).toHaveLength(a.rowCount);
  expect(b.segments.map((s) => s.name)).toEqual(a.segments.map((s) => s.name));
  // The grade range noted while reading is the one a full scan of the labels finds.
  expect(b.notes.gradeRange).toEqual(gradeRange({ ...a, notes: { ...a.notes, gradeRange: undefined } }));
}

const OUTGROWN_HEADER = 'query_id,item_id,label,score,device\n';

/** CSV rows in runs of about `bytes` bytes each, of long rows (220 more bytes) or short ones. */
function rowRuns(runs: readonly (readonly [bytes: number, long: boolean])[]): string {
  const lines: string[] = [];
  for (const [bytes, long] of runs) {
    for (let size = 0; size < bytes;) {
      const r = lines.length;
      const line = `q${r >> 4},sku-${r % 977},${r % 3},${r % 11},${long ? 'x'.repeat(220) : 'd'}\n`;
      lines.push(line);
      size += line.length;
    }
  }
  return lines.join('');
}

/** Two threads read `path` as one does, their ranges merged by copying (not compacted in place). */
async function expectMergedByCopying(path: string, options: { rowOffsets?: boolean }): Promise<void> {
  const single = await readDump(path, { threads: 1 });
  const copied = engineActivity().rangesMergedByCopying;
  const multi = await readParallelDelimited(path, 'csv', 44, 2, options);
  expect(engineActivity().rangesMergedByCopying).toBe(copied + 1);
  expectSameDump(single, multi!, options.rowOffsets !== false);
}

describe('parallel parsing', () => {
  // Ranges per thread: 1 (one range each), the default 4, and more ranges than chunks, claimed in turn by the threads.
  it.each([[11, 2, 1], [12, 3, 4], [13, 4, 4], [14, 2, 16]])('seed %i with %i threads and %i ranges per thread matches one thread', async (seed, threads, ranges) => {
    const path = tmp.file(`par-${seed}.csv`, randomPlainCsv(seed, 20_000));
    const saved = configureEngine({ tuning: { plainChunkBytes: 10_000 + seed, parseRangesPerThread: ranges } });
    try {
      const single = await readDump(path, { threads: 1 });
      // Called directly so a silent fall-back to one thread cannot pass for parallel parsing.
      const multi = await readParallelDelimited(path, 'csv', 44, threads, {});
      expect(multi).toBeDefined();
      expectSameDump(single, multi!);
      expectSameDump(single, await readDump(path, { threads }));
      // Without row offsets: the parse threads write none, and every other column is the same.
      expectSameDump(single, (await readParallelDelimited(path, 'csv', 44, threads, { rowOffsets: false }))!, false);
    } finally {
      configureEngine(saved);
    }
  });

  // Item keys are made by each parse thread for its own ranges; a query cut by a range's end is keyed again whole.
  it.each([
    ['grouped, long queries cut by range ends', (r: number) => `drill ${Math.floor(r / 700)}`],
    ['queries interleaved (not grouped): keyed on this thread', (r: number) => `drill ${r % 13}`],
    ['grouped, one query across every range', () => 'drill'],
    // Every range grouped on its own, but a query's block comes back later in the file: the merge must not take the file as grouped.
    ['each range grouped, a query returning in a later range', (r: number) => `drill ${Math.floor(r / 3000) % 2}`],
    // Ranges of the first half keyed their rows, the others kept their hashes: only the keyed get hashes back.
    ['grouped first half, interleaved second half', (r: number) => (r < 6000 ? `drill ${Math.floor(r / 700)}` : `saw ${r % 13}`)],
  ])('item keys with items repeated in every query match one thread: %s', async (label, queryOf) => {
    const rnd = seededRandom(77);
    const lines = ['query_id,item_id,label,score'];
    for (let r = 0; r < 12_000; r++) lines.push(`${queryOf(r)},sku-${Math.floor(rnd() * 40)},${Math.floor(rnd() * 3)},${(rnd() * 4).toFixed(3)}`);
    const path = tmp.file(`par-keys-${label.replace(/\W+/g, '-')}.csv`, lines.join('\n') + '\n');
    const saved = configureEngine({ tuning: { plainChunkBytes: 4099, parseRangesPerThread: 5 } });
    try {
      const single = await readDump(path, { threads: 1 });
      const multi = await readParallelDelimited(path, 'csv', 44, 3, {});
      expect(multi).toBeDefined();
      expectSameDump(single, multi!);
      // Repeats within a query are what the keys are for: the check would be empty without them.
      let repeats = 0;
      single.itemKey!.forEach((key, row) => (repeats += key === row ? 0 : 1));
      expect(repeats).toBeGreaterThan(1000);
    } finally {
      configureEngine(saved);
    }
  });

  // Rows not grouped by query are grouped and keyed on this thread and a parse worker (keyUngrouped.ts); the
  // worker keys from hashes alone and leaves a query with a repeat to this thread. Mostly distinct items
  // take the worker's way; the grouping made is the one scoring gets.
  it.each([[0], [0.05]])('rows scattered over the file, items repeated in %f of the rows: the keys and grouping of one thread', async (repeats) => {
    const rnd = seededRandom(78);
    const lines = ['query_id,item_id,label,score'];
    const lastOf = new Map<number, string>();
    for (let r = 0; r < 12_000; r++) {
      const q = Math.floor(rnd() * 300);
      const item = rnd() < repeats && lastOf.has(q) ? lastOf.get(q)! : `sku-${r}`;
      lastOf.set(q, item);
      lines.push(`drill ${q},${item},${Math.floor(rnd() * 3)},${(rnd() * 4).toFixed(3)}`);
    }
    const path = tmp.file(`par-scattered-${repeats}.csv`, lines.join('\n') + '\n');
    const saved = configureEngine({ tuning: { plainChunkBytes: 4099, parseRangesPerThread: 3 } });
    try {
      const single = await readDump(path, { threads: 1 });
      const keyedBefore = engineActivity().queriesKeyedElsewhere;
      const multi = (await readParallelDelimited(path, 'csv', 44, 2, {}))!;
      // The worker's share: about half of the 300 queries, all of them when no item repeats.
      const keyedThere = engineActivity().queriesKeyedElsewhere - keyedBefore;
      expect(keyedThere).toBeGreaterThan(repeats === 0 ? 100 : 0);
      expectSameDump(single, multi);
      const mine = groupByQuery(single);
      const theirs = groupByQuery(multi);
      expect(Array.from(theirs.start)).toEqual(Array.from(mine.start));
      expect(Array.from(theirs.rowsOfQuery!)).toEqual(Array.from(mine.rowsOfQuery!));
      expect(theirs.rowsOfQuery!.buffer).toBeInstanceOf(SharedArrayBuffer);
      const repeated = Array.from(single.itemKey!).filter((key, row) => key !== row).length;
      expect(repeated > 0).toBe(repeats > 0);
      // Scoring reads the values carried along in grouped order (GroupedValues): the same evaluation, on
      // one thread and on two; and with grades from a judgments file, which the carried values must not give.
      expect(usableValues(theirs, multi).values).toBeDefined();
      const metrics = parseMetricList('ndcg@10,err@10,ap,tau');
      for (const threads of [1, 2]) {
        expect(await evaluateDump(multi, metrics, DEFAULT_CONVENTIONS, { threads })).toEqual(await evaluateDump(single, metrics, DEFAULT_CONVENTIONS, { threads: 1 }));
      }
      // Two rows of every three judged, each (query, item) pair once.
      const pairs = new Set(lines.slice(1).filter((_, r) => r % 3 > 0).map((line) => line.split(',').slice(0, 2).join('\t')));
      const judgments = ['query_id\titem_id\tgrade', ...[...pairs].map((pair, r) => `${pair}\t${(r * 7) % 5}`)];
      const table = await readJudgments(tmp.file(`par-scattered-${repeats}.judgments.tsv`, judgments.join('\n') + '\n'));
      const joined = joinJudgments(multi, table);
      expect(usableValues(groupByQuery(joined), joined).values).toBeUndefined();
      const expected = await evaluateDump(joinJudgments(single, table), metrics, DEFAULT_CONVENTIONS, { threads: 1 });
      expect(await evaluateDump(joined, metrics, DEFAULT_CONVENTIONS, { threads: 2 })).toEqual(expected);
      expect(expected.summary[0]!.mean).not.toBeCloseTo((await evaluateDump(single, metrics, DEFAULT_CONVENTIONS, { threads: 1 })).summary[0]!.mean, 3);
    } finally {
      configureEngine(saved);
    }
  });

  it('matches one thread when records outgrow the read buffers, which each thread hands from range to range', async () => {
    // Chunks of 128 bytes and records up to 600: the buffers grow in some ranges and are reused, grown, by the next.
    const rnd = seededRandom(91);
    const lines = ['query_id,item_id,label,score,note'];
    for (let r = 0; r < 3000; r++) lines.push(`q${r >> 4},sku-${Math.floor(rnd() * 900)},${r % 3},${(rnd() * 9).toFixed(2)},${'n'.repeat(Math.floor(rnd() ** 4 * 600))}`);
    const path = tmp.file('par-long-records.csv', lines.join('\n') + '\n');
    const saved = configureEngine({ tuning: { plainChunkBytes: 128, parseRangesPerThread: 8 } });
    try {
      const multi = await readParallelDelimited(path, 'csv', 44, 2, {});
      expect(multi).toBeDefined();
      expectSameDump(await readDump(path, { threads: 1 }), multi!);
    } finally {
      configureEngine(saved);
    }
  });

  // Quoted fields are parsed in each range as on one thread; a range ending inside quotes means a cut fell
  // on a quoted newline, and the file is read on one thread (rangeParse.ts).
  it('reads quoted fields in parallel, as one thread does, when no cut falls inside quotes', async () => {
    const lines = randomPlainCsv(21, 6000).trimEnd().split('\n');
    const quoted = lines.map((line, r) => (r === 0 ? line : line.replace(/^cordless drill (\d+)/, (_, q) => `"drill, cordless ${q}"`)
      .replace(/,(sku-\d+),/, r % 5 === 0 ? ',"$1 ""pro""",' : ',$1,')));
    const path = tmp.file('par-quoted.csv', quoted.join('\n') + '\n');
    const multi = await readParallelDelimited(path, 'csv', 44, 3, {});
    expect(multi).toBeDefined();
    const single = await readDump(path, { threads: 1 });
    expectSameDump(single, multi!);
    expect(single.queries.get(0)).toBe('drill, cordless 0');
    // Doubled quotes inside a quoted id are one quote (row 5 of the file has one).
    expect(single.items.find(`sku-${/sku-(\d+)/.exec(lines[5]!)![1]} "pro"`)).toBeGreaterThanOrEqual(0);
  });

  it('falls back to one thread when a cut falls on a newline inside quotes, and still matches', async () => {
    // Three of every four newlines inside quotes: some of the cuts land inside a quoted field.
    const lines = ['query,item,label,score'];
    for (let r = 0; r < 4000; r++) lines.push(`"drill ${Math.floor(r / 9)}\nline two\nline three",sku-${r},${r % 4},${(r % 89) / 4}`);
    const path = tmp.file('par-quoted-newlines.csv', lines.join('\n') + '\n');
    expect(await readParallelDelimited(path, 'csv', 44, 3, {})).toBeUndefined();
    const single = await readDump(path, { threads: 1 });
    expectSameDump(single, await readDump(path, { threads: 3 }));
    expect(single.rowCount).toBe(4000);
    expect(single.queries.get(0)).toBe('drill 0\nline two\nline three');
  });

  it('a file ending inside quotes is reported as one thread reports it', async () => {
    const path = tmp.file('par-unclosed.csv', randomPlainCsv(22, 6000) + '"drill, cordless,sku-1,1,0.5,mobile\n');
    const one = await readDump(path, { threads: 1 }).catch((e: Error) => e);
    const three = await readDump(path, { threads: 3 }).catch((e: Error) => e);
    expect(one).toBeInstanceOf(InputError);
    expect((three as Error).message).toBe((one as Error).message);
  });

  it('matches one thread when long rows come first and many short ones after (sizing the slices from both ends of each range)', async () => {
    // Long rows first (they set the bytes-per-row estimate), then many short ones.
    const long = Array.from({ length: 3000 }, (_, i) => `q${i >> 5},sku-${i},1,0.5,${'x'.repeat(200)}`);
    const short = Array.from({ length: 40_000 }, (_, i) => `r${i >> 5},s${i % 977},${i % 3},${i % 11},d`);
    const path = tmp.file('par-skewed.csv', ['query_id,item_id,label,score,device', ...long, ...short, ''].join('\n'));
    const multi = await readParallelDelimited(path, 'csv', 44, 2, {});
    expect(multi).toBeDefined();
    expectSameDump(await readDump(path, { threads: 1 }), multi!);
  });

  it("a worker's range outgrowing its slice by more rows than fit in plain arrays comes back (its shared arrays are not transferred)", async () => {
    // Rows in private arrays of 65,536 or more are made in shared memory (columns.ts), which a worker's answer
    // cannot transfer: posting it failed, and the read waited for ever. The first range (the worker's, below)
    // is sized from long rows at both its ends; short rows fill its middle, about 80k of them.
    const path = tmp.file('par-worker-outgrown.csv', OUTGROWN_HEADER + rowRuns([[300_000, true], [1_600_000, false], [2_000_000, true]]));
    const saved = configureEngine({ tuning: { parseRangesPerThread: 1, workersFirst: true } });
    try {
      await expectMergedByCopying(path, {});
    } finally {
      configureEngine(saved);
    }
  }, 60_000);

  it('a range far outgrowing its slice goes on in private arrays, merged by copying: the same rows, with or without offsets', async () => {
    // Two ranges, the second from 3/4 of the rows' bytes (shrinkingShares.ts). Its slice is sized from samples at
    // its two ends, where the rows are long, but short rows fill its middle: it outgrows the slice many times over.
    const path = tmp.file('par-outgrown.csv', OUTGROWN_HEADER + rowRuns([[1_580_000, false], [140_000, true], [400_000, false], [80_000, true]]));
    const saved = configureEngine({ tuning: { parseRangesPerThread: 1 } });
    try {
      await expectMergedByCopying(path, {});
      await expectMergedByCopying(path, { rowOffsets: false });
    } finally {
      configureEngine(saved);
    }
  });

  it('a read on one thread keeps its row offsets even when not asked to (they cost it little)', async () => {
    const path = tmp.file('par-one-thread-offsets.csv', randomPlainCsv(31, 500));
    expectSameDump(await readDump(path, { threads: 1 }), await readDump(path, { threads: 1, rowOffsets: false }));
  });

  it('handles more threads than lines', async () => {
    const path = tmp.file('par-tiny.csv', 'qid,item_id,label,score\nq,a,1,2\n');
    expectSameDump(await readDump(path, { threads: 1 }), await readDump(path, { threads: 8 }));
  });

  it('reports a bad row in a later range with the same message and line', async () => {
    const lines = randomPlainCsv(31, 9000).split('\n');
    lines[7000] = lines[7000]!.replace(/,(\d),/, ',four,');
    const path = tmp.file('par-bad.csv', lines.join('\n'));
    const single = await readDump(path, { threads: 1 }).then(() => undefined, (e: unknown) => e);
    const multi = await readDump(path, { threads: 4 }).then(() => undefined, (e: unknown) => e);
    expect(single).toBeInstanceOf(InputError);
    expect((multi as InputError).message).toBe((single as InputError).message);
    expect((single as InputError).line).toBe(7001);
  });

  it('reports a bad row in the first range (which this thread claims first) with the same message and line', async () => {
    const lines = randomPlainCsv(32, 9000).split('\n');
    lines[500] = lines[500]!.replace(/,(\d),/, ',four,');
    const path = tmp.file('par-bad-first.csv', lines.join('\n'));
    const single = await readDump(path, { threads: 1 }).then(() => undefined, (e: unknown) => e);
    const multi = await readParallelDelimited(path, 'csv', 44, 2, {}).then(() => undefined, (e: unknown) => e);
    expect(single).toBeInstanceOf(InputError);
    expect((multi as InputError).message).toBe((single as InputError).message);
    expect((single as InputError).line).toBe(501);
  });

  it('stops workers when cancelled', async () => {
    const path = tmp.file('par-cancel.csv', randomPlainCsv(41, 50_000));
    const controller = new AbortController();
    const saved = configureEngine({ tuning: { plainChunkBytes: 4096 } });
    try {
      const err = await readDump(path, { threads: 2, signal: controller.signal, onProgress: () => controller.abort() })
        .then(() => undefined, (e: unknown) => e);
      expect(err).toBeInstanceOf(CancelledError);
    } finally {
      configureEngine(saved);
    }
  });
});
