/**
 * Parquet rows stored into the row columns, a slice of rows at a time, one column after another: the
 * decoder's values (any Parquet type) or typed slices (parquetTypedPages.ts), with the same result either way.
 * A bad value fails the read at the first bad row, naming the first bad column of that row in the order
 * query, item, grade, score, whichever column found it.
 */
import { isUtf8 } from 'node:buffer';
import type { ParquetParsers } from 'hyparquet';
import { InputError } from '../errors';
import type { BytePool } from '../model/bytePool';
import type { RowColumns } from './columns';
import { describeNonNumberText, parseNumberText } from './numbers';
import type { SliceColumn } from './parquetPages';
import { TIME_PARSERS } from './parquetTimes';
import { NULL_ROW, type NumberSlice, type TextSlice } from './parquetTypedPages';
import type { ResolvedRoles } from './roles';
import { escapeBytes } from './textCheck';

/**
 * Text values (and JSON, as its text) arrive as their bytes: decoding each to a string and encoding it back
 * for the pools and the row texts took about 2 s of garbage and copying on 10M rows. Bytes that are not
 * UTF-8 are refused for ids and escaped for segments (a decoder would turn them into U+FFFD and merge ids).
 * Dates and timestamps arrive as ISO 8601 text (parquetTimes.ts), not as Dates printed in the local zone.
 */
export const RAW_TEXT = { ...TIME_PARSERS, stringFromBytes: (bytes: Uint8Array | undefined) => bytes,
  jsonFromBytes: (bytes: Uint8Array | undefined) => bytes } as unknown as Partial<ParquetParsers>;
const textEncoder = new TextEncoder();
const textDecoder = new TextDecoder('utf-8');
const EMPTY = new Uint8Array(0);

/** Rows [firstRow, firstRow + count) of `file`, appended to `rows`. */
export function storeGroup(rows: RowColumns, roles: ResolvedRoles, names: readonly string[], values: Map<string, SliceColumn>, count: number,
  file: string, firstRow: number): void {
  const get = (index: number): SliceColumn => (index >= 0 ? values.get(names[index]!) : undefined) ?? [];
  const base = rows.count;
  rows.reserve(base + count);
  const where: Where = { file, firstRow, base };
  const scoreIndex = roles.score >= 0 ? roles.score : roles.rank;
  // Each pass returns the first row it refused (count when none); a later pass need not go past it.
  let bad = storeIds(get(roles.query), rows.queries, rows.query, count, where, names[roles.query]!, false);
  bad = storeItems(get(roles.item), rows, bad, where, names[roles.item]!);
  if (roles.label >= 0) bad = storeNumbers(get(roles.label), rows.label, bad, where, names[roles.label]!, false, false);
  else rows.label.fill(NaN, base, base + bad);
  if (scoreIndex >= 0) bad = storeNumbers(get(scoreIndex), rows.score, bad, where, names[scoreIndex]!, true, roles.score < 0);
  else rows.score.fill(NaN, base, base + bad);
  if (bad < count) throwAtRow(bad, [get(roles.query), get(roles.item), get(roles.label), get(scoreIndex)], roles, names, where);
  rows.line.fill(0, base, base + count);
  if (rows.keepsOffsets) rows.offset.fill(-1, base, base + count);
  roles.segments.forEach((index, k) => storeIds(get(index), rows.segmentPools[k]!, rows.segmentIds[k]!, count, where, names[index]!, true));
  rows.count = base + count;
}

interface Where {
  readonly file: string;
  /** The slice's first row in the file (errors count rows from 1). */
  readonly firstRow: number;
  /** Its first row in the row columns. */
  readonly base: number;
}

/** Ids of rows [0, count) into out[base..]: as segments (a missing value empty, bytes not UTF-8 escaped) or as ids (refused). */
function storeIds(column: SliceColumn, pool: BytePool, out: Uint32Array, count: number, where: Where, name: string, segment: boolean): number {
  const base = where.base;
  if (!Array.isArray(column)) return storeTextIds(column as TextSlice, pool, out, count, base, segment);
  const last = new LastText(pool);
  for (let i = 0; i < count; i++) {
    if (segment) {
      out[base + i] = last.id(segmentBytes(column[i]));
      continue;
    }
    const bytes = idBytesOrUndefined(column[i], name, where.file, where.firstRow + i);
    if (bytes === undefined) return i;
    out[base + i] = last.id(bytes);
  }
  return count;
}

