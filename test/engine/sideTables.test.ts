import { afterAll, describe, expect, it } from 'vitest';
import { gzipSync } from 'node:zlib';
import { parquetWriteBuffer } from 'hyparquet-writer';
import { InputError } from '../../extension/engine/errors';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { segmentBreakdown } from '../../extension/engine/evaluate/segments';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { joinTables, withSideTables } from '../../extension/engine/tables/join';
import { readTextTable } from '../../extension/engine/tables/readTable';
import { queryFacts } from '../../extension/engine/tables/queryFacts';
import { seededRandom } from '../reference/random';
import { runReference } from '../reference/runPython';
import { buildDump, queryRows, type TestRow } from './dumpBuilder';
import { TempDir } from './fixtures/readers/tempFiles';

const temp = new TempDir();
afterAll(() => temp.remove());

const ROWS: TestRow[] = [
  ...queryRows('q1', [3, 0, 1], [0.9, 0.8, 0.7]),
  ...queryRows('q2', [0, 2], [0.4, 0.3]),
  ...queryRows('q3', [2, 0, 1], [0.1, 0.5, 0.2]),
];


describe('side tables: reading', () => {
  it('reads the same cells from CSV, TSV, JSON Lines (plain and gzip) and Parquet', async () => {
    const expected = { names: ['item_id', 'title', 'brand'], cells: [['i0', 'i1'], ['Drill, 18 V', 'Screws "4x40"'], ['Oakridge', '']] };
    const files = [
      temp.file('items.csv', 'item_id,title,brand\ni0,"Drill, 18 V",Oakridge\ni1,"Screws ""4x40""",\n'),
      temp.file('items.tsv', 'item_id\ttitle\tbrand\ni0\tDrill, 18 V\tOakridge\ni1\tScrews "4x40"\t\n'),
      temp.file('items.jsonl', '{"item_id":"i0","title":"Drill, 18 V","brand":"Oakridge"}\n{"item_id":"i1","title":"Screws \\"4x40\\"","brand":null}\n'),
      temp.file('items.jsonl.gz', gzipSync('{"item_id":"i0","title":"Drill, 18 V","brand":"Oakridge"}\n{"item_id":"i1","title":"Screws \\"4x40\\""}\n')),
      temp.file('items.parquet', new Uint8Array(parquetWriteBuffer({ columnData: [
        { name: 'item_id', data: ['i0', 'i1'], type: 'STRING' },
        { name: 'title', data: ['Drill, 18 V', 'Screws "4x40"'], type: 'STRING' },
        { name: 'brand', data: ['Oakridge', null], type: 'STRING' },
      ] }))),
    ];
    for (const file of files) {
      const table = await readTextTable(file);
      expect({ names: table.names, cells: table.cells }, file).toEqual(expected);
    }
    expect((await readTextTable(files[0]!)).lines).toEqual([2, 3]);
  });

  it('fails on one line for an empty file, a missing file and a header with a column named twice', async () => {
    await expect(readTextTable(temp.file('empty.csv', ''))).rejects.toThrow(/empty\.csv: expected .*\(the file is empty\)/);
    await expect(readTextTable(temp.path + '/nowhere.tsv')).rejects.toThrow(/nowhere\.tsv: expected a readable file/);
    await expect(readTextTable(temp.file('twice.csv', 'id,a,a\nq1,x,y\n'))).rejects.toThrow(/twice\.csv:1: expected each column named once/);
  });
});

