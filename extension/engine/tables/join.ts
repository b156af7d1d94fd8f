/**
 * Joins a queries table and an items table to a dump by id. Query columns other than the key, the
 * text and the weight become segments (one interned value per dump row, so every segment view works
 * on them unchanged); item titles and attributes are kept by item id for the query detail and exports.
 * A weight column of the dump itself (`weight`, `query_weight`) is taken too, from each query's first row.
 *
 * Nothing is dropped silently: table rows naming ids the dump does not have, and dump ids with no
 * table row, are counted with examples. A key given twice is an error naming both lines.
 */
import { InputError } from '../errors';
import { BytePool } from '../model/bytePool';
import { withFields, type JoinedFacts, type RankedDump, type SegmentColumn } from '../model/dump';
import { RowTexts } from '../model/rowTexts';
import { MapStringPool, type StringPool } from '../model/stringPool';
import { readTextTable, type TextTable } from './readTable';
import { isWeightName, resolveSideColumns, type SideKind } from './sideRoles';
import { formatCountInText } from '../../presentation/numbers';

export interface SideTableFiles {
  /** Query id → text, segments and weight. */
  readonly queries?: string;
  /** Item id → title and attributes. */
  readonly items?: string;
  /**
   * The tables were found by the naming rule rather than named by the user: a table that shares no id
   * with the dump is then left out (with a note) instead of emptying every query's segments.
   */
  readonly found?: boolean;
}

const EXAMPLES = 3;

/** Reads the side tables named in `files` and joins them (and any weight column of the dump) to the dump. */
export async function withSideTables(dump: RankedDump, files: SideTableFiles, signal?: AbortSignal): Promise<RankedDump> {
  let queries = files.queries === undefined ? undefined : await readTextTable(files.queries, { signal, purpose: 'a queries table' });
  let items = files.items === undefined ? undefined : await readTextTable(files.items, { signal, purpose: 'an items table' });
  const skipped: string[] = [];
  if (files.found && queries && !sharesAnId(queries, 'queries', dump.queries)) {
    skipped.push(unusedTableNote(queries.file, 'queries'));
    queries = undefined;
  }
  if (files.found && items && !namesAnItemOf(items, dump)) {
    skipped.push(unusedTableNote(items.file, 'items'));
    items = undefined;
  }
  const joined = joinTables(dump, queries, items);
  if (skipped.length === 0) return joined;
  return withFields(joined, { joined: { ...(joined.joined ?? {}), notes: [...skipped, ...(joined.joined?.notes ?? [])] } });
}

/** The note of a table found beside the dump that names none of its queries (or items), and so is not used. */
export function unusedTableNote(file: string, kind: SideKind): string {
  return `${file} was found beside the dump but names none of its ${kind}; it is not used.`;
}

/**
 * Whether an items table names any of the dump's items. A dump that keeps item bytes per row is searched
 * by those bytes, so checking a table found beside it does not make the dump-wide item ids.
 */
function namesAnItemOf(table: TextTable, dump: RankedDump): boolean {
  if (!(dump.itemTexts instanceof RowTexts)) return sharesAnId(table, 'items', dump.items);
  const keys = new BytePool();
  for (const key of table.cells[resolveSideColumns(table, 'items').key]!) keys.internString(key);
  return dump.itemTexts.namesAnyOf(keys);
}

export function sharesAnId(table: TextTable, kind: SideKind, pool: StringPool): boolean {
  const keys = table.cells[resolveSideColumns(table, kind).key]!;
  return keys.some((id) => pool.find(id) >= 0);
}

/** Pure join of tables already read; returns the dump unchanged when there is nothing to join. */
export function joinTables(dump: RankedDump, queries?: TextTable, items?: TextTable): RankedDump {
  const dumpWeight = dump.segments.findIndex((s) => isWeightName(s.name));
  if (queries === undefined && items === undefined && dumpWeight < 0) return dump;
  const notes: string[] = [];
  let segments = [...dump.segments];
  const facts: JoiningFacts = { notes };

  if (dumpWeight >= 0) {
    const column = segments[dumpWeight]!;
    facts.queryWeight = weightsFromDump(dump, column);
    facts.weightSource = `column '${column.name}' of ${dump.path}`;
    segments.splice(dumpWeight, 1);
  }
  if (queries !== undefined) addQueriesTable(facts, notes, segments, queries, dump.queries, (name, valueOfQuery) => segmentFromTable(dump, name, valueOfQuery));
  if (items !== undefined) {
    facts.itemsFile = items.file;
    const roles = resolveSideColumns(items, 'items');
    const rowOf = keyRows(items, roles.key, dump.items, 'items', notes);
    notes.push(...missingNote(rowOf, dump.items, 'item', 'items', items.file));
    if (roles.text >= 0) facts.itemTitle = byId(rowOf, items.cells[roles.text]!);
    facts.itemAttributes = roles.attributes.map((c) => ({ name: items.names[c]!, values: byId(rowOf, items.cells[c]!) }));
  }
  if (facts.queryWeight !== undefined) notes.push(...weighAbsentQueries(dump.queries, dump.unretrieved?.firstAbsentQuery ?? facts.queryWeight.length, facts.queryWeight));
  segments = segments.filter(Boolean);
  return withFields(dump, { segments, joined: facts });
}

