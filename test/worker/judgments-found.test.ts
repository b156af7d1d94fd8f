/**
 * A judgments file found beside a dump (ReadOptions.judgmentsFound) rather than named by the user: when it
 * names none of the dump's queries it belongs to other data, and the dump keeps its own labels with a note
 * saying why. The dump must then be exactly the dump read without the file, and be read once: reading it
 * a second time doubled the editor's first screen whenever an unrelated judgments folder sat nearby.
 * Hand-made files; the expectations are the plain reads of the same files.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { engineActivity } from '../../extension/engine/config';
import { readDump } from '../../extension/engine/index';
import type { RankedDump } from '../../extension/engine/model/dump';
import { readSource } from '../../extension/worker/readSource';
import { plainRows, TempDir } from '../engine/fixtures/readers/tempFiles';

const tmp = new TempDir();
afterAll(() => tmp.remove());

const NOTE = /^.*unrelated\.qrels was found beside the dump but names none of its queries; it is not used \(the dump's own labels are\)\.$/;

/** Queries keyed by their text, as a hardware-store dump keys them; the judgments key theirs by id. */
const LABELLED = ['query,product_id,grade,score', 'cordless drill,SKU-1,2,0.9', 'cordless drill,SKU-2,0,0.4', 'wood screws,SKU-3,1,0.7', 'wood screws,SKU-4,,0.2'].join('\n') + '\n';
const UNRELATED = ['q001 0 SKU-1 3', 'q002 0 SKU-3 0'].join('\n') + '\n';

/**
 * Reads as the editor does (worker/readSource.ts), counting progress reports: each pass over the file
 * reports its own, so a second read of the dump shows as twice the reports of a plain read.
 */
async function readCounted(path: string, found?: string): Promise<{ dump: RankedDump; reports: number }> {
  let reports = 0;
  const source = found === undefined ? { path } : { path, judgments: found, judgmentsFound: true };
  const dump = await readSource(source, { onProgress: () => reports++ });
  return { dump, reports };
}

function expectSameDump(actual: RankedDump, expected: RankedDump): void {
  expect(plainRows(actual)).toEqual(plainRows(expected));
  expect(actual.format).toBe(expected.format);
  expect(actual.notes.messages.slice(1)).toEqual(expected.notes.messages);
  expect(actual.notes.messages[0]).toMatch(NOTE);
  const { messages: _a, ...restActual } = actual.notes;
  const { messages: _e, ...restExpected } = expected.notes;
  expect(restActual).toEqual(restExpected);
}

describe('a judgments file found beside a dump that names none of its queries', () => {
  it('leaves the dump as read without it, with a note, reading the dump once', async () => {
    const dump = tmp.file('labelled.csv', LABELLED);
    const judgments = tmp.file('unrelated.qrels', UNRELATED);
    const own = await readCounted(dump);
    const found = await readCounted(dump, judgments);
    expectSameDump(found.dump, own.dump);
    expect(found.dump.notes.judgments).toBeUndefined();
    expect(own.reports).toBeGreaterThan(0);
    expect(found.reports).toBe(own.reports);
  });

  it('is an error when the user named the file, as on the command line', async () => {
    const dump = tmp.file('named.csv', LABELLED);
    const judgments = tmp.file('unrelated.qrels', UNRELATED);
    await expect(readDump(dump, { judgments })).rejects.toThrow(/sharing queries with the run/);
  });

  it('reports a dump without a label column as a plain read does', async () => {
    const dump = tmp.file('unlabelled.csv', ['query,product_id,score', 'cordless drill,SKU-1,0.9'].join('\n') + '\n');
    const judgments = tmp.file('unrelated.qrels', UNRELATED);
    const plain = await readDump(dump).then(() => 'read', (e: Error) => e.message);
    expect(plain).not.toBe('read');
    await expect(readDump(dump, { judgments, judgmentsFound: true })).rejects.toThrow(plain);
  });

  it('a label column whose every cell is empty gives the plain read too (the rows are read again)', async () => {
    const dump = tmp.file('empty-grades.csv', ['query,product_id,grade,score', 'cordless drill,SKU-1,,0.9', 'wood screws,SKU-3,,0.2'].join('\n') + '\n');
    const judgments = tmp.file('unrelated.qrels', UNRELATED);
    expectSameDump(await readDump(dump, { judgments, judgmentsFound: true }), await readDump(dump));
  });

  it('a found file that shares a query is joined as a named one is', async () => {
    const dump = tmp.file('shared.csv', LABELLED);
    // A table, since these query names hold spaces: the judgments readers read any dump format.
    const judgments = tmp.file('related.csv', ['query,product_id,grade', 'cordless drill,SKU-1,3', 'cordless drill,SKU-9,1'].join('\n') + '\n');
    const found = await readDump(dump, { judgments, judgmentsFound: true });
    const named = await readDump(dump, { judgments });
    expect(plainRows(found)).toEqual(plainRows(named));
    expect(found.notes).toEqual(named.notes);
    expect(found.notes.judgments?.unretrieved).toBe(1);
    // Labels come from the judgments: SKU-1 is 3 there (2 inline), SKU-2 unjudged.
    expect(Array.from(found.label.subarray(0, 2))).toEqual([3, NaN]);
  });

  it('leaves the dump-wide item ids unmade, with found tables too, until they are read (they cost 0.15 s per million items)', async () => {
    const dump = tmp.file('lazy.csv', LABELLED);
    const judgments = tmp.file('unrelated.qrels', UNRELATED);
    const queries = tmp.file('queries.tsv', 'id\tquery\nq001\tgarden hose\n');
    const items = tmp.file('items.tsv', 'product_id\ttitle\nSKU-77\tpipe wrench\n');
    const made = engineActivity().itemIdsMade;
    const found = await readSource({ path: dump, judgments, judgmentsFound: true, queries, items, tablesFound: true });
    // Neither the unrelated judgments, nor the tables naming none of the dump's queries or items, made them.
    expect(engineActivity().itemIdsMade).toBe(made);
    expect(found.joined?.notes.filter((n) => /was found beside the dump but names none of its (queries|items)/.test(n))).toHaveLength(2);
    // Made when read, the same as a plain read's.
    const plain = await readDump(dump);
    expect(Array.from(found.item)).toEqual(Array.from(plain.item));
    expect(Array.from({ length: found.items.size }, (_, i) => found.items.get(i))).toEqual(['SKU-1', 'SKU-2', 'SKU-3', 'SKU-4']);
    expect(engineActivity().itemIdsMade).toBe(made + 2);
  });

  it('joins a found items table that names one of the dump\'s items, found by its bytes', async () => {
    const dump = tmp.file('titled.csv', LABELLED);
    const items = tmp.file('items.tsv', 'product_id\ttitle\nSKU-77\tpipe wrench\nSKU-3\twood screws 4x40\n');
    const found = await readSource({ path: dump, items, tablesFound: true });
    expect(found.joined?.itemsFile).toBe(items);
    expect(found.joined?.itemTitle?.[found.items.find('SKU-3')]).toBe('wood screws 4x40');
    expect(found.joined?.itemTitle?.[found.items.find('SKU-1')]).toBe('');
  });
});
