/**
 * Labels from a separate judgments file, for a dump of any format.
 *
 * The judgments file is either lines of `query unused item grade` (whitespace-separated) or any table the
 * dump readers read (CSV, TSV, JSON Lines, Parquet) whose header names the query, item and grade roles,
 * found as for dumps or named with `judgmentsColumns`. A (query, item) pair judged twice is an error.
 *
 * Joining: the judgments replace any label the dump has (the disagreements are counted); rows without a
 * judgment are unjudged (grade 0, counted). Judged items a query's list lacks go into the dump's
 * `unretrieved` side table, so the ideal ranking and the judged-set denominators see them. Judged queries
 * with no row in the run are counted, and under the `zero` policy added as queries without rows.
 */
import { promises as fsp } from 'node:fs';
import { InputError } from '../errors';
import { BytePool } from '../model/bytePool';
import { itemOfRow, withFields, type JudgmentsJoin, type MissingQueriesPolicy, type RankedDump, type UnretrievedJudged } from '../model/dump';
import { RowTexts } from '../model/rowTexts';
import { gradeRangeOf, summariseRows } from '../model/rowSummary';
import { MapStringPool, type StringPool } from '../model/stringPool';
import type { ReadOptions } from './readOptions';
import { parseNumber } from './numbers';
import { textHead } from './detect';
import { applyJudgments, firstRepeatAnyOrder, firstRepeatGrouped, isGrouped, JOIN_EXAMPLES, judgmentsByPair, judgmentsByQueryRun, judgmentsByRowQuery, type RowsAndJudgments } from './judgmentMatch';
import { LineSink, pumpText, splitWhitespace } from './source';

/** The start of the error for a judgments file that names none of the run's queries. */
export const SHARES_NO_QUERY = 'a judgments file sharing queries with the run';

/** One judgment per entry, in file order; ids index the table's own pools. */
export interface JudgmentTable {
  readonly path: string;
  readonly queries: StringPool;
  readonly items: StringPool;
  readonly query: Uint32Array;
  readonly item: Uint32Array;
  readonly grade: Float64Array;
  /** 1-based line of each judgment (0 for Parquet, where `row` names it instead). */
  readonly line: Uint32Array;
}


/**
 * Reads a judgments file in either layout. `readTable` reads a tabular file (the dump readers, passed in
 * to keep this module free of the format dispatch).
 */
export async function readJudgmentTable(path: string, options: ReadOptions,
  readTable: (path: string, options: ReadOptions) => Promise<RankedDump>): Promise<JudgmentTable> {
  const table = await looksLikeLines(path)
    ? await readJudgmentLines(path, options)
    : fromDump(await readTable(path, { columns: { ...options.judgmentsColumns, optional: ['score'] }, signal: options.signal }));
  rejectRepeats(table);
  return table;
}

/**
 * True when the first non-blank line has four whitespace-separated fields, the second and fourth numeric
 * (a header line never does). Reads only the file's first bytes; Parquet and folders are tables.
 */
async function looksLikeLines(path: string): Promise<boolean> {
  let head: Buffer;
  try {
    head = await textHead(path);
  } catch {
    return false; // the table readers say what is wrong with the file
  }
  if (head.length >= 4 && head.toString('latin1', 0, 4) === 'PAR1') return false;
  if ((await fsp.stat(path)).isDirectory()) return false;
  const starts = new Int32Array(5);
  const ends = new Int32Array(5);
  let s = 0;
  while (s < head.length) {
    let e = head.indexOf(10, s);
    if (e < 0) e = head.length;
    const fields = splitWhitespace(head, s, e, starts, ends);
    if (fields > 0) {
      return fields === 4 && Number.isFinite(parseNumber(head, starts[1]!, ends[1]!)) && Number.isFinite(parseNumber(head, starts[3]!, ends[3]!));
    }
    s = e + 1;
  }
  // Empty or blank: the line reader says that a judgments file needs at least one judgment.
  return true;
}