describe('side tables: joining to a dump', () => {
  it('gives each query its text and segments, and each item its title', async () => {
    const dump = await withSideTables(buildDump(ROWS), {
      queries: temp.file('q.tsv', 'id\tquery\tlocale\nq1\tcordless drill 18v\ten-GB\nq2\twood screws 4x40\tde-DE\nq3\tpvc pipe 32mm\ten-GB\n'),
      items: temp.file('i.csv', 'item_id,title,brand\ni0,Drill,Oakridge\ni2,Pipe,Vantor\n'),
    });
    const q = (name: string) => dump.queries.find(name);
    expect(dump.joined?.queryText?.[q('q2')]).toBe('wood screws 4x40');
    const facts = queryFacts(dump)!;
    expect(facts.segments.map((s) => s.name)).toEqual(['locale']);
    expect(facts.segments[0]!.values[q('q3')]).toBe('en-GB');
    expect(dump.joined?.itemTitle?.[dump.items.find('i2')]).toBe('Pipe');
    expect(dump.joined?.itemTitle?.[dump.items.find('i1')]).toBe('');
    expect(dump.joined?.itemAttributes?.[0]).toMatchObject({ name: 'brand' });
    // i1 is in the dump but not in the items table: counted with an example.
    expect(dump.joined?.notes.join('\n')).toMatch(/1 item of the dump has no row in .*i\.csv \(e\.g\. 'i1'\)/);
    // Segments from the table work in the segment breakdown unchanged.
    const ev = evaluate(dump, parseMetricList('ndcg@10'), DEFAULT_CONVENTIONS, { sensitivity: false });
    expect(segmentBreakdown(dump, ev, 0).map((r) => [r.value, r.queries])).toEqual([['en-GB', 2], ['de-DE', 1]]);
  });

  it('counts table rows naming unknown queries, with examples, and keeps going', async () => {
    const dump = await withSideTables(buildDump(ROWS), { queries: temp.file('extra.tsv', 'qid\ttext\nq1\ta\nq9\tb\nq8\tc\nq7\td\nq6\te\n') });
    expect(dump.joined?.notes.join('\n')).toMatch(/4 rows of .*extra\.tsv name queries the dump does not have \(e\.g\. 'q9', 'q8', 'q7'\)/);
    expect(dump.joined?.notes.join('\n')).toMatch(/2 queries of the dump have no row/);
  });

  it('stops at a key given twice, naming the file, the line and the first line', async () => {
    const file = temp.file('twice.tsv', 'id\ttext\nq1\ta\nq2\tb\nq1\tc\n');
    const err = await withSideTables(buildDump(ROWS), { queries: file }).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(InputError);
    expect((err as Error).message).toBe(`${file}:4: expected each id once (also on line 2) (found "q1")`);
  });

  it('stops when no column names the key', async () => {
    const file = temp.file('nokey.csv', 'name,brand\nDrill,Oakridge\n');
    await expect(withSideTables(buildDump(ROWS), { items: file })).rejects.toThrow(/nokey\.csv:1: expected a column naming the item id/);
  });

  it('a queries table keyed by `query` when it has no id column', async () => {
    const dump = await withSideTables(buildDump(ROWS), { queries: temp.file('byquery.csv', 'query,text,market\nq1,drill,uk\n') });
    expect(dump.joined?.queryText?.[dump.queries.find('q1')]).toBe('drill');
  });

  it('rejects a negative or non-numeric weight with its line', async () => {
    await expect(withSideTables(buildDump(ROWS), { queries: temp.file('w.tsv', 'id\tweight\nq1\t1\nq2\t-1\n') })).rejects.toThrow(/w\.tsv:3: expected a weight of 0 or more/);
  });
});