/** The facts being joined to a dump, writable while the join runs. */
export type JoiningFacts = { -readonly [K in keyof JoinedFacts]: JoinedFacts[K] };

/**
 * Joins a queries table to the query ids of `queries` (a dump's, read in memory or streamed): its text and
 * weights go to `facts`, its notes to `notes`, and each of its other columns becomes a segment made by
 * `segmentOf`, replacing one of `segments` of that name.
 */
export function addQueriesTable<S extends { readonly name: string }>(facts: JoiningFacts, notes: string[], segments: S[], table: TextTable,
  queries: StringPool, segmentOf: (name: string, valueOfQuery: readonly string[]) => S): void {
  const joined = joinQueriesTable(table, queries, segments.map((s) => s.name), facts.queryWeight !== undefined);
  notes.push(...joined.notes);
  facts.queriesFile = table.file;
  if (joined.text) facts.queryText = joined.text;
  if (joined.weight) {
    facts.queryWeight = joined.weight;
    facts.weightSource = joined.weightSource;
  }
  for (const { name, valueOfQuery } of joined.attributes) {
    const replaced = segments.findIndex((s) => s.name === name);
    if (replaced >= 0) segments.splice(replaced, 1);
    segments.push(segmentOf(name, valueOfQuery));
  }
}

/** What a queries table gives each query of a dump, and the join's notes in the order joinTables words them. */
interface QueriesTableJoin {
  readonly text?: string[];
  readonly weight?: Float64Array;
  readonly weightSource?: string;
  /** The table's other columns, each query's value: each becomes a segment, replacing the dump's own of that name. */
  readonly attributes: readonly { readonly name: string; readonly valueOfQuery: readonly string[] }[];
  readonly notes: readonly string[];
}

/**
 * Joins a queries table to the query ids of `queries` (a dump's, read in memory or streamed). `ownSegments`:
 * the dump's own segment columns (a table column of the same name replaces one, with a note); `ownWeight`:
 * the dump has a weight column (the table's weight column replaces it, with a note).
 */
function joinQueriesTable(table: TextTable, queries: StringPool, ownSegments: readonly string[], ownWeight: boolean): QueriesTableJoin {
  const notes: string[] = [];
  const roles = resolveSideColumns(table, 'queries');
  const rowOf = keyRows(table, roles.key, queries, 'queries', notes);
  const keyName = table.names[roles.key]!;
  notes.push(...missingNote(rowOf, queries, 'query', 'queries', table.file));
  let weight: Pick<QueriesTableJoin, 'weight' | 'weightSource'> = {};
  if (roles.weight >= 0) {
    if (ownWeight) notes.push(`Query weights come from ${table.file}; the dump's own weight column is not used.`);
    weight = { weight: weightsFromTable(table, roles.weight, rowOf), weightSource: `column '${table.names[roles.weight]}' of ${table.file}` };
  }
  const attributes = roles.attributes.map((c) => {
    const name = table.names[c]!;
    if (ownSegments.includes(name)) notes.push(`Segment '${name}' comes from ${table.file} (by ${keyName}); the dump's own '${name}' column is not used.`);
    return { name, valueOfQuery: byId(rowOf, table.cells[c]!) };
  });
  return { ...(roles.text >= 0 ? { text: byId(rowOf, table.cells[roles.text]!) } : {}), ...weight, attributes, notes };
}

/**
 * Table row per interned dump id (-1 when the table has no row for it). Table rows naming ids the dump
 * does not have are counted into `notes`; a key given twice is an InputError at its second line.
 */
function keyRows(table: TextTable, key: number, pool: StringPool, kind: SideKind, notes: string[]): Int32Array {
  const rowOf = new Int32Array(pool.size).fill(-1);
  const seen = new Map<string, number>();
  const unknown: string[] = [];
  let unknownCount = 0;
  const keys = table.cells[key]!;
  for (let r = 0; r < table.rowCount; r++) {
    const id = keys[r]!;
    const earlier = seen.get(id);
    if (earlier !== undefined) {
      const where = table.lines[earlier]! > 0 ? `line ${table.lines[earlier]}` : `row ${earlier + 1}`;
      throw new InputError(`each ${table.names[key]} once (also on ${where})`, table.file, table.lines[r] || undefined, id);
    }
    seen.set(id, r);
    const at = pool.find(id);
    if (at < 0) {
      if (unknown.length < EXAMPLES) unknown.push(id);
      unknownCount++;
    } else rowOf[at] = r;
  }
  if (unknownCount > 0) {
    const what = kind === 'queries' ? 'queries' : 'items';
    notes.push(`${count(unknownCount, 'row', 'rows')} of ${table.file} name ${what} the dump does not have (e.g. ${quoted(unknown)}); they are not used.`);
  }
  return rowOf;
}