/** `query unused item grade` lines (blank lines skipped). */
export async function readJudgmentLines(path: string, options: Pick<ReadOptions, 'signal'>): Promise<JudgmentTable> {
  const queries = new BytePool();
  const items = new BytePool();
  let q = new Uint32Array(1024);
  let it = new Uint32Array(1024);
  let g = new Float64Array(1024);
  let lines = new Uint32Array(1024);
  let n = 0;
  const starts = new Int32Array(5);
  const ends = new Int32Array(5);
  await pumpText(path, new LineSink((buf, s, e, line) => {
    const fields = splitWhitespace(buf, s, e, starts, ends);
    if (fields === 0) return;
    if (fields !== 4) {
      throw new InputError('4 whitespace-separated fields in the judgments file: query, unused, item, grade', path, line, buf.toString('utf8', s, e));
    }
    if (n === q.length) {
      q = grow(q);
      it = grow(it);
      g = grow(g);
      lines = grow(lines);
    }
    const grade = parseNumber(buf, starts[3]!, ends[3]!);
    if (!Number.isFinite(grade)) {
      throw new InputError('a number for the grade (4th field)', path, line, buf.toString('utf8', starts[3]!, ends[3]!));
    }
    q[n] = queries.intern(buf, starts[0]!, ends[0]!);
    it[n] = items.intern(buf, starts[2]!, ends[2]!);
    g[n] = grade;
    lines[n++] = line;
  }), { signal: options.signal });
  if (n === 0) throw new InputError('at least one judgment line (query unused item grade)', path);
  // The pools outlive the read: they let go of its last chunk.
  queries.forgetCaller();
  items.forgetCaller();
  return { path, queries, items, query: q.subarray(0, n), item: it.subarray(0, n), grade: g.subarray(0, n), line: lines.subarray(0, n) };
}

function fromDump(dump: RankedDump): JudgmentTable {
  for (let r = 0; r < dump.rowCount; r++) {
    if (!Number.isFinite(dump.label[r]!)) {
      throw new InputError('a grade on every row of the judgments file', dump.path, dump.line[r] || undefined, dump.line[r] ? undefined : `row ${r + 1}`);
    }
  }
  return { path: dump.path, queries: dump.queries, items: dump.items, query: dump.query, item: dump.item, grade: dump.label, line: dump.line };
}

/** A pair judged twice is an error naming both places: which grade should win is not ours to guess. */
function rejectRepeats(table: JudgmentTable): void {
  const repeat = isGrouped(table.query) ? firstRepeatGrouped(table, table.items.size) : firstRepeatAnyOrder(table);
  if (repeat === undefined) return;
  const [seen, j] = repeat;
  const place = (i: number) => (table.line[i] ? `line ${table.line[i]}` : `row ${i + 1}`);
  throw new InputError(`each (query, item) pair judged once; '${table.queries.get(table.query[j]!)}' / '${table.items.get(table.item[j]!)}' is already judged on ${place(seen)}`,
    table.path, table.line[j] || undefined, table.line[j] ? undefined : place(j));
}

/** Id of `id` of pool `from` in pool `to` (-1 when absent), comparing bytes when both pools keep them. */
function idIn(from: StringPool, id: number, to: StringPool): number {
  if (from instanceof BytePool && to instanceof BytePool) {
    const bytes = from.bytesOf(id);
    return to.findBytes(bytes, 0, bytes.length);
  }
  return to.find(from.get(id));
}

/** True when some query of the judgments is one of `queries` (a dump's; joinJudgments refuses a table where none is). */
export function sharesQuery(queries: StringPool, table: JudgmentTable): boolean {
  for (let q = 0; q < table.queries.size; q++) if (idIn(table.queries, q, queries) >= 0) return true;
  return false;
}

/** The note of a dump that keeps its own labels because the judgments file found beside it names none of its queries. */
export function unusedJudgmentsNote(judgments: string): string {
  return `${judgments} was found beside the dump but names none of its queries; it is not used (the dump's own labels are).`;
}

/** The error of a judgments file that names none of the run's queries (nothing to take labels from). */
export function noSharedQueryError(table: JudgmentTable, runPath: string): InputError {
  return new InputError(`${SHARES_NO_QUERY} (none of its ${table.queries.size} queries appear in the run ${runPath})`, table.path);
}

/** Adds a string to a dump's pool (both pool kinds intern). */
function addTo(pool: StringPool, text: string): number {
  if (pool instanceof BytePool) return pool.internString(text);
  if (pool instanceof MapStringPool) return pool.intern(text);
  throw new Error(`a string pool that takes new ids, not ${pool.constructor.name}`);
}

