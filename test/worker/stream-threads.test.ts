/**
 * The streamed path on its worker threads (the stream worker bundled fresh from source) against the
 * in-memory path: the same evaluation bit for bit, whichever thread read which block, and the threads
 * all gone afterwards, also when the stream gives way or meets a bad row.
 */
import { describe, expect, it } from 'vitest';
import { engineActivity } from '../../extension/engine/config';
import { evaluateDump, readDump } from '../../extension/engine/index';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { DEFAULT_METRICS } from '../../extension/engine/metrics/registry';
import { streamEvaluate } from '../../extension/engine/stream/streamEvaluate';
import { streamJudgments } from '../../extension/engine/stream/streamJudgments';
import { TempDir } from '../engine/fixtures/readers/tempFiles';
import { groupedDump, judgmentsFor } from '../engine/fixtures/streamFiles';
import { readJudgments } from '../../extension/engine/readers/index';
import { useBundledWorkers } from './support/workers';

const tmp = new TempDir();
useBundledWorkers(tmp, ['streamWorker']);
const METRICS = parseMetricList(DEFAULT_METRICS);

describe('streaming on worker threads', () => {
  it('gives the in-memory evaluation bit for bit on 1 to 3 threads', async () => {
    const file = tmp.file('threads.tsv', groupedDump(21, { queries: 120, maxRows: 14, scoreLevels: 4, noRelevantShare: 0.1, badScoreShare: 0.05, duplicateShare: 0.05, topGrade: 5, lateTopGrade: true }));
    const metrics = parseMetricList(`${DEFAULT_METRICS},err@5`);
    const memory = await evaluateDump(await readDump(file), metrics, DEFAULT_CONVENTIONS, { threads: 1 });
    for (const threads of [1, 2, 3]) {
      const s = await streamEvaluate(file, 'tsv', metrics, DEFAULT_CONVENTIONS, { blockBytes: 900, threads });
      expect(s.kind).toBe('streamed');
      if (s.kind !== 'streamed') return;
      expect(s.threads).toBe(threads);
      expect(s.blocks).toBeGreaterThan(10);
      expect(JSON.stringify(s.evaluation, replacer)).toBe(JSON.stringify(memory, replacer));
    }
  });

  it('joins a judgments file on the threads (the table shared, not copied) as the in-memory read joins it', async () => {
    const text = groupedDump(22, { queries: 120, maxRows: 12, scoreLevels: 4, duplicateShare: 0.05 });
    const file = tmp.file('judged.tsv', text);
    const judgments = tmp.file('judged.judgments.tsv', judgmentsFor(text, 5, { unretrievedPerQuery: 4, unretrievedTopGrade: 6 }));
    const dump = await readDump(file, { judgments, missingQueries: 'zero' });
    const memory = await evaluateDump(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 1 });
    const table = await readJudgments(judgments);
    for (const threads of [1, 2]) {
      const s = await streamEvaluate(file, 'tsv', METRICS, DEFAULT_CONVENTIONS, { blockBytes: 900, threads, judgments: streamJudgments(table, 'zero') });
      if (s.kind !== 'streamed') throw new Error(`fell back: ${s.reason}`);
      expect(s.threads).toBe(threads);
      expect(JSON.stringify(s.evaluation, replacer)).toBe(JSON.stringify(memory, replacer));
      // The judged items no row names are counted from marks every thread left in the shared table.
      expect(s.dump.notes).toEqual(dump.notes);
    }
    await waitForThreads();
  });

  it('reports a bad row at its line and leaves no thread behind', async () => {
    const lines = groupedDump(4, { queries: 60, maxRows: 8 }).split('\n');
    lines[200] = lines[200]!.replace(/\t[^\t]*$/, '\tplenty');
    const file = tmp.file('bad.tsv', lines.join('\n'));
    await expect(streamEvaluate(file, 'tsv', METRICS, DEFAULT_CONVENTIONS, { blockBytes: 500, threads: 2 })).rejects.toThrow(/bad\.tsv:201:/);
    await waitForThreads();
    const ungrouped = tmp.file('ungrouped.tsv', `${groupedDump(4, { queries: 30, maxRows: 8 })}cordless drill 18v 1\tSKU-1\t1\t0.5\n`);
    const s = await streamEvaluate(ungrouped, 'tsv', METRICS, DEFAULT_CONVENTIONS, { blockBytes: 500, threads: 2 });
    expect(s.kind === 'fallback' && s.reason).toMatch(/query 'cordless drill 18v 1' appears again at line \d+/);
    await waitForThreads();
  });
});

/** Typed arrays as arrays, and every number written exactly (NaN, -0 and infinities apart). */
function replacer(_key: string, value: unknown): unknown {
  if (ArrayBuffer.isView(value)) return Array.from(value as unknown as ArrayLike<number>, (v) => (Object.is(v, -0) ? '-0' : String(v)));
  if (typeof value === 'number') return Object.is(value, -0) ? '-0' : String(value);
  return value;
}

/** Terminated threads report their exit a little later: poll for it (no fixed pause). */
async function waitForThreads(): Promise<void> {
  await expect.poll(() => engineActivity().liveThreads, { timeout: 10000 }).toBe(0);
}
