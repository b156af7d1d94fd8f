/**
 * A queries table joined to a streamed dump (stream/streamTables.ts) against the same table joined to the
 * dump read in memory (tables/join.ts), to the bit: every mean and per-query value, the join's notes word
 * for word, the query text and weights, each segment's means, the JSON and CSV reports with their query
 * facts, and the means shown while the dump streams in. Seeded dumps with tiny blocks, so queries are
 * cut by block boundaries and stitched; tables that name queries the dump lacks, leave some of its
 * queries out, give empty weights, and have a column named like one of the dump's segments; with and
 * without the dump's own weight column; with judged queries the run lacks scored 0.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { evaluateDump, readDump, segmentRowsOf, streamOrRead } from '../../extension/engine/index';
import { readJudgments } from '../../extension/engine/readers/index';
import { segmentBreakdown } from '../../extension/engine/evaluate/segments';
import type { Evaluation } from '../../extension/engine/evaluate/types';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { DEFAULT_METRICS } from '../../extension/engine/metrics/registry';
import type { MissingQueriesPolicy, RankedDump } from '../../extension/engine/model/dump';
import { formatReport } from '../../extension/engine/report/index';
import { streamEvaluate, type StreamPartial } from '../../extension/engine/stream/streamEvaluate';
import { streamJudgments } from '../../extension/engine/stream/streamJudgments';
import { partialWeights } from '../../extension/engine/stream/streamTables';
import { joinTables, withSideTables } from '../../extension/engine/tables/join';
import { queryFacts, streamedQueryFacts } from '../../extension/engine/tables/queryFacts';
import { readTextTable } from '../../extension/engine/tables/readTable';
import { seededRandom } from '../reference/random';
import { TempDir } from './fixtures/readers/tempFiles';
import { expectStreamedAsInMemory } from './fixtures/streamedAsInMemory';
import { groupedDump, judgmentsFor, type GroupedShape } from './fixtures/streamFiles';

const tmp = new TempDir();
afterAll(() => tmp.remove());
const METRICS = parseMetricList(DEFAULT_METRICS);

interface TableShape {
  /** Share of the dump's queries the table leaves out. */
  readonly leaveOut: number;
  readonly weight: boolean;
  /** A `locale` column, which replaces the dump's own `locale` segment. */
  readonly locale: boolean;
  /** Queries the dump lacks (the first ones named like the judged queries the run lacks). */
  readonly strangers: number;
}

/** A queries table (TSV) for a dump made by groupedDump: text, a device segment, maybe a weight and a locale. */
function queriesTableFor(dumpText: string, seed: number, shape: TableShape): string {
  const rand = seededRandom(seed);
  const names = [...new Set(dumpText.split(/\r?\n/).slice(1).filter((l) => l.length > 0).map((l) => l.split('\t')[0]!))];
  const header = ['query', 'text', 'device', ...(shape.locale ? ['locale'] : []), ...(shape.weight ? ['query_weight'] : [])];
  const lines = [header.join('\t')];
  const row = (name: string) => [name, `the words of ${name}`, rand() < 0.5 ? 'tablet' : 'kiosk',
    ...(shape.locale ? [rand() < 0.5 ? 'nl-NL' : 'en-GB'] : []), ...(shape.weight ? [rand() < 0.15 ? '' : (rand() * 3).toFixed(1)] : [])].join('\t');
  for (const name of names) if (rand() >= shape.leaveOut) lines.push(row(name));
  for (let s = 0; s < shape.strangers; s++) lines.push(row(`stepladder ${s + 1}`));
  // Shuffled: the join is by id, never by order.
  const body = lines.slice(1);
  for (let i = body.length - 1; i > 0; i--) {
    const j = Math.floor(rand() * (i + 1));
    [body[i], body[j]] = [body[j]!, body[i]!];
  }
  return [lines[0], ...body].join('\n') + '\n';
}

/** The CSV and JSON reports with the query facts, as the command line writes them for either path. */
function reports(evaluation: Evaluation, dump: { queries: RankedDump['queries']; rowCount: number }, facts: ReturnType<typeof queryFacts>): string[] {
  return (['json', 'csv'] as const).map((format) =>
    formatReport(format, { evaluation, queryNames: dump.queries, source: 'dump', rowCount: dump.rowCount, ...(facts ? { facts } : {}) }, { worst: 10 }));
}

