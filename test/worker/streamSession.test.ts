/**
 * The editor's worker streaming a dump (worker/streamSession.ts): the real worker thread, bundled from
 * source, driven through the host's EngineWorker handle. The same file is loaded twice, read into memory
 * (no threshold) and streamed (threshold 0), and every view the streamed session gives is compared with
 * the in-memory one, to the bit: the overview, the sensitivity rows, pages, a query's detail and JSON,
 * a row's line. Partial overviews must come before the answer, each over more of the file.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EngineWorker } from '../../extension/host/workerHost';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { RemoteError, RequestAbortedError } from '../../extension/channel/request';
import type { PartialOverview } from '../../extension/protocol/partialOverview';
import type { EvaluationSettings } from '../../extension/protocol/worker';
import { editorBlockBytes } from '../../extension/worker/streamSession';
import { QUERY_NAMES } from '../reference/random';
import { groupedEditorDump } from './support/groupedEditorDump';
import { bundleEngineWorker } from './support/workers';

const dir = mkdtempSync(join(tmpdir(), 'gainline-stream-session-'));
/** The engine worker bundled from source (beforeAll). */
let script = '';
const file = join(dir, 'kettlewood-grouped.csv');
let worker: EngineWorker;
const settings: EvaluationSettings = { metrics: 'ndcg@10,err@10,ap,rr,p@5,rbp,tau', conventions: DEFAULT_CONVENTIONS };

beforeAll(async () => {
  script = await bundleEngineWorker(dir);
  writeFileSync(file, groupedEditorDump(6000, 16));
  worker = new EngineWorker(script);
});

afterAll(() => worker?.dispose());

