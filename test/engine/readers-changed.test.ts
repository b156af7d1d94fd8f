/**
 * A dump rewritten while it is read (a training job writing its next epoch) is reported as changed,
 * never returned half-read, in every format and on every path through the readers: plain and gzip
 * text, several parse threads, JSON Lines, run files and Parquet. When the rewrite breaks a record
 * or the compressed stream first, the change is still what the message names.
 */
import { writeFileSync } from 'node:fs';
import { gzipSync } from 'node:zlib';
import { parquetWriteBuffer } from 'hyparquet-writer';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { InputError } from '../../extension/engine/errors';
import { readDump, type ReadOptions } from '../../extension/engine/readers/index';
import { sourceTuning } from '../../extension/engine/readers/source';
import { seededRandom } from '../reference/random';
import { TempDir } from './fixtures/readers/tempFiles';
import { useBundledWorkers } from '../worker/support/workers';

const tmp = new TempDir();
const savedTuning = { ...sourceTuning };

useBundledWorkers(tmp, ['parseWorker']);
beforeAll(() => {
  // Small chunks, so progress is reported (and the file rewritten) long before the end.
  sourceTuning.plainChunkBytes = 4096;
  sourceTuning.gzipChunkBytes = 1024;
});
afterAll(() => {
  Object.assign(sourceTuning, savedTuning);
});

/** Rows with random scores, so gzip cannot shrink them to a single chunk. */
function csvRows(seed: number, rows: number): string {
  const rnd = seededRandom(seed);
  let out = 'query_id,item_id,label,score\n';
  for (let i = 0; i < rows; i++) out += `mitre saw ${i >> 5},sku-${Math.floor(rnd() * 1e6)},${Math.floor(rnd() * 4)},${rnd().toFixed(6)}\n`;
  return out;
}

/** Reads `path`, calling `rewrite` at the first progress report; returns the error the read ends with. */
async function readWhileRewriting(path: string, rewrite: () => void, options: ReadOptions = {}): Promise<InputError> {
  let rewritten = false;
  const err = await readDump(path, {
    ...options,
    onProgress: (fraction) => {
      if (!rewritten && fraction < 1) {
        rewritten = true;
        rewrite();
      }
    },
  }).then(() => undefined, (e: unknown) => e);
  expect(rewritten, 'the rewrite happened during the read').toBe(true);
  expect(err).toBeInstanceOf(InputError);
  return err as InputError;
}

const CHANGED = /the file changed while it was read; read again/;

describe('a dump rewritten during the read', () => {
  it('gzip CSV, rewritten with other compressed content', async () => {
    const path = tmp.file('changing.csv.gz', gzipSync(csvRows(1, 20_000)));
    const err = await readWhileRewriting(path, () => writeFileSync(path, gzipSync(csvRows(2, 20_000))));
    expect(err.message).toMatch(CHANGED);
  });

  it('CSV on two parse threads, cut short mid-record', async () => {
    const text = csvRows(3, 20_000);
    const path = tmp.file('changing-parallel.csv', text);
    // Truncating inside a record: without the change check this reads as a short last record.
    const err = await readWhileRewriting(path, () => writeFileSync(path, text.slice(0, text.length / 3 + 7)), { threads: 2 });
    expect(err.message).toMatch(CHANGED);
  });

  it('CSV on one thread, cut short mid-record', async () => {
    const text = csvRows(4, 20_000);
    const path = tmp.file('changing-short.csv', text);
    const err = await readWhileRewriting(path, () => writeFileSync(path, text.slice(0, text.length / 2 + 5)), { threads: 1 });
    expect(err.message).toMatch(CHANGED);
  });

  it('JSON Lines', async () => {
    const rnd = seededRandom(5);
    const line = (i: number) => JSON.stringify({ query_id: `hinge ${i >> 4}`, item_id: `sku-${i}`, label: i % 3, score: rnd() });
    const text = Array.from({ length: 8_000 }, (_, i) => line(i)).join('\n');
    const path = tmp.file('changing.jsonl', text);
    const err = await readWhileRewriting(path, () => writeFileSync(path, text + '\n' + line(99_999)));
    expect(err.message).toMatch(CHANGED);
  });

  it('a run file with its judgments', async () => {
    const run = Array.from({ length: 8_000 }, (_, i) => `q${i >> 4} Q0 sku-${i} ${(i % 16) + 1} ${100 - (i % 16)} kettle`).join('\n');
    const path = tmp.file('changing.run', run + '\n');
    const judgments = tmp.file('changing.qrels', Array.from({ length: 500 }, (_, q) => `q${q} 0 sku-${q * 16} 2`).join('\n') + '\n');
    const err = await readWhileRewriting(path, () => writeFileSync(path, run + '\nq0 Q0 sku-x 99 0 kettle\n'), { judgments });
    expect(err.message).toMatch(CHANGED);
  });

  it('Parquet, rewritten between row groups', async () => {
    const n = 600;
    const columns = (shift: number) => [
      { name: 'query_id', data: Array.from({ length: n }, (_, i) => `deck screws ${i >> 4}`), type: 'STRING' as const },
      { name: 'item_id', data: Array.from({ length: n }, (_, i) => `sku-${i + shift}`), type: 'STRING' as const },
      { name: 'label', data: Array.from({ length: n }, (_, i) => i % 3), type: 'INT32' as const },
      { name: 'score', data: Array.from({ length: n }, (_, i) => (i * 7919) % 101), type: 'DOUBLE' as const },
    ];
    const path = tmp.file('changing.parquet', new Uint8Array(parquetWriteBuffer({ columnData: columns(0), rowGroupSize: 100 })));
    const err = await readWhileRewriting(path, () =>
      writeFileSync(path, new Uint8Array(parquetWriteBuffer({ columnData: columns(1_000_000), rowGroupSize: 50 }))));
    expect(err.message).toMatch(CHANGED);
  });

  it('an unchanged file with a bad record still reports the record, not a change', async () => {
    const path = tmp.file('bad.csv', 'query_id,item_id,label,score\nq,a,1,0.5\nq,b,two,0.4\n');
    const err = await readDump(path).then(() => undefined, (e: unknown) => e);
    expect(err).toBeInstanceOf(InputError);
    expect((err as InputError).line).toBe(3);
    expect((err as Error).message).not.toMatch(CHANGED);
  });
});
