/**
 * Parquet: one file, or a folder of part files (`*.parquet`, read in name order). Roles are found
 * from column names as for CSV. Read one row group at a time so only that group's decoded values
 * are held at once. Parquet rows have no line or byte offset: `line` is 0 and `offset` is -1.
 */
import { promises as fsp } from 'node:fs';
import { join } from 'node:path';
import { isUtf8 } from 'node:buffer';
import { asyncBufferFromFile, parquetMetadataAsync, parquetRead, parquetSchema, type ParquetParsers } from 'hyparquet';
import { compressors } from 'hyparquet-compressors';
import { InputError } from '../errors';
import type { FileStamp, RankedDump } from '../model/dump';
import type { BytePool } from '../model/bytePool';
import { RowColumns } from './columns';
import type { ReadOptions } from './readOptions';
import { describeNonNumberText, parseNumberText } from './numbers';
import { everyColumn, resolveRoles, type ResolvedRoles } from './roles';
import { fileChangedError, statStamp, throwIfCancelled } from './source';
import { escapeBytes } from './textCheck';

type Values = ArrayLike<unknown>;

export async function readParquet(path: string, directory: boolean, options: ReadOptions): Promise<RankedDump> {
  const parts = directory ? await partFiles(path) : [path];
  const before = await stampOf(parts);
  let rows: RowColumns | undefined;
  let roles: ResolvedRoles | undefined;
  let names: string[] = [];
  for (let p = 0; p < parts.length; p++) {
    const part = parts[p]!;
    throwIfCancelled(options.signal);
    let file;
    let metadata;
    try {
      file = await asyncBufferFromFile(part);
      metadata = await parquetMetadataAsync(file);
    } catch (err) {
      throw new InputError('a readable Parquet file', part, undefined, (err as Error).message);
    }
    const columns = parquetSchema(metadata).children.filter((c) => c.children.length === 0).map((c) => c.element.name);
    if (rows === undefined) {
      names = columns;
      roles = resolveRoles(columns, everyColumn(options.columns), { file: part, line: 0, text: columns.join(', ') });
      // Item bytes kept per row, not interned dump-wide (model/rowTexts.ts), 16 bytes each at a guess.
      rows = new RowColumns(roles.segments.map((i) => columns[i]!), Number(metadata.num_rows) * (directory ? parts.length : 1), undefined, 16);
      if (roles.rank >= 0) {
        rows.notes.messages.push(roles.score < 0 ? `no score column: ranked by '${columns[roles.rank]}' (score = -rank)`
          : `ranked by score; the rank column '${columns[roles.rank]}' is ignored`);
      }
    } else if (names.some((n) => !columns.includes(n))) {
      throw new InputError(`the same columns in every part file (${names.join(', ')})`, part, undefined, columns.join(', '));
    }
    const wanted = [...new Set([roles!.query, roles!.item, roles!.label, roles!.score, roles!.rank, ...roles!.segments].filter((i) => i >= 0).map((i) => names[i]!))];
    let groupStart = 0;
    for (const group of metadata.row_groups) {
      throwIfCancelled(options.signal);
      const groupEnd = groupStart + Number(group.num_rows);
      const values = new Map<string, unknown[]>();
      try {
        await parquetRead({
          file, metadata, columns: wanted, rowStart: groupStart, rowEnd: groupEnd, compressors, parsers: RAW_TEXT,
          onChunk: (chunk) => collect(values, chunk.columnName, chunk.columnData, chunk.rowStart, groupStart, groupEnd),
        });
      } catch (err) {
        throw new InputError('a readable Parquet file', part, undefined, (err as Error).message);
      }
      storeGroup(rows, roles!, names, values, groupEnd - groupStart, part, groupStart);
      groupStart = groupEnd;
      options.onProgress?.((p + groupStart / Math.max(1, Number(metadata.num_rows))) / parts.length);
    }
  }
  const after = await stampOf(parts);
  if (after.size !== before.size || after.mtimeMs !== before.mtimeMs) throw fileChangedError(path);
  if (rows === undefined || rows.count === 0) throw new InputError('at least one row in the Parquet data', path);
  rows.countGaps();
  options.onProgress?.(1);
  return rows.finish(path, 'parquet', before);
}

