/**
 * The two runs of a comparison, read at the same time (B on a parse worker) or one after the other,
 * give the same dumps; when reads fail, A's error wins, as in a sequential read.
 */
import { describe, expect, it } from 'vitest';
import { readRuns } from '../../extension/cli/readRuns';
import { InputError } from '../../extension/engine/errors';
import type { RankedDump } from '../../extension/engine/model/dump';
import { readDump } from '../../extension/engine/readers/index';
import { seededRandom } from '../reference/random';
import { TempDir } from '../engine/fixtures/readers/tempFiles';
import { useBundledWorkers } from '../worker/support/workers';

const tmp = new TempDir();

useBundledWorkers(tmp, ['parseWorker']);

function run(seed: number): string {
  const rnd = seededRandom(seed);
  let out = 'query,product_id,grade,score,device\n';
  for (let i = 0; i < 3_000; i++) out += `spirit level ${i >> 5},sku-${Math.floor(rnd() * 900)},${Math.floor(rnd() * 4)},${rnd().toFixed(5)},${rnd() < 0.5 ? 'mobile' : 'desktop'}\n`;
  return out;
}

function columns(d: RankedDump) {
  return { rows: d.rowCount, query: Array.from(d.query), item: Array.from(d.item), label: Array.from(d.label), score: Array.from(d.score),
    line: Array.from(d.line), offset: Array.from(d.offset), items: Array.from({ length: d.items.size }, (_, i) => d.items.get(i)), notes: d.notes };
}

describe('readRuns', () => {
  const a = tmp.file('run-a.csv', run(1));
  const b = tmp.file('run-b.csv', run(2));
  const bad = tmp.file('bad.csv', 'query,product_id,grade,score\nq,x,1,high\n');
  const worse = tmp.file('worse.csv', 'query,product_id\nq,x\n');

  it('B read on a worker while A is read here gives the dumps a plain read gives', async () => {
    const [ra, rb] = await readRuns(a, b, {}, { sizeB: 1, concurrentFromBytes: 0 });
    // Columns in shared memory show B really came from a parse worker.
    expect(rb.query.buffer).toBeInstanceOf(SharedArrayBuffer);
    expect(columns(ra)).toEqual(columns(await readDump(a)));
    expect(columns(rb)).toEqual(columns(await readDump(b)));
  });

  it('small runs are read one after the other, on this thread', async () => {
    const [, rb] = await readRuns(a, b, {}, { sizeB: 100, concurrentFromBytes: 1_000 });
    expect(rb.query.buffer).not.toBeInstanceOf(SharedArrayBuffer);
  });

  it('reports progress of both reads together, ending at 1', async () => {
    const seen: number[] = [];
    await readRuns(a, b, {}, { sizeB: 1, concurrentFromBytes: 0, onProgress: (f) => seen.push(f) });
    expect(seen.at(-1)).toBe(1);
    expect(Math.max(...seen)).toBeLessThanOrEqual(1);
  });

  it.each([[0], [1_000_000]])('A\'s error wins when both fail, B\'s shows when only B fails (concurrent from %i bytes)', async (from) => {
    const both = await readRuns(bad, worse, {}, { sizeB: 100, concurrentFromBytes: from }).catch((e: unknown) => e);
    expect(both).toBeInstanceOf(InputError);
    expect((both as InputError).file).toBe(bad);
    const onlyB = await readRuns(a, worse, {}, { sizeB: 100, concurrentFromBytes: from }).catch((e: unknown) => e);
    expect((onlyB as InputError).file).toBe(worse);
  });
});
