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
import type { JudgmentsJoin, MissingQueriesPolicy, RankedDump, UnretrievedJudged } from '../model/dump';
import { gradeRangeOf, summariseRows } from '../model/rowSummary';
import { MapStringPool, type StringPool } from '../model/stringPool';
import type { ReadOptions } from './readOptions';
import { parseNumber } from './numbers';
import { textHead } from './detect';
import { PairIndex } from './pairIndex';
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

/** How many examples a note lists. */
const EXAMPLES = 5;

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
  const repeat = isGrouped(table.query) ? firstRepeatGrouped(table) : firstRepeatAnyOrder(table);
  if (repeat === undefined) return;
  const [seen, j] = repeat;
  const place = (i: number) => (table.line[i] ? `line ${table.line[i]}` : `row ${i + 1}`);
  throw new InputError(`each (query, item) pair judged once; '${table.queries.get(table.query[j]!)}' / '${table.items.get(table.item[j]!)}' is already judged on ${place(seen)}`,
    table.path, table.line[j] || undefined, table.line[j] ? undefined : place(j));
}

/** True when each query's judgments are together, queries in first-seen order (ids climb by at most one). */
export function isGrouped(query: Uint32Array): boolean {
  if (query.length === 0) return true;
  let highest = query[0]!;
  for (let j = 1; j < query.length; j++) {
    const q = query[j]!;
    if (q === query[j - 1]) continue;
    if (q !== highest + 1) return false;
    highest = q;
  }
  return true;
}

/**
 * The first judgment (file order) whose pair was judged before, and that earlier one, for judgments grouped
 * by query: each item remembers the query and judgment that named it last, eight bytes per item, where an
 * index of every pair takes twelve bytes per slot (twice the judgments) and a cache miss per look-up.
 */
export function firstRepeatGrouped(table: JudgmentTable): [number, number] | undefined {
  // Per item, side by side (one cache line): the query that last named it + 1, and that judgment.
  const last = new Int32Array(2 * table.items.size);
  for (let j = 0; j < table.grade.length; j++) {
    const q = table.query[j]! + 1;
    const at = 2 * table.item[j]!;
    if (last[at] === q) return [last[at + 1]!, j];
    last[at] = q;
    last[at + 1] = j;
  }
  return undefined;
}

export function firstRepeatAnyOrder(table: JudgmentTable): [number, number] | undefined {
  const first = new PairIndex(table.grade.length);
  for (let j = 0; j < table.grade.length; j++) {
    const seen = first.add(table.query[j]!, table.item[j]!, j);
    if (seen >= 0) return [seen, j];
  }
  return undefined;
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
  const itemInDump = new Int32Array(table.items.size);
  let unknownItems = 0;
  for (let i = 0; i < itemInDump.length; i++) {
    itemInDump[i] = idIn(table.items, i, dump.items);
    if (itemInDump[i]! < 0) unknownItems++;
  }
  const judgmentOf = isGrouped(dump.query) ? judgmentsByQueryRun(dump, table, queryInDump, itemInDump) : judgmentsByPair(dump, table, queryInDump, itemInDump);

  const label = new Float64Array(dump.rowCount);
  const used = new Uint8Array(table.grade.length);
  let inlineRows = 0;
  let disagreements = 0;
  const disagreementExamples: string[] = [];
  for (let r = 0; r < dump.rowCount; r++) {
    const j = judgmentOf[r]!;
    const judged = j < 0 ? NaN : table.grade[j]!;
    if (j >= 0) used[j] = 1;
    const inline = dump.label[r]!;
    if (inline === inline) {
      inlineRows++;
      if (inline !== judged) {
        disagreements++;
        if (disagreementExamples.length < EXAMPLES) {
          disagreementExamples.push(`${dump.queries.get(dump.query[r]!)}/${dump.items.get(dump.item[r]!)}: ${inline} in the dump, ${judged === judged ? judged : 'unjudged'} in the judgments`);
        }
      }
    }
    label[r] = judged;
  }

  // Judged queries the run lacks: counted; under `zero` they join the dump as queries without rows.
  let absentQueries = 0;
  const absentExamples: string[] = [];
  for (let q = 0; q < judgedQueries; q++) {
    if (queryInDump[q]! >= 0) continue;
    absentQueries++;
    if (absentExamples.length < EXAMPLES) absentExamples.push(table.queries.get(q));
    if (policy === 'zero') queryInDump[q] = addTo(dump.queries, table.queries.get(q));
  }
  const unretrieved = sideTable(dump, table, queryInDump, itemInDump, used, dumpQueries);
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
  notes.messages.push(...describeJoin(join, unknownItems));
  return { ...dump, label, notes, unretrieved };
}