/** The dump with its labels taken from `table` (see the module comment). */
export function joinJudgments(dump: RankedDump, table: JudgmentTable, policy: MissingQueriesPolicy = 'skip'): RankedDump {
  const judgedQueries = table.queries.size;
  const dumpQueries = dump.queries.size;
  if (!sharesQuery(dump.queries, table)) throw noSharedQueryError(table, dump.path);
  const queryInDump = new Int32Array(judgedQueries);
  for (let q = 0; q < judgedQueries; q++) queryInDump[q] = idIn(table.queries, q, dump.queries);
  const matched = dump.itemTexts instanceof RowTexts && isGrouped(dump.query)
    ? matchByItemBytes(dump, dump.itemTexts, table, queryInDump) : matchByItemIds(dump, table, queryInDump);

  // In shared memory when the dump's columns are (a parallel read): scoring threads then share it, not copy it.
  const label = new Float64Array(dump.label.buffer instanceof SharedArrayBuffer ? new SharedArrayBuffer(dump.rowCount * 8) : new ArrayBuffer(dump.rowCount * 8));
  const used = new Uint8Array(table.grade.length);
  const { inlineRows, disagreements, examples: disagreementExamples } = applyJudgments(matched.judgmentOf, table.grade, dump.label, label, used,
    (r) => `${dump.queries.get(dump.query[r]!)}/${itemOfRow(dump, r)}`);

  // Judged queries the run lacks: counted; under `zero` they join the dump as queries without rows.
  let absentQueries = 0;
  const absentExamples: string[] = [];
  for (let q = 0; q < judgedQueries; q++) {
    if (queryInDump[q]! >= 0) continue;
    absentQueries++;
    if (absentExamples.length < JOIN_EXAMPLES) absentExamples.push(table.queries.get(q));
    if (policy === 'zero') queryInDump[q] = addTo(dump.queries, table.queries.get(q));
  }
  const { side: unretrieved, inFileOrder } = sideTable(dump.queries.size, table, queryInDump, used, dumpQueries, matched.sideItems);
  let unretrievedInRun = 0;
  for (let q = 0; q < dumpQueries; q++) unretrievedInRun += unretrieved.start[q + 1]! - unretrieved.start[q]!;

  const gaps = summariseRows(label, dump.score, 0, dump.rowCount);
  for (const g of unretrieved.grade) {
    if (g < gaps.lowest) gaps.lowest = g;
    if (g > gaps.highest) gaps.highest = g;
  }
  const join: JudgmentsJoin = {
    path: table.path, unretrieved: unretrievedInRun, absentQueries, absentExamples, missingQueries: policy,
    inlineLabelRows: inlineRows, disagreements, disagreementExamples,
  };
  const notes = { ...dump.notes, messages: [...dump.notes.messages], unjudgedRows: gaps.unjudged, gradeRange: gradeRangeOf(gaps), judgments: join };
  let absentLines = 0;
  for (let j = 0; j < table.grade.length; j++) if (queryInDump[table.query[j]!]! < 0 || queryInDump[table.query[j]!]! >= dumpQueries) absentLines++;
  notes.judgmentsWithoutRun = absentLines;
  notes.judgedQueriesWithoutRun = absentQueries;
  notes.messages.push(...describeJoin(join, matched.unknownItems));
  return matched.finish(dump, { label, notes, unretrieved }, inFileOrder);
}

/** How rows found their judgments, and what the side table's item ids mean. */
interface Matched {
  readonly judgmentOf: Int32Array;
  /** Judged items no row names. */
  readonly unknownItems: number;
  /** The side table's item id of judgment j. */
  readonly sideItems: { readonly pool: StringPool | undefined; of(j: number): number };
  /** The joined dump; `judgedItems` are the side table's item ids in file order. */
  finish(dump: RankedDump, fields: Pick<RankedDump, 'label' | 'notes' | 'unretrieved'>, judgedItems: Uint32Array): RankedDump;
}

/**
 * Rows matched by dump-wide item ids (a dump that has them, or rows in any order). The judged items the run
 * never retrieved join the dump's item pool, so that the side table's ids are the dump's.
 */
function matchByItemIds(dump: RankedDump, table: JudgmentTable, queryInDump: Int32Array): Matched {
  const itemInDump = new Int32Array(table.items.size);
  let unknownItems = 0;
  for (let i = 0; i < itemInDump.length; i++) {
    itemInDump[i] = idIn(table.items, i, dump.items);
    if (itemInDump[i]! < 0) unknownItems++;
  }
  const ids: RowsAndJudgments = {
    rowQuery: dump.query, rowItem: dump.item, itemCount: dump.items.size, judgments: table.grade.length,
    queryOf: (j) => queryInDump[table.query[j]!]!, itemOf: (j) => itemInDump[table.item[j]!]!,
  };
  return {
    judgmentOf: isGrouped(dump.query) ? judgmentsByQueryRun(ids, judgmentsByRowQuery(ids)) : judgmentsByPair(ids),
    unknownItems,
    sideItems: {
      pool: undefined,
      of: (j) => {
        let i = itemInDump[table.item[j]!]!;
        if (i < 0) i = itemInDump[table.item[j]!] = addTo(dump.items, table.items.get(table.item[j]!));
        return i;
      },
    },
    finish: (d, fields) => ({ ...d, ...fields }),
  };
}

