/**
 * The editor's worker streaming a dump that has a judgments file, a queries table or an items table found
 * beside it by the naming rule (worker/streamSession.ts). Such files often belong to other data (the demo's
 * judgments key queries by id, its CSV runs by text), so the stream goes ahead and checks them against the
 * queries it saw, as the in-memory read checks them: a file that names none of them is left out with the
 * read's note; a judgments file or queries table that names some of them is joined to the stream. The
 * expectations are the in-memory loads of the same sources, through the same real worker thread.
 */
import { mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EngineWorker } from '../../extension/host/workerHost';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import type { PartialOverview } from '../../extension/protocol/partialOverview';
import type { DumpSource, EvaluationSettings } from '../../extension/protocol/worker';
import { QUERY_NAMES } from '../reference/random';
import { groupedEditorDump } from './support/groupedEditorDump';
import { bundleEngineWorker } from './support/workers';

const dir = mkdtempSync(join(tmpdir(), 'gainline-stream-found-'));
/** The engine worker bundled from source (beforeAll). */
let script = '';
const runs = join(dir, 'runs');
const side = join(dir, 'judgments');
const file = join(runs, 'kettlewood-grouped.csv');
const unrelated = { judgments: join(side, 'grades.qrels'), queries: join(side, 'queries.tsv'), items: join(side, 'items.tsv') };
let worker: EngineWorker;
const settings: EvaluationSettings = { metrics: 'ndcg@10,err@10,ap,rr,p@5,rbp,tau', conventions: DEFAULT_CONVENTIONS };

beforeAll(async () => {
  script = await bundleEngineWorker(dir);
  mkdirSync(runs, { recursive: true });
  mkdirSync(side, { recursive: true });
  writeFileSync(file, groupedEditorDump(4000, 23));
  // Keyed by ids the dump does not use (q001…), as the demo's are; the items table names some of its items.
  writeFileSync(unrelated.judgments, 'q001 0 sku-0-0 3\nq002 0 sku-1-0 1\n');
  writeFileSync(unrelated.queries, 'id\tquery\tdevice\nq001\tcordless drill\tmobile\nq002\twood screws\tdesktop\n');
  writeFileSync(unrelated.items, 'item_id\ttitle\nsku-0-0\tKettlewood drill\nsku-1-0\tKettlewood screws\n');
  worker = new EngineWorker(script);
});

afterAll(() => worker?.dispose());

async function loadBoth(name: string, source: DumpSource) {
  const memory = await worker.call('load', { session: `${name}-memory`, source, settings });
  const partials: PartialOverview[] = [];
  const streamed = await worker.call('load', { session: `${name}-stream`, source, settings, streamFromBytes: 0 },
    { onProgress: (_f, _m, partial) => partial && partials.push(partial) });
  return { memory, streamed, partials };
}