describe('a dump streamed in the editor', () => {
  it('cuts files of a few MB into blocks of at least 1 MB, about sixteen per file, at most the engine\'s 32 MB', () => {
    expect(editorBlockBytes(100)).toBe(1 << 20);
    expect(editorBlockBytes(160e6)).toBe(1e7);
    expect(editorBlockBytes(6e9)).toBe(32 << 20);
  });

  it('sends partial overviews, then the overview of the in-memory read to the bit, and answers pages, details and lines as it does', async () => {
    const memory = await worker.call('load', { session: 'memory', source: { path: file }, settings });
    const partials: PartialOverview[] = [];
    const streamed = await worker.call('load', { session: 'stream', source: { path: file }, settings, streamFromBytes: 0 },
      { onProgress: (_f, _m, partial) => partial && partials.push(partial) });
    // The file is about 4 MB, cut into blocks of 1 MB: several partials, each over more of the file.
    expect(partials.length).toBeGreaterThanOrEqual(3);
    for (let i = 1; i < partials.length; i++) {
      expect(partials[i]!.bytesRead).toBeGreaterThan(partials[i - 1]!.bytesRead);
      expect(partials[i]!.queries).toBeGreaterThan(partials[i - 1]!.queries);
    }
    expect(partials[0]!.metrics.map((m) => m.label)).toEqual(memory.metrics.map((m) => m.label));
    expect(partials[0]!.queries).toBeLessThan(memory.queryCount);
    expect(partials.at(-1)!.metrics[0]!.counted).toBeLessThanOrEqual(memory.metrics[0]!.counted);

    expect(streamed.metrics).toEqual(memory.metrics);
    expect(streamed.queryCount).toBe(memory.queryCount);
    expect(streamed.histogram).toEqual(memory.histogram);
    expect(streamed.degenerate).toEqual(memory.degenerate);
    expect(streamed.file).toEqual(memory.file);
    expect(streamed.warnings.some((w) => w.startsWith('Streamed:'))).toBe(true);
    // The stream scores the sensitivity rows in its one pass; in memory they come on their own request.
    expect(streamed.sensitivityLater).toBeUndefined();
    const { rows: sensitivity } = await worker.call('overviewSensitivity', { session: 'memory' });
    expect(streamed.sensitivity).toEqual(sensitivity);
    expect(streamed.segmentColumns).toEqual(['aisle']);
    expect(streamed.segmentColumns).toEqual(memory.segmentColumns);
    expect(streamed.weighting).toBe(memory.weighting);
    expect(await worker.call('segments', { session: 'stream', column: 'aisle' })).toEqual(await worker.call('segments', { session: 'memory', column: 'aisle' }));
    const inAisle = { offset: 0, limit: 50, segment: { column: 'aisle', value: 'aisle-3' } };
    expect(await worker.call('queryPage', { session: 'stream', ...inAisle })).toEqual(await worker.call('queryPage', { session: 'memory', ...inAisle }));

    for (const sort of [undefined, { key: 'ap', descending: true }, { key: 'query', descending: false }]) {
      const page = { offset: 5, limit: 40, ...(sort ? { sort } : {}) };
      expect(await worker.call('queryPage', { session: 'stream', ...page })).toEqual(await worker.call('queryPage', { session: 'memory', ...page }));
    }
    const worst = (await worker.call('queryPage', { session: 'memory', offset: 0, limit: 3 })).rows.map((r) => r.query);
    const last = (await worker.call('queryPage', { session: 'memory', offset: 0, limit: 1, sort: { key: 'query', descending: true } })).rows[0]!.query;
    for (const query of [...worst, last]) {
      const inMemory = await worker.call('queryDetail', { session: 'memory', query });
      expect(await worker.call('queryDetail', { session: 'stream', query })).toEqual(inMemory);
      expect(await worker.call('queryJson', { session: 'stream', query })).toEqual(await worker.call('queryJson', { session: 'memory', query }));
      const row = inMemory.positions.at(-1)!.row;
      expect(await worker.call('rowLocation', { session: 'stream', row })).toEqual(await worker.call('rowLocation', { session: 'memory', row }));
    }
  });

  it('refuses the score diagnostics, which need every row, with a sentence naming the setting', async () => {
    await worker.call('load', { session: 'stream', source: { path: file }, settings, streamFromBytes: 0 });
    await expect(worker.call('overviewDiagnostics', { session: 'stream' })).rejects.toBeInstanceOf(RemoteError);
    await expect(worker.call('overviewDiagnostics', { session: 'stream' })).rejects.toThrow(/^The score diagnostics need the rows.*streamed.*gainline\.reading\.streamFromMegabytes/);
  });

  it('reads into memory below the threshold', async () => {
    const partials: PartialOverview[] = [];
    const progress: [number | null, string][] = [];
    const overview = await worker.call('load', { session: 'small', source: { path: file }, settings, streamFromBytes: 1e9 },
      { onProgress: (f, m, partial) => (partial ? partials.push(partial) : progress.push([f, m])) });
    expect(partials).toEqual([]);
    // The progress of an in-memory load: reading, then scoring, never going back.
    expect(progress.length).toBeGreaterThan(0);
    expect(progress.every(([, m]) => /^(Reading kettlewood-grouped\.csv…|Scoring queries…)$/.test(m))).toBe(true);
    for (let i = 1; i < progress.length; i++) expect(progress[i]![0]!).toBeGreaterThanOrEqual(progress[i - 1]![0]!);
    // Read as without a threshold: the weight column joined (weighted means), not left as a segment.
    const { loadMs: _a, timeline: _t, ...plain } = overview;
    const { loadMs: _b, timeline: _u, ...expected } = await worker.call('load', { session: 'small-plain', source: { path: file }, settings });
    expect(plain).toEqual(expected);
    expect(overview.segmentColumns).toEqual(['aisle']);
    expect(overview.weighting).toMatch(/^column 'weight' of /);
    expect(overview.sensitivityLater).toBe(true);
  });

  it('streams with a named judgments file, giving the in-memory views of the joined dump', async () => {
    const judgments = join(dir, 'kettlewood.judgments.tsv');
    const lines = ['query_id\titem_id\tlabel'];
    for (let q = 0; q < 6000; q += 3) lines.push(`${QUERY_NAMES[q % QUERY_NAMES.length]} ${q}\tsku-${q}-0\t${q % 5}`, `${QUERY_NAMES[q % QUERY_NAMES.length]} ${q}\tsku-${q}-judged-only\t3`);
    writeFileSync(judgments, lines.join('\n') + '\n');
    const source = { path: file, judgments, missingQueries: 'skip' as const };
    const memory = await worker.call('load', { session: 'judged-memory', source, settings });
    const partials: PartialOverview[] = [];
    const streamed = await worker.call('load', { session: 'judged', source, settings, streamFromBytes: 0 },
      { onProgress: (_f, _m, partial) => partial && partials.push(partial) });
    expect(partials.length).toBeGreaterThan(0);
    expect(streamed.warnings.some((w) => w.startsWith('Streamed:'))).toBe(true);
    expect(streamed.metrics).toEqual(memory.metrics);
    expect(streamed.degenerate).toEqual(memory.degenerate);
    // The join's notes, each once (they reach the overview through the evaluation's warnings alone).
    expect(streamed.warnings.some((w) => w.includes(judgments))).toBe(true);
    for (const warnings of [memory.warnings, streamed.warnings]) expect(new Set(warnings).size).toBe(warnings.length);
    const { rows: sensitivity } = await worker.call('overviewSensitivity', { session: 'judged-memory' });
    expect(streamed.sensitivity).toEqual(sensitivity);
    const query = `${QUERY_NAMES[0]} 0`;
    const detail = await worker.call('queryDetail', { session: 'judged', query });
    expect(detail).toEqual(await worker.call('queryDetail', { session: 'judged-memory', query }));
    expect(JSON.stringify(detail)).toContain('sku-0-judged-only');
  });

  it('streams under missing queries zero with its weight and aisle columns: the judged queries it lacks weigh 1, in no aisle, as in memory', async () => {
    const judgments = join(dir, 'kettlewood-zero.judgments.tsv');
    const lines = ['query_id\titem_id\tlabel'];
    for (let q = 0; q < 6000; q += 5) lines.push(`${QUERY_NAMES[q % QUERY_NAMES.length]} ${q}\tsku-${q}-1\t${q % 4}`);
    lines.push('tile cutter 1\tsku-t-1\t3', 'tile cutter 2\tsku-t-2\t1');
    writeFileSync(judgments, lines.join('\n') + '\n');
    const source = { path: file, judgments, missingQueries: 'zero' as const };
    const memory = await worker.call('load', { session: 'zero-memory', source, settings });
    const streamed = await worker.call('load', { session: 'zero', source, settings, streamFromBytes: 0 });
    expect(streamed.warnings.some((w) => w.startsWith('Streamed:'))).toBe(true);
    expect(streamed.queryCount).toBe(6002);
    expect(streamed.metrics).toEqual(memory.metrics);
    expect(streamed.weighting).toBe(memory.weighting);
    expect(await worker.call('segments', { session: 'zero', column: 'aisle' })).toEqual(await worker.call('segments', { session: 'zero-memory', column: 'aisle' }));
    const last = { offset: 0, limit: 5, sort: { key: 'query', descending: true } };
    expect(await worker.call('queryPage', { session: 'zero', ...last })).toEqual(await worker.call('queryPage', { session: 'zero-memory', ...last }));
    const absentDetail = await worker.call('queryDetail', { session: 'zero', query: 'tile cutter 1' });
    expect(absentDetail).toEqual(await worker.call('queryDetail', { session: 'zero-memory', query: 'tile cutter 1' }));
    expect(absentDetail.segments).toEqual({});
    // Without rows, a judged query the run lacks is in no aisle: no aisle's filter lists it, in memory or streamed.
    for (const session of ['zero', 'zero-memory']) {
      for (let a = 0; a < 7; a++) {
        const page = await worker.call('queryPage', { session, offset: 0, limit: 2000, segment: { column: 'aisle', value: `aisle-${a}` } });
        expect(page.rows.some((r) => r.query.startsWith('tile cutter'))).toBe(false);
      }
    }
  });

  it('streams with a named queries table, its weights and segments as in memory; a named items table reads into memory and says why', async () => {
    const queries = join(dir, 'kettlewood.queries.tsv');
    const lines = ['query_id\tdevice\tweight'];
    for (let q = 0; q < 6000; q += 3) lines.push(`${QUERY_NAMES[q % QUERY_NAMES.length]} ${q}\t${q % 2 === 0 ? 'mobile' : 'kiosk'}\t${q % 7 === 0 ? '' : (q % 4) + 1}`);
    writeFileSync(queries, lines.join('\n') + '\n');
    const partials: PartialOverview[] = [];
    const memory = await worker.call('load', { session: 'tabled-memory', source: { path: file, queries }, settings });
    const overview = await worker.call('load', { session: 'tabled', source: { path: file, queries }, settings, streamFromBytes: 0 },
      { onProgress: (_f, _m, partial) => partial && partials.push(partial) });
    expect(partials.length).toBeGreaterThan(0);
    expect(overview.warnings.some((w) => w.startsWith('Streamed:'))).toBe(true);
    expect(overview.metrics).toEqual(memory.metrics);
    expect(overview.weighting).toBe(memory.weighting);
    expect(overview.weighting).toMatch(/column 'weight' of .*kettlewood\.queries\.tsv/);
    expect(await worker.call('segments', { session: 'tabled', column: 'device' })).toEqual(await worker.call('segments', { session: 'tabled-memory', column: 'device' }));
    const items = join(dir, 'kettlewood.items.tsv');
    writeFileSync(items, 'item_id\ttitle\nsku-0-0\tKettlewood drill\n');
    const withItems = await worker.call('load', { session: 'itemized', source: { path: file, queries, items }, settings, streamFromBytes: 0 });
    expect(withItems.warnings.filter((w) => w.startsWith('Read into memory rather than streamed'))).toEqual([
      `Read into memory rather than streamed (it is over gainline.reading.streamFromMegabytes), since the items table ${items} goes with it, and joining needs its rows.`]);
  });

  it('names a missing file in the same words with or without a threshold', async () => {
    const missing = join(dir, 'gone.csv');
    const plain = await worker.call('load', { session: 'gone', source: { path: missing }, settings }).catch((e: Error) => e.message);
    const streamed = await worker.call('load', { session: 'gone', source: { path: missing }, settings, streamFromBytes: 0 }).catch((e: Error) => e.message);
    expect(plain).toContain('gone.csv');
    expect(streamed).toBe(plain);
  });

  it('stops when cancelled after the first partial overview, and the worker keeps answering', async () => {
    const abort = new AbortController();
    let partials = 0;
    const load = worker.call('load', { session: 'cancelled', source: { path: file }, settings, streamFromBytes: 0 }, {
      signal: abort.signal,
      onProgress: (_f, _m, partial) => {
        if (partial && ++partials === 1) abort.abort();
      },
    });
    await expect(load).rejects.toBeInstanceOf(RequestAbortedError);
    expect(partials).toBe(1);
    // Another whole stream meanwhile: had the cancelled one gone on, it would have ended and kept its session.
    const again = await worker.call('load', { session: 'after-cancel', source: { path: file }, settings, streamFromBytes: 0 });
    expect(again.queryCount).toBe(6000);
    await expect(worker.call('queryPage', { session: 'cancelled', offset: 0, limit: 1 })).rejects.toThrow(/nothing is loaded/);
  });
});