async function expectJoinedAsInMemory(name: string, seed: number, dumpShape: GroupedShape, tableShape: TableShape,
  judged?: MissingQueriesPolicy): Promise<void> {
  const text = groupedDump(seed, dumpShape);
  const file = tmp.file(`${name}.tsv`, text);
  const queries = tmp.file(`${name}.queries.tsv`, queriesTableFor(text, seed + 1, tableShape));
  const judgments = judged && tmp.file(`${name}.judgments.tsv`, judgmentsFor(text, seed + 2));
  // As the command line reads it in memory: the judgments with the dump, then the tables.
  const dump = await withSideTables(await readDump(file, judgments ? { judgments, missingQueries: judged } : {}), { queries });
  const memory = await evaluateDump(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 1 });
  const streamed = expectStreamedAsInMemory(await streamEvaluate(file, 'tsv', METRICS, DEFAULT_CONVENTIONS, {
    blockBytes: 600, queriesTable: { table: await readTextTable(queries) },
    ...(judgments ? { judgments: streamJudgments(await readJudgments(judgments), judged!) } : {}),
  }), memory, dump, METRICS);
  const joined = streamed.dump.joined!;
  expect(joined.notes).toEqual(dump.joined!.notes);
  expect(joined.queryText).toEqual(dump.joined!.queryText);
  expect(joined.weightSource).toBe(dump.joined!.weightSource);
  expect(Array.from(joined.queryWeight ?? [])).toEqual(Array.from(dump.joined!.queryWeight ?? []));
  expect(streamed.evaluation.weighting).toEqual(memory.weighting);
  const rows = segmentRowsOf(streamed.dump);
  expect(rows.segments.map((s) => s.name)).toEqual(dump.segments.map((s) => s.name));
  dump.segments.forEach((_, k) => expect(segmentBreakdown(rows, streamed.evaluation, k)).toEqual(segmentBreakdown(dump, memory, k)));
  expect(reports(streamed.evaluation, streamed.dump, streamedQueryFacts(streamed.dump))).toEqual(reports(memory, dump, queryFacts(dump)));
  // The means shown while it streams: in one block, every query but the first and last (open at the block's
  // edges, scored at the end); weighted by the table's weights when it has them, as the final means are.
  const partials: StreamPartial[] = [];
  await streamEvaluate(file, 'tsv', METRICS, DEFAULT_CONVENTIONS, {
    blockBytes: 1 << 20, queriesTable: { table: await readTextTable(queries) }, onPartial: (p) => partials.push(p),
    ...(judgments ? { judgments: streamJudgments(await readJudgments(judgments), judged!) } : {}),
  });
  expect(partials).toHaveLength(1);
  const runQueries = dump.unretrieved?.firstAbsentQuery ?? dump.queries.size;
  const ids = Array.from({ length: runQueries - 2 }, (_, k) => k + 1).filter((q) => !Number.isNaN(memory.perQuery.values[0]![q]!));
  const weights = dump.joined?.queryWeight;
  const weighted = ids.filter((q) => weights === undefined || !Number.isNaN(weights[q]!));
  const sum = weighted.reduce((a, q) => a + memory.perQuery.values[0]![q]! * (weights ? weights[q]! : 1), 0);
  const total = weighted.reduce((a, q) => a + (weights ? weights[q]! : 1), 0);
  expect(partials[0]!.summary[0]!.mean).toBeCloseTo(sum / total, 12);
}