/**
 * Rows matched by their item bytes (a grouped dump that keeps them per row): each row's item is looked up
 * in the judgments' item pool, so the dump-wide item ids, costly on millions of distinct items, are not
 * made for the join. The side table's ids are the judgments' own (`unretrieved.items`); when the dump's
 * ids are made later, the judged items the run never retrieved join its pool as they would have here.
 */
function matchByItemBytes(dump: RankedDump, texts: RowTexts, table: JudgmentTable, queryInDump: Int32Array): Matched {
  const items = BytePool.copyOf(table.items);
  const rowItem = new Int32Array(dump.rowCount);
  texts.findEachIn(items, rowItem);
  const seen = new Uint8Array(items.size);
  for (let r = 0; r < rowItem.length; r++) if (rowItem[r]! >= 0) seen[rowItem[r]!] = 1;
  let unknownItems = 0;
  for (let i = 0; i < seen.length; i++) unknownItems += 1 - seen[i]!;
  const byBytes: RowsAndJudgments = {
    rowQuery: dump.query, rowItem, itemCount: items.size, judgments: table.grade.length,
    queryOf: (j) => queryInDump[table.query[j]!]!, itemOf: (j) => table.item[j]!,
  };
  const judgmentOf = judgmentsByQueryRun(byBytes, judgmentsByRowQuery(byBytes));
  return {
    judgmentOf,
    unknownItems,
    sideItems: { pool: items, of: (j) => table.item[j]! },
    finish: (d, fields, judgedItems) => withJudgedItems(d, fields, items, judgedItems),
  };
}

/**
 * The joined dump, keeping `item` and `items` made on first use: when they are, the side table's items
 * join the pool in judgment order (file order), as matchByItemIds adds them.
 */
function withJudgedItems(dump: RankedDump, fields: Pick<RankedDump, 'label' | 'notes' | 'unretrieved'>, judged: StringPool, judgedItems: Uint32Array): RankedDump {
  const copy = withFields(dump, fields);
  let added = false;
  const pool = (): StringPool => {
    const own = dump.items;
    if (!added) {
      added = true;
      for (const i of judgedItems) addTo(own, judged.get(i));
    }
    return own;
  };
  return Object.defineProperties(copy, {
    items: { get: pool, enumerable: true, configurable: true },
    item: { get: () => (pool(), dump.item), enumerable: true, configurable: true },
  });
}

/**
 * Judged items each query's list lacks, grouped by dump query id (a counting sort), file order within a
 * query; with the side table's item ids in file order (the order they join a pool).
 */
function sideTable(queries: number, table: JudgmentTable, queryInDump: Int32Array, used: Uint8Array, dumpQueries: number,
  sideItems: Matched['sideItems']): { side: UnretrievedJudged; inFileOrder: Uint32Array } {
  const start = new Uint32Array(queries + 1);
  for (let j = 0; j < table.grade.length; j++) {
    const q = queryInDump[table.query[j]!]!;
    if (q >= 0 && used[j] === 0) start[q + 1]!++;
  }
  for (let q = 0; q < queries; q++) start[q + 1] += start[q]!;
  const total = start[queries]!;
  const grade = new Float64Array(total);
  const item = new Uint32Array(total);
  const line = new Uint32Array(total);
  const inFileOrder = new Uint32Array(total);
  const next = start.slice(0, queries);
  let k = 0;
  for (let j = 0; j < table.grade.length; j++) {
    const q = queryInDump[table.query[j]!]!;
    if (q < 0 || used[j] === 1) continue;
    const i = sideItems.of(j);
    const at = next[q]!++;
    grade[at] = table.grade[j]!;
    item[at] = i;
    line[at] = table.line[j]!;
    inFileOrder[k++] = i;
  }
  const side = { start, grade, item, line, firstAbsentQuery: dumpQueries, ...(sideItems.pool ? { items: sideItems.pool } : {}) };
  return { side, inFileOrder };
}

/** Reader notes; the counts of the join are told by the evaluation's warnings (evaluate/warnings.ts). */
export function describeJoin(join: JudgmentsJoin, unknownItems: number): string[] {
  const notes = [`labels from the judgments file ${join.path}`];
  if (unknownItems > 0) notes.push(`${unknownItems} judged items do not occur anywhere in the run`);
  return notes;
}

function grow<T extends Uint32Array | Float64Array>(a: T): T {
  const b = new (a.constructor as new (n: number) => T)(a.length * 2);
  b.set(a as never);
  return b;
}