describe('streaming beside files found by the naming rule', () => {
  it('streams when the found files name none of its queries, leaving them out with the read\'s notes', async () => {
    const source: DumpSource = { path: file, ...unrelated, judgmentsFound: true, tablesFound: true };
    const { memory, streamed, partials } = await loadBoth('unrelated', source);
    expect(partials.length).toBeGreaterThan(0);
    expect(streamed.warnings.some((w) => w.startsWith('Streamed:'))).toBe(true);
    expect(streamed.metrics).toEqual(memory.metrics);
    expect(streamed.queryCount).toBe(memory.queryCount);
    // The same words as the in-memory read for the judgments file and the queries table…
    const judgmentsNote = `${unrelated.judgments} was found beside the dump but names none of its queries; it is not used (the dump's own labels are).`;
    const queriesNote = `${unrelated.queries} was found beside the dump but names none of its queries; it is not used.`;
    expect(memory.warnings).toContain(judgmentsNote);
    expect(streamed.warnings).toContain(judgmentsNote);
    expect(streamed.warnings).toContain(queriesNote);
    // Once each: the reader's notes reach the overview through the evaluation's warnings alone.
    for (const warnings of [memory.warnings, streamed.warnings]) expect(warnings.filter((w) => w === judgmentsNote)).toHaveLength(1);
    expect(streamed.warnings.filter((w) => w === queriesNote)).toHaveLength(1);
    // …and the items table, which only a read of the rows can check, is said to be left out.
    expect(streamed.warnings).toContain(`${unrelated.items} was found beside the dump; it is not used while streaming (item titles need the dump's rows).`);
    // Nothing about a read into memory.
    expect(streamed.warnings.filter((w) => w.startsWith('Read into memory'))).toEqual([]);
  });

  it('streams joined at once when a found judgments file judges the first queries, in memory\'s numbers', async () => {
    const judgments = join(side, 'kettlewood.judgments.tsv');
    writeFileSync(judgments, `query_id\titem_id\tlabel\n${QUERY_NAMES[0]} 0\tsku-0-0\t4\n${QUERY_NAMES[1]} 1\tsku-1-9\t2\n${QUERY_NAMES[1]} 1\tsku-1-unseen\t3\n`);
    const source: DumpSource = { path: file, judgments, judgmentsFound: true };
    const { memory, streamed, partials } = await loadBoth('related', source);
    expect(streamed.metrics).toEqual(memory.metrics);
    expect(streamed.queryCount).toBe(memory.queryCount);
    expect(streamed.degenerate).toEqual(memory.degenerate);
    expect(partials.length).toBeGreaterThan(0);
    expect(streamed.warnings.some((w) => w.startsWith('Streamed:'))).toBe(true);
    // One stream: no second pass, no read into memory.
    expect(streamed.warnings.filter((w) => w.includes('a second time') || w.startsWith('Read into memory'))).toEqual([]);
    // The join happened: nearly every row is unjudged, which the dump's own labels are not.
    const own = await worker.call('load', { session: 'related-own', source: { path: file }, settings });
    expect(streamed.metrics).not.toEqual(own.metrics);
    // A joined query's detail lists its judged item the run never retrieved, as in memory.
    const query = `${QUERY_NAMES[1]} 1`;
    const detail = await worker.call('queryDetail', { session: 'related-stream', query });
    expect(detail).toEqual(await worker.call('queryDetail', { session: 'related-memory', query }));
    expect(JSON.stringify(detail)).toContain('sku-1-unseen');
  });

  it('streams a second time, joined, when a found judgments file judges only later queries', async () => {
    const judgments = join(side, 'kettlewood-late.judgments.tsv');
    const late = `${QUERY_NAMES[3999 % QUERY_NAMES.length]} 3999`;
    writeFileSync(judgments, `query_id\titem_id\tlabel\n${late}\tsku-3999-0\t4\n`);
    const source: DumpSource = { path: file, judgments, judgmentsFound: true };
    const { memory, streamed } = await loadBoth('related-late', source);
    expect(streamed.metrics).toEqual(memory.metrics);
    expect(streamed.warnings).toContain(`${judgments} was found beside the dump and names its queries: the dump was streamed a second time to join its labels.`);
    expect(streamed.warnings.filter((w) => w.startsWith('Read into memory'))).toEqual([]);
  });

  it('streams joined to a found queries table that names its queries, giving the in-memory views', async () => {
    const queries = join(side, 'queries-by-text.tsv');
    writeFileSync(queries, `query_id\tdevice\ttext\n${QUERY_NAMES[0]} 0\tmobile\tdrills for brick\n${QUERY_NAMES[1]} 1\tkiosk\tscrews for oak\n`);
    const source: DumpSource = { path: file, queries, tablesFound: true };
    const { memory, streamed, partials } = await loadBoth('related-table', source);
    expect(partials.length).toBeGreaterThan(0);
    expect(streamed.warnings.some((w) => w.startsWith('Streamed:'))).toBe(true);
    expect(streamed.warnings.filter((w) => w.startsWith('Read into memory'))).toEqual([]);
    expect(streamed.metrics).toEqual(memory.metrics);
    expect(streamed.segmentColumns).toEqual(memory.segmentColumns);
    expect(memory.segmentColumns).toContain('device');
    // The join's notes (queries the table lacks), as the in-memory read words them.
    const joinNotes = (warnings: readonly string[]) => warnings.filter((w) => w.includes(queries));
    expect(joinNotes(streamed.warnings)).toEqual(joinNotes(memory.warnings));
    expect(joinNotes(memory.warnings).length).toBeGreaterThan(0);
    expect(await worker.call('segments', { session: 'related-table-stream', column: 'device' }))
      .toEqual(await worker.call('segments', { session: 'related-table-memory', column: 'device' }));
    // The table's text finds a query by its words, streamed as in memory.
    const filtered = { offset: 0, limit: 10, filter: 'screws for oak' };
    const found = await worker.call('queryPage', { session: 'related-table-stream', ...filtered });
    expect(found).toEqual(await worker.call('queryPage', { session: 'related-table-memory', ...filtered }));
    expect(found.rows.map((r) => r.query)).toEqual([`${QUERY_NAMES[1]} 1`]);
    const detail = await worker.call('queryDetail', { session: 'related-table-stream', query: `${QUERY_NAMES[1]} 1` });
    expect(detail).toEqual(await worker.call('queryDetail', { session: 'related-table-memory', query: `${QUERY_NAMES[1]} 1` }));
    expect(JSON.stringify(detail)).toContain('screws for oak');
  });

  it('a named judgments file streams with the dump, and one that names none of its queries is the read\'s error', async () => {
    const source: DumpSource = { path: file, judgments: unrelated.judgments };
    const memory = await worker.call('load', { session: 'named-memory', source, settings }).catch((e: Error) => e.message);
    const streamed = await worker.call('load', { session: 'named', source, settings, streamFromBytes: 0 }).catch((e: Error) => e.message);
    expect(memory).toMatch(/sharing queries with the run/);
    expect(streamed).toBe(memory);
  });
});