/**
 * The judgment of each row (-1 for none), for any row order: an index of every (dump query, dump item)
 * pair of the judgments that occur in the dump, one look-up per row.
 */
export function judgmentsByPair(dump: RankedDump, table: JudgmentTable, queryInDump: Int32Array, itemInDump: Int32Array): Int32Array {
  const judgmentOf = new PairIndex(table.grade.length);
  for (let j = 0; j < table.grade.length; j++) {
    const q = queryInDump[table.query[j]!]!;
    const i = itemInDump[table.item[j]!]!;
    if (q >= 0 && i >= 0) judgmentOf.add(q, i, j);
  }
  const out = new Int32Array(dump.rowCount);
  for (let r = 0; r < dump.rowCount; r++) out[r] = judgmentOf.find(dump.query[r]!, dump.item[r]!);
  return out;
}

/**
 * judgmentsByPair for a dump whose rows are grouped by query (the usual dump): for each query's run of
 * rows its judgments mark their items (judgment + 1 in an array by dump item id), each row reads its
 * item's mark, and the marks are cleared. The rows of a query name their items in first-seen order, so
 * the reads run along the array, where a pair index misses the cache on nearly every row.
 */
export function judgmentsByQueryRun(dump: RankedDump, table: JudgmentTable, queryInDump: Int32Array, itemInDump: Int32Array): Int32Array {
  const queries = dump.queries.size;
  // The judgments of each dump query whose item occurs in the dump, file order within a query (a counting sort).
  const start = new Uint32Array(queries + 1);
  for (let j = 0; j < table.grade.length; j++) {
    const q = queryInDump[table.query[j]!]!;
    if (q >= 0 && q < queries && itemInDump[table.item[j]!]! >= 0) start[q + 1]!++;
  }
  for (let q = 0; q < queries; q++) start[q + 1]! += start[q]!;
  const order = new Uint32Array(start[queries]!);
  const next = start.slice(0, queries);
  for (let j = 0; j < table.grade.length; j++) {
    const q = queryInDump[table.query[j]!]!;
    if (q >= 0 && q < queries && itemInDump[table.item[j]!]! >= 0) order[next[q]!++] = j;
  }
  const mark = new Int32Array(dump.items.size);
  const out = new Int32Array(dump.rowCount);
  const { query, item } = dump;
  for (let r = 0; r < dump.rowCount;) {
    const q = query[r]!;
    let end = r + 1;
    while (end < dump.rowCount && query[end] === q) end++;
    for (let e = start[q]!; e < start[q + 1]!; e++) mark[itemInDump[table.item[order[e]!]!]!] = order[e]! + 1;
    for (let k = r; k < end; k++) out[k] = mark[item[k]!]! - 1;
    for (let e = start[q]!; e < start[q + 1]!; e++) mark[itemInDump[table.item[order[e]!]!]!] = 0;
    r = end;
  }
  return out;
}

/** Judged items each query's list lacks, grouped by dump query id (a counting sort). */
function sideTable(dump: RankedDump, table: JudgmentTable, queryInDump: Int32Array, itemInDump: Int32Array, used: Uint8Array,
  dumpQueries: number): UnretrievedJudged {
  const queries = dump.queries.size;
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
  const next = start.slice(0, queries);
  for (let j = 0; j < table.grade.length; j++) {
    const q = queryInDump[table.query[j]!]!;
    if (q < 0 || used[j] === 1) continue;
    let i = itemInDump[table.item[j]!]!;
    if (i < 0) i = itemInDump[table.item[j]!] = addTo(dump.items, table.items.get(table.item[j]!));
    const at = next[q]!++;
    grade[at] = table.grade[j]!;
    item[at] = i;
    line[at] = table.line[j]!;
  }
  return { start, grade, item, line, firstAbsentQuery: dumpQueries };
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