async function partFiles(folder: string): Promise<string[]> {
  const names = (await fsp.readdir(folder)).filter((n) => n.toLowerCase().endsWith('.parquet')).sort();
  if (names.length === 0) throw new InputError('a folder holding *.parquet part files', folder);
  return names.map((n) => join(folder, n));
}

/** Total size and latest modification time over all parts, so a change to any part is seen. */
async function stampOf(parts: readonly string[]): Promise<FileStamp> {
  let size = 0;
  let mtimeMs = 0;
  for (const part of parts) {
    const s = await statStamp(part);
    size += s.size;
    mtimeMs = Math.max(mtimeMs, s.mtimeMs);
  }
  return { size, mtimeMs };
}

function collect(values: Map<string, unknown[]>, column: string, data: Values, rowStart: number, groupStart: number, groupEnd: number): void {
  let target = values.get(column);
  if (target === undefined) {
    target = new Array<unknown>(groupEnd - groupStart);
    values.set(column, target);
  }
  for (let i = 0; i < data.length; i++) {
    const row = rowStart + i;
    if (row >= groupStart && row < groupEnd) target[row - groupStart] = data[i];
  }
}

function storeGroup(rows: RowColumns, roles: ResolvedRoles, names: string[], values: Map<string, unknown[]>, count: number, file: string,
  firstRow: number): void {
  const get = (index: number): unknown[] => values.get(names[index]!) ?? [];
  const queries = get(roles.query);
  const items = get(roles.item);
  const labels = get(roles.label);
  const scores = roles.score >= 0 ? get(roles.score) : get(roles.rank);
  const negate = roles.score < 0;
  const segments = roles.segments.map(get);
  const query = new LastText(rows.queries);
  const segmentIds = rows.segmentPools.map((pool) => new LastText(pool));
  for (let i = 0; i < count; i++) {
    const row = rows.next();
    const at = firstRow + i;
    rows.query[row] = query.id(idBytes(queries[i], names[roles.query]!, file, at));
    const item = idBytes(items[i], names[roles.item]!, file, at);
    rows.setItemBytes(row, item, 0, item.length);
    rows.label[row] = roles.label >= 0 ? numberOf(labels[i], names[roles.label]!, false, file, at) : NaN;
    const score = roles.score >= 0 || roles.rank >= 0 ? numberOf(scores[i], names[roles.score >= 0 ? roles.score : roles.rank]!, true, file, at) : NaN;
    rows.score[row] = negate ? -score : score;
    rows.line[row] = 0;
    rows.offset[row] = -1;
    for (let k = 0; k < segments.length; k++) rows.segmentIds[k]![row] = segmentIds[k]!.id(segmentBytes(segments[k]![i]));
  }
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

/**
 * Text values arrive as their bytes: decoding each to a string and encoding it back for the pools and the row
 * texts took about 2 s of garbage and copying on 10M rows. Bytes that are not UTF-8 are refused for ids and
 * escaped for segments (a decoder would turn them into U+FFFD and merge ids).
 */
const RAW_TEXT = { stringFromBytes: (bytes: Uint8Array | undefined) => bytes } as unknown as Partial<ParquetParsers>;
const textEncoder = new TextEncoder();
const textDecoder = new TextDecoder('utf-8');
const EMPTY = new Uint8Array(0);

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

/** A segment value's UTF-8 bytes: empty when missing, bytes that are not UTF-8 escaped, other values as they print. */
function segmentBytes(v: unknown): Uint8Array {
  if (v === null || v === undefined) return EMPTY;
  if (v instanceof Uint8Array) return isUtf8(v) ? v : textEncoder.encode(escapeBytes(v));
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