describe('a queries table joined to a streamed dump', () => {
  it('text, segments and notes, the table leaving queries out and naming strangers', async () => {
    await expectJoinedAsInMemory('plain', 61, { queries: 80, maxRows: 10, segments: true }, { leaveOut: 0.2, weight: false, locale: false, strangers: 2 });
  });

  it('its weights and a locale column replacing the dump\'s, over the dump\'s own weight column', async () => {
    await expectJoinedAsInMemory('weighted', 62, { queries: 80, maxRows: 10, segments: true, weights: true },
      { leaveOut: 0.1, weight: true, locale: true, strangers: 1 });
  });

  it('its weights for a dump without weights or segments', async () => {
    await expectJoinedAsInMemory('bare', 63, { queries: 70, maxRows: 9 }, { leaveOut: 0.05, weight: true, locale: false, strangers: 0 });
  });

  it('with judged queries the run lacks scored 0: those the table names take its weight, the rest weigh 1', async () => {
    // The strangers are named like the judged queries the run lacks (judgmentsFor's `stepladder N`).
    await expectJoinedAsInMemory('absent', 64, { queries: 60, maxRows: 8, segments: true }, { leaveOut: 0.1, weight: true, locale: false, strangers: 2 }, 'zero');
  });

  it('a table found beside the dump: left out with the join\'s note when it names none of its queries, joined when it names one', async () => {
    const text = groupedDump(65, { queries: 30, maxRows: 6, segments: true });
    const file = tmp.file('found.tsv', text);
    const unrelated = tmp.file('unrelated.queries.tsv', 'query\ttext\tdevice\nstepladder 1\tladder\tkiosk\n');
    const related = tmp.file('related.queries.tsv', queriesTableFor(text, 7, { leaveOut: 0.5, weight: true, locale: false, strangers: 0 }));
    for (const queries of [unrelated, related]) {
      const dump = await withSideTables(await readDump(file), { queries, found: true });
      const memory = await evaluateDump(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 1 });
      const outcome = await streamOrRead(file, {}, METRICS, DEFAULT_CONVENTIONS, { reading: 'stream', blockBytes: 600, queriesTable: { path: queries, found: true } });
      if (outcome.kind !== 'streamed') throw new Error(`not streamed: ${outcome.why}`);
      expect(outcome.dump.joined?.notes).toEqual(dump.joined?.notes);
      expect(outcome.dump.joined?.queriesFile).toBe(dump.joined?.queriesFile);
      expect(reports(outcome.evaluation, outcome.dump, streamedQueryFacts(outcome.dump))).toEqual(reports(memory, dump, queryFacts(dump)));
    }
    const left = await streamOrRead(file, {}, METRICS, DEFAULT_CONVENTIONS, { reading: 'stream', queriesTable: { path: unrelated, found: true } });
    expect(left.kind === 'streamed' && left.dump.joined?.notes[0]).toMatch(/unrelated\.queries\.tsv was found beside the dump but names none of its queries; it is not used\./);
  });

  it('a key given twice is the in-memory join\'s error, line and all', async () => {
    const text = groupedDump(66, { queries: 20, maxRows: 5 });
    const file = tmp.file('twice.tsv', text);
    const first = text.split('\n')[1]!.split('\t')[0]!;
    const queries = tmp.file('twice.queries.tsv', `query\ttext\n${first}\tone\nsomething else\ttwo\n${first}\tthree\n`);
    const inMemory = await withSideTables(await readDump(file), { queries }).then(() => 'joined', (e: Error) => e.message);
    expect(inMemory).toMatch(/twice\.queries\.tsv:4: expected each query once \(also on line 2\)/);
    await expect(streamOrRead(file, {}, METRICS, DEFAULT_CONVENTIONS, { reading: 'stream', queriesTable: { path: queries } })).rejects.toThrow(inMemory);
  });

  it('a weight that is no number of 0 or more, and an empty table, are the in-memory join\'s errors', async () => {
    const text = groupedDump(68, { queries: 20, maxRows: 5 });
    const file = tmp.file('badweight.tsv', text);
    const first = text.split('\n')[1]!.split('\t')[0]!;
    for (const [name, body] of [['negative', `query\tweight\n${first}\t-2\n`], ['word', `query\tweight\nsomething\t1\n${first}\theavy\n`], ['empty', '']] as const) {
      const queries = tmp.file(`${name}.queries.tsv`, body);
      const inMemory = await withSideTables(await readDump(file), { queries }).then(() => 'joined', (e: Error) => e.message);
      expect(inMemory).toContain(`${name}.queries.tsv`);
      await expect(streamOrRead(file, {}, METRICS, DEFAULT_CONVENTIONS, { reading: 'stream', queriesTable: { path: queries } })).rejects.toThrow(inMemory);
    }
  });

  it('the means shown while streaming take a named table\'s weights, leaving out weights the join will refuse', async () => {
    const table = await readTextTable(tmp.file('partial.queries.tsv', 'query\tweight\na\t2\nb\t-1\nc\theavy\nd\t\ne\tInfinity\n'));
    const weights = partialWeights({ table })!;
    expect([...weights]).toEqual([['a', 2], ['b', NaN], ['c', NaN], ['d', NaN], ['e', NaN]]);
    // A found table may belong to other data, and a table without weights weighs nothing: no partial weights.
    expect(partialWeights({ table, found: true })).toBeUndefined();
    expect(partialWeights({ table: await readTextTable(tmp.file('plain.queries.tsv', 'query\ttext\na\twords\n')) })).toBeUndefined();
  });

  it('the join itself is the in-memory one: joinTables over the dump gives the same facts', async () => {
    // A guard on the fixture: the dump's own weight column is a weight to joinTables, as to the stream.
    const text = groupedDump(67, { queries: 10, maxRows: 4, weights: true });
    const dump = joinTables(await readDump(tmp.file('guard.tsv', text)));
    expect(dump.joined?.weightSource).toMatch(/column 'weight' of/);
  });
});