/** A text column's ids for dictionary entries already met: one look-up per row rather than a hash. */
const entryIds = new WeakMap<TextSlice, { dictionary: number; ids: Int32Array }>();

function storeTextIds(slice: TextSlice, pool: BytePool, out: Uint32Array, count: number, base: number, segment: boolean): number {
  let cache = entryIds.get(slice);
  if (cache === undefined || cache.dictionary !== slice.dictionary) entryIds.set(slice, (cache = { dictionary: slice.dictionary, ids: new Int32Array(0) }));
  const { source, start, end, entry, sources, utf8 } = slice;
  let last = -1;
  for (let i = 0; i < count; i++) {
    const s = source[i]!;
    if (s < 0) {
      if (!segment) return i;
      out[base + i] = last = pool.intern(EMPTY, 0, 0);
      continue;
    }
    const e = entry[i]!;
    if (e >= 0 && e < cache.ids.length && cache.ids[e]! >= 0) {
      out[base + i] = last = cache.ids[e]!;
      continue;
    }
    let bytes = sources[s]!;
    let from = start[i]!;
    let to = end[i]!;
    if (!utf8 && !isUtf8(bytes.subarray(from, to))) {
      if (!segment) return i;
      bytes = textEncoder.encode(escapeBytes(bytes.subarray(from, to)));
      from = 0;
      to = bytes.length;
    }
    const id = last >= 0 && pool.matches(last, bytes, from, to) ? last : pool.intern(bytes, from, to);
    if (e >= 0) {
      if (e >= cache.ids.length) cache.ids = grownIds(cache.ids, e + 1);
      cache.ids[e] = id;
    }
    out[base + i] = last = id;
  }
  return count;
}

function grownIds(ids: Int32Array, size: number): Int32Array {
  const grown = new Int32Array(Math.max(size, 2 * ids.length, 256)).fill(-1);
  grown.set(ids);
  return grown;
}

/** Item bytes of rows [0, count), in row order (the row texts are appended). */
function storeItems(column: SliceColumn, rows: RowColumns, count: number, where: Where, name: string): number {
  const base = where.base;
  if (Array.isArray(column)) {
    for (let i = 0; i < count; i++) {
      const bytes = idBytesOrUndefined(column[i], name, where.file, where.firstRow + i);
      if (bytes === undefined) return i;
      rows.setItemBytes(base + i, bytes, 0, bytes.length);
    }
    return count;
  }
  const { source, start, end, sources, utf8 } = column as TextSlice;
  for (let i = 0; i < count; i++) {
    const s = source[i]!;
    if (s < 0) return i;
    const bytes = sources[s]!;
    if (!utf8 && !isUtf8(bytes.subarray(start[i]!, end[i]!))) return i;
    rows.setItemBytes(base + i, bytes, start[i]!, end[i]!);
  }
  return count;
}

/** Grades or scores of rows [0, count): missing NaN; an infinite score is missing, an infinite grade refused. */
function storeNumbers(column: SliceColumn, out: Float64Array, count: number, where: Where, name: string, isScore: boolean, negate: boolean): number {
  const base = where.base;
  if (Array.isArray(column)) {
    for (let i = 0; i < count; i++) {
      let v: number;
      try {
        v = numberOf(column[i], name, isScore, where.file, where.firstRow + i);
      } catch {
        return i;
      }
      out[base + i] = negate ? -v : v;
    }
    return count;
  }
  const values = (column as NumberSlice).value;
  for (let i = 0; i < count; i++) {
    let v = values[i]!;
    // A NaN read from the file becomes the one NaN the decoder's path returns (its payload is not kept).
    if (v !== v) v = NaN;
    else if (v - v !== 0) {
      if (!isScore) return i;
      v = NaN;
    }
    // Negated, not multiplied by -1: the same bits as the decoder's path, NaN's sign included.
    out[base + i] = negate ? -v : v;
  }
  return count;
}