function missingNote(rowOf: Int32Array, pool: StringPool, one: string, many: string, file: string): string[] {
  const examples: string[] = [];
  let missing = 0;
  for (let id = 0; id < rowOf.length; id++) {
    if (rowOf[id]! >= 0) continue;
    if (examples.length < EXAMPLES) examples.push(pool.get(id));
    missing++;
  }
  if (missing === 0) return [];
  return [`${count(missing, one, many)} of the dump ${missing === 1 ? 'has' : 'have'} no row in ${file} (e.g. ${quoted(examples)}); ${many === 'queries' ? 'their text and segments are empty' : 'their titles are empty'}.`];
}

function byId(rowOf: Int32Array, column: readonly string[]): string[] {
  const out = new Array<string>(rowOf.length);
  for (let id = 0; id < rowOf.length; id++) out[id] = rowOf[id]! >= 0 ? column[rowOf[id]!]! : '';
  return out;
}

function segmentFromTable(dump: RankedDump, name: string, valueOfQuery: readonly string[]): SegmentColumn {
  const values = new MapStringPool();
  const idOfQuery = valueOfQuery.map((v) => values.intern(v));
  const ofRow = new Uint32Array(dump.rowCount);
  for (let r = 0; r < dump.rowCount; r++) ofRow[r] = idOfQuery[dump.query[r]!]!;
  return { name, values, ofRow };
}

/**
 * Judged queries added under `--missing-queries zero` have no row in the run, so no weight of the dump's
 * own; they keep the queries table's weight when it gives one and otherwise weigh 1, so each still counts
 * as the 0 the policy promises in the weighted means (instead of dropping out as an unknown weight).
 */
export function weighAbsentQueries(queries: StringPool, first: number, weights: Float64Array): string[] {
  const examples: string[] = [];
  let defaulted = 0;
  for (let q = first; q < weights.length; q++) {
    if (weights[q] === weights[q]) continue;
    weights[q] = 1;
    if (examples.length < EXAMPLES) examples.push(queries.get(q));
    defaulted++;
  }
  if (defaulted === 0) return [];
  return [`${count(defaulted, 'judged query', 'judged queries')} missing from the run (scored 0) ${defaulted === 1 ? 'has' : 'have'} no weight of ${defaulted === 1 ? 'its' : 'their'} own (e.g. ${quoted(examples)}); ${defaulted === 1 ? 'it weighs' : 'they weigh'} 1.`];
}

function weightsFromTable(table: TextTable, column: number, rowOf: Int32Array): Float64Array {
  const weights = new Float64Array(rowOf.length).fill(NaN);
  const cells = table.cells[column]!;
  for (let r = 0; r < table.rowCount; r++) checkWeight(cells[r]!, table.file, table.lines[r]!, table.names[column]!);
  for (let q = 0; q < rowOf.length; q++) if (rowOf[q]! >= 0) weights[q] = checkWeight(cells[rowOf[q]!]!, table.file, 0, '');
  return weights;
}

/** The weight of each query is its first row's value; rows of one query that disagree are an error. */
function weightsFromDump(dump: RankedDump, column: SegmentColumn): Float64Array {
  const queryCount = dump.queries.size;
  const weights = new Float64Array(queryCount).fill(NaN);
  const valueOf = new Float64Array(column.values.size);
  for (let v = 0; v < valueOf.length; v++) valueOf[v] = Number(column.values.get(v).trim() || NaN);
  const firstRow = new Int32Array(queryCount).fill(-1);
  for (let r = 0; r < dump.rowCount; r++) {
    const q = dump.query[r]!;
    const w = checkWeight(column.values.get(column.ofRow[r]!), dump.path, dump.line[r]!, column.name, valueOf[column.ofRow[r]!]!);
    if (firstRow[q] === -1) {
      firstRow[q] = r;
      weights[q] = w;
    } else if (!Object.is(weights[q], w)) {
      throw new InputError(`one ${column.name} per query (query '${dump.queries.get(q)}' has ${weights[q]} on line ${dump.line[firstRow[q]!]})`,
        dump.path, dump.line[r] || undefined, String(w));
    }
  }
  return weights;
}

/** A weight is a finite number >= 0; an empty cell is an unknown weight (NaN: the query is left out of weighted means). */
function checkWeight(text: string, file: string, line: number, name: string, parsed: number = Number(text.trim() || NaN)): number {
  if (text.trim() === '') return NaN;
  if (!(Number.isFinite(parsed) && parsed >= 0)) {
    throw new InputError(`a weight of 0 or more in column '${name}'`, file, line || undefined, text);
  }
  return parsed;
}

function count(n: number, one: string, many: string): string {
  return `${formatCountInText(n)} ${n === 1 ? one : many}`;
}

function quoted(ids: readonly string[]): string {
  return ids.map((id) => `'${id}'`).join(', ');
}