describe('query weights', () => {
  it('weighted means match numpy.average on a seeded random dump, in the summary and per segment', async () => {
    const random = seededRandom(20261203);
    const rows: TestRow[] = [];
    const queryCount = 60;
    const weightLines = ['query_id\tweight\tmarket'];
    for (let q = 0; q < queryCount; q++) {
      const n = 2 + Math.floor(random() * 12);
      // Every 13th query has nothing relevant (the no-relevant policy decides its value).
      const grades = Array.from({ length: n }, () => (q % 13 === 7 ? 0 : Math.floor(random() * 4)));
      const scores = Array.from({ length: n }, () => Math.round(random() * 20) / 10);
      rows.push(...queryRows(`q${q}`, grades, scores));
      // Some queries without a weight (left out of weighted means), some with weight 0.
      if (q % 17 !== 5) weightLines.push(`q${q}\t${q % 11 === 0 ? 0 : (random() * 5).toFixed(3)}\t${q % 3 === 0 ? 'north' : 'south'}`);
    }
    const dump = joinTables(buildDump(rows), await readTextTable(temp.file('weights.tsv', weightLines.join('\n') + '\n')));
    const metrics = parseMetricList('ndcg@5,ap,rr,tau');
    const ev = evaluate(dump, metrics, DEFAULT_CONVENTIONS);
    const weights = Array.from(dump.joined!.queryWeight!, (w) => (Number.isNaN(w) ? null : w));
    const columns = ev.perQuery.values.map((c) => Array.from(c, (v) => (Number.isNaN(v) ? null : v)));
    const reference = runReference<(number | null)[]>('weighted_mean.py', { columns, weights });
    ev.summary.slice(0, metrics.length).forEach((s, m) => expect(s.mean).toBeCloseTo(reference[m]!, 12));
    expect(ev.weighting?.source).toMatch(/column 'weight' of .*weights\.tsv/);
    expect(ev.warnings.join('\n')).toMatch(/queries have no weight \(e\.g\. 'q5', 'q22', 'q39'\)/);
    // The same reference restricted to one segment value.
    const market = queryFacts(dump)!.segments.find((s) => s.name === 'market')!;
    const north = (x: (number | null)[]) => x.map((v, q) => (market.values[q] === 'north' ? v : null));
    const refNorth = runReference<(number | null)[]>('weighted_mean.py', { columns: columns.map(north), weights });
    const segment = segmentBreakdown(dump, ev, dump.segments.findIndex((s) => s.name === 'market')).find((r) => r.value === 'north')!;
    segment.means.forEach((mean, m) => expect(mean).toBeCloseTo(refNorth[m]!, 12));
    // The rows under other conventions are weighted the same way: the configured row is the summary's mean,
    // "ties: pessimistic" is the weighted mean of a pessimistic evaluation, and "no relevant: zero" is
    // numpy.average with 0 for the queries that have nothing relevant.
    const row = (label: string) => ev.sensitivity.find((r) => r.label.startsWith(label))!.mean;
    expect(row('gain: exponential')).toBeCloseTo(ev.summary[0]!.mean, 12);
    const pessimistic = evaluate(dump, metrics, { ...DEFAULT_CONVENTIONS, ties: 'pessimistic' }, { sensitivity: false });
    expect(row('ties: pessimistic')).toBeCloseTo(pessimistic.summary[0]!.mean, 12);
    const zeroFilled = columns[0]!.map((v, q) => (ev.perQuery.relevant[q] === 0 ? 0 : v));
    const [refZero] = runReference<(number | null)[]>('weighted_mean.py', { columns: [zeroFilled], weights });
    expect(ev.perQuery.relevant.some((r) => r === 0)).toBe(true);
    expect(row('no relevant: zero')).toBeCloseTo(refZero!, 12);
  });

  it('takes a weight column of the dump itself, one value per query, and refuses two values for one query', () => {
    const rows = ROWS.map((r) => ({ ...r, segments: { weight: r.query === 'q1' ? '3' : '1' } }));
    const dump = joinTables(buildDump(rows, ['weight']));
    expect(dump.segments).toHaveLength(0);
    const ev = evaluate(dump, parseMetricList('rr'), DEFAULT_CONVENTIONS, { sensitivity: false });
    // rr per query: q1 1, q2 1/2, q3 1/2 (grade 1 second by score) → (3·1 + 1·0.5 + 1·0.5) / 5 (hand-derived).
    expect(ev.summary[0]!.mean).toBeCloseTo(4 / 5, 12);
    const bad = ROWS.map((r, i) => ({ ...r, segments: { weight: String(i) } }));
    expect(() => joinTables(buildDump(bad, ['weight']))).toThrow(/test\.tsv:3: expected one weight per query \(query 'q1' has 0 on line 2\)/);
  });

  it('leaves a dump without weights unweighted (the default)', () => {
    const dump = buildDump(ROWS);
    expect(joinTables(dump)).toBe(dump);
    expect(evaluate(dump, parseMetricList('rr'), DEFAULT_CONVENTIONS).weighting).toBeUndefined();
  });
});