/** Throws the error of row `i` of the slice: the first of its query, item, grade and score that is refused. */
function throwAtRow(i: number, columns: readonly SliceColumn[], roles: ResolvedRoles, names: readonly string[], where: Where): never {
  const [query, item, label, score] = columns.map((c) => valueAt(c, i));
  const row = where.firstRow + i;
  idBytes(query, names[roles.query]!, where.file, row);
  idBytes(item, names[roles.item]!, where.file, row);
  if (roles.label >= 0) numberOf(label, names[roles.label]!, false, where.file, row);
  const scoreIndex = roles.score >= 0 ? roles.score : roles.rank;
  if (scoreIndex >= 0) numberOf(score, names[scoreIndex]!, true, where.file, row);
  throw new Error(`Parquet row ${row + 1} was refused without a reason`);
}

/** Row i's value as the decoder gives it (for messages). */
function valueAt(column: SliceColumn, i: number): unknown {
  if (Array.isArray(column)) return column[i];
  if (column.kind === 'number') return column.value[i];
  const s = column.source[i]!;
  if (s < 0) return s === NULL_ROW ? null : undefined;
  return column.sources[s]!.subarray(column.start[i]!, column.end[i]!);
}

/**
 * Interns text bytes into a pool, remembering the last value: a dictionary-encoded column hands the same
 * array for every row of a value, and a column sorted by it the same value row after row.
 */
class LastText {
  private last: Uint8Array | undefined;
  private lastId = -1;

  constructor(private readonly pool: BytePool) {}

  id(bytes: Uint8Array): number {
    if (bytes === this.last) return this.lastId;
    const id = this.lastId >= 0 && this.pool.matches(this.lastId, bytes, 0, bytes.length) ? this.lastId : this.pool.intern(bytes, 0, bytes.length);
    this.last = bytes;
    this.lastId = id;
    return id;
  }
}

function idBytesOrUndefined(v: unknown, column: string, file: string, row: number): Uint8Array | undefined {
  if (v instanceof Uint8Array && isUtf8(v)) return v;
  try {
    return idBytes(v, column, file, row);
  } catch {
    return undefined;
  }
}

/** An id's UTF-8 bytes: text as it is, a number as it prints. */
function idBytes(v: unknown, column: string, file: string, row: number): Uint8Array {
  if (v instanceof Uint8Array) {
    if (isUtf8(v)) return v;
    throw new InputError(`UTF-8 text in column '${column}' in row ${row + 1} (ids are compared as text, so write them as UTF-8)`,
      file, undefined, escapeBytes(v));
  }
  if (typeof v === 'string') return textEncoder.encode(v);
  if (typeof v === 'number' || typeof v === 'bigint') return textEncoder.encode(String(v));
  throw new InputError(`a string or number in column '${column}' in row ${row + 1}`, file, undefined, String(v));
}

/**
 * A segment value's UTF-8 bytes: empty when missing, text as it is (escaped when not UTF-8), an object (a
 * geometry's GeoJSON) as JSON, any other value as it prints.
 */
function segmentBytes(v: unknown): Uint8Array {
  if (v === null || v === undefined) return EMPTY;
  if (v instanceof Uint8Array) return isUtf8(v) ? v : textEncoder.encode(escapeBytes(v));
  if (typeof v === 'object') return textEncoder.encode(JSON.stringify(v, (_, x: unknown) => (typeof x === 'bigint' ? x.toString() : x)));
  return textEncoder.encode(String(v));
}

function numberOf(value: unknown, column: string, isScore: boolean, file: string, row: number): number {
  if (value === null || value === undefined) return NaN;
  // Numbers written as text: read as the text parsers read them.
  const v = value instanceof Uint8Array ? (isUtf8(value) ? textDecoder.decode(value) : escapeBytes(value)) : value;
  let kind: 'missing' | 'infinite' | 'invalid' = 'invalid';
  if (typeof v === 'number' || typeof v === 'bigint') {
    const n = Number(v);
    if (Number.isFinite(n)) return n;
    kind = Number.isNaN(n) ? 'missing' : 'infinite';
  } else if (typeof v === 'string') {
    const n = parseNumberText(v);
    if (Number.isFinite(n)) return n;
    kind = Number.isNaN(n) ? describeNonNumberText(v) : 'infinite';
  }
  if (kind === 'missing' || (kind === 'infinite' && isScore)) return NaN;
  throw new InputError(`a ${isScore ? '' : 'finite '}number in column '${column}' in row ${row + 1}`, file, undefined, String(v));
}
