/**
 * Parquet: one file, or a folder of part files (`*.parquet`, read in name order). Roles are found
 * from column names as for CSV. Read one piece (a row group) at a time so only that piece's decoded
 * values are held at once; a large read's pieces are shared among threads
 * (threads/parquetRanges.ts). Parquet rows have no line or byte offset: `line` is 0 and `offset` is -1.
 */
import { promises as fsp } from 'node:fs';
import { basename, join } from 'node:path';
import { asyncBufferFromFile, parquetMetadataAsync, parquetRead, parquetSchema } from 'hyparquet';
import { compressors } from 'hyparquet-compressors';
import { engineActivity, engineSettings } from '../config';
import { InputError } from '../errors';
import type { FileStamp, RankedDump } from '../model/dump';
import { RowColumns, type SharedColumns } from './columns';
import { openFlatColumns } from './parquetPages';
import { RAW_TEXT, storeGroup } from './parquetStore';
import type { ReadOptions } from './readOptions';
import { everyColumn, resolveRoles, type ResolvedRoles } from './roles';
import { fileChangedError, statStamp, throwIfCancelled } from './source';

type Values = ArrayLike<unknown>;

export async function readParquet(path: string, directory: boolean, options: ReadOptions): Promise<RankedDump> {
  const parts = directory ? await partFiles(path) : [path];
  const before = await stampOf(parts);
  // Every footer first: the columns are those of all the parts together (partsColumns).
  const opened: OpenPart[] = [];
  for (const part of parts) opened.push(await openPart(part));
  const { columns, note } = partsColumns(opened, options);
  const rows = columnsOf(columns, opened.reduce((n, o) => n + Number(o.metadata.num_rows), 0));
  if (note !== undefined) rows.notes.messages.push(note);
  for (let p = 0; p < opened.length; p++) {
    throwIfCancelled(options.signal);
    for (const piece of rowGroups(opened[p]!)) {
      throwIfCancelled(options.signal);
      await readPiece(opened[p]!, piece, columns, rows);
      options.onProgress?.((p + piece.end / Math.max(1, Number(opened[p]!.metadata.num_rows))) / parts.length);
    }
  }
  const after = await stampOf(parts);
  if (after.size !== before.size || after.mtimeMs !== before.mtimeMs) throw fileChangedError(path);
  if (rows.count === 0) throw new InputError('at least one row in the Parquet data', path);
  rows.countGaps();
  options.onProgress?.(1);
  return rows.finish(path, 'parquet', before);
}

/** A part file, open, with its footer. */
export interface OpenPart {
  readonly part: string;
  readonly file: Awaited<ReturnType<typeof asyncBufferFromFile>>;
  readonly metadata: Awaited<ReturnType<typeof parquetMetadataAsync>>;
  /** Its leaf columns' names. */
  readonly names: readonly string[];
}

/** Rows [start, end) of a part file, all in one of its row groups. */
export interface ParquetPiece {
  readonly part: string;
  readonly start: number;
  readonly end: number;
}

/** The columns every part is read with: those of all the parts together (partsColumns), and their roles. */
export interface ParquetColumns {
  readonly names: readonly string[];
  readonly roles: ResolvedRoles;
}

export async function openPart(part: string): Promise<OpenPart> {
  try {
    const file = await asyncBufferFromFile(part);
    const metadata = await parquetMetadataAsync(file);
    const names = parquetSchema(metadata).children.filter((c) => c.children.length === 0).map((c) => c.element.name);
    return { part, file, metadata, names };
  } catch (err) {
    throw new InputError('a readable Parquet file', part, undefined, (err as Error).message);
  }
}

/** Physical types that hold no text: a value of theirs is never refused, so there is nothing to check in it. */
const TEXTLESS_TYPES = new Set(['BOOLEAN', 'INT32', 'INT64', 'INT96', 'FLOAT', 'DOUBLE']);

/**
 * The columns of a file, or of a folder's parts together: the first part's, then each column a later part
 * adds, in the order met (parts written over time gain columns, as a dataset's schema is unified by name).
 * Every part must hold the query's and the item's columns; a part lacking another column reads it as
 * missing (a grade or score missing, a segment empty), and `note` names those columns and parts.
 *
 * Every column is read, for its text is checked as it is read, except, when no view asks for segments
 * (`others: 'skipped'`), the columns of no role that hold no text in any part (numbers, dates,
 * timestamps): nothing in them could refuse the file. A timestamp of its own on each of 2M rows cost
 * 3.1 s of reading against 1.1 s without it, most of it interning 2M distinct values.
 */
export function partsColumns(parts: readonly OpenPart[], options: Pick<ReadOptions, 'columns'>): { columns: ParquetColumns; note?: string } {
  const first = parts[0]!;
  const names = [...new Set(parts.flatMap((o) => o.names))];
  const roles = resolveRoles(names, everyColumn(options.columns), { file: first.part, line: 0, text: names.join(', ') });
  for (const o of parts) {
    const lacking = [roles.query, roles.item].map((i) => names[i]!).filter((n) => !o.names.includes(n));
    if (lacking.length > 0) throw new InputError(`the query and item columns in every part file (${lacking.join(', ')})`, o.part, undefined, o.names.join(', '));
  }
  let read = roles;
  if (options.columns?.others === 'skipped') {
    const texted = new Set(parts.flatMap((o) => parquetSchema(o.metadata).children)
      .filter((c) => c.children.length === 0 && !TEXTLESS_TYPES.has(c.element.type ?? '')).map((c) => c.element.name));
    read = { ...roles, segments: roles.segments.filter((i) => texted.has(names[i]!)) };
  }
  // The note names only the columns the read uses.
  const used = [read.query, read.item, read.label, read.score, read.rank, ...read.segments].filter((i) => i >= 0).map((i) => names[i]!);
  const note = missingColumnsNote(parts, names.filter((n) => used.includes(n)));
  return { columns: { names, roles: read }, ...(note ? { note } : {}) };
}

/** Parts named in the note, at most. */
const PARTS_NAMED = 3;

/** The note on columns some parts lack: each column, how many parts lack it, and the first of them. */
function missingColumnsNote(parts: readonly OpenPart[], names: readonly string[]): string | undefined {
  const missing = names.map((name) => ({ name, lacking: parts.filter((o) => !o.names.includes(name)) })).filter((m) => m.lacking.length > 0);
  if (missing.length === 0) return undefined;
  const each = missing.map(({ name, lacking }) => {
    const shown = lacking.slice(0, PARTS_NAMED).map((o) => basename(o.part)).join(', ');
    return `'${name}' from ${lacking.length} of ${parts.length} (${shown}${lacking.length > PARTS_NAMED ? ', …' : ''})`;
  });
  return `part files lack columns others hold: ${each.join('; ')}; read as missing in those files`;
}

/** Empty row columns for the roles, with their notes; item bytes kept per row (model/rowTexts.ts), 16 bytes each at a guess. */
export function columnsOf({ names, roles }: ParquetColumns, capacity: number, shared?: SharedColumns): RowColumns {
  const rows = new RowColumns(roles.segments.map((i) => names[i]!), capacity, shared, 16);
  if (roles.rank >= 0) {
    rows.notes.messages.push(roles.score < 0 ? `no score column: ranked by '${names[roles.rank]}' (score = -rank)`
      : `ranked by score; the rank column '${names[roles.rank]}' is ignored`);
  }
  return rows;
}

/** A part's row groups, each a piece. */
export function rowGroups(opened: OpenPart): ParquetPiece[] {
  let start = 0;
  return opened.metadata.row_groups.map((group) => {
    const piece = { part: opened.part, start, end: start + Number(group.num_rows) };
    start = piece.end;
    return piece;
  });
}

/** What a Parquet range task reads (threads/parquetRanges.ts): its pieces, in order, with the columns of the first part. */
export interface ParquetTask extends ParquetColumns {
  readonly pieces: readonly ParquetPiece[];
}

/** A task's rows read into `rows` (a parse thread's share), reporting the rows done. */
export async function readParquetTask(task: ParquetTask, rows: RowColumns, onRows: (done: number) => void): Promise<void> {
  const opened = new Map<string, OpenPart>();
  let done = 0;
  for (const piece of task.pieces) {
    let part = opened.get(piece.part);
    if (part === undefined) opened.set(piece.part, (part = await openPart(piece.part)));
    await readPiece(part, piece, task, rows);
    done += piece.end - piece.start;
    onRows(done);
  }
}

/** Reads one piece's rows into `rows`: only that piece's decoded values are held at once. */
export async function readPiece(opened: OpenPart, piece: ParquetPiece, { names, roles }: ParquetColumns, rows: RowColumns): Promise<void> {
  // Only the columns this part holds: one it lacks reads as missing (storeGroup).
  const wanted = [...new Set([roles.query, roles.item, roles.label, roles.score, roles.rank, ...roles.segments].filter((i) => i >= 0).map((i) => names[i]!))]
    .filter((name) => opened.names.includes(name));
  // Page by page when every column is flat, a slice of rows at a time. Rows a slice fails on (and after) are
  // read again the decoder's way, which reports the error.
  const { parquetPages, parquetTypedPages, parquetSliceRows } = engineSettings().tuning;
  const slice = Math.max(1, parquetSliceRows);
  const kinds = parquetTypedPages ? typedKinds(names, roles) : undefined;
  const flat = parquetPages
    ? await openFlatColumns(opened.file, opened.metadata, wanted, piece, { compressors, parsers: RAW_TEXT, sliceRows: slice, kinds }).catch(() => undefined)
    : undefined;
  let from = piece.start;
  if (flat !== undefined) {
    for (; from < piece.end; from += slice) {
      const count = Math.min(slice, piece.end - from);
      let values;
      try {
        values = flat.next(count);
      } catch {
        break;
      }
      storeGroup(rows, roles, names, values, count, piece.part, from);
    }
    if (from >= piece.end) {
      engineActivity().parquetPagePieces++;
      return;
    }
  }
  await readByDecoder(opened, { part: piece.part, start: from, end: piece.end }, { names, roles }, wanted, rows);
}

/**
 * Columns whose values may be decoded typed: ids and segments as text, grades and scores as numbers. A
 * column playing roles of both kinds is left to the decoder.
 */
function typedKinds(names: readonly string[], roles: ResolvedRoles): Map<string, 'text' | 'number'> {
  const kinds = new Map<string, 'text' | 'number' | 'both'>();
  const add = (index: number, kind: 'text' | 'number') => {
    if (index < 0) return;
    const name = names[index]!;
    const had = kinds.get(name);
    kinds.set(name, had === undefined || had === kind ? kind : 'both');
  };
  [roles.query, roles.item, ...roles.segments].forEach((i) => add(i, 'text'));
  [roles.label, roles.score, roles.rank].forEach((i) => add(i, 'number'));
  return new Map([...kinds].filter((entry): entry is [string, 'text' | 'number'] => entry[1] !== 'both'));
}

/** Rows of a piece read by the decoder's row reader (its arrays of values, then the rows). */
async function readByDecoder(opened: OpenPart, piece: ParquetPiece, { names, roles }: ParquetColumns, wanted: readonly string[],
  rows: RowColumns): Promise<void> {
  const values = new Map<string, unknown[]>();
  try {
    await parquetRead({
      file: opened.file, metadata: opened.metadata, columns: [...wanted], rowStart: piece.start, rowEnd: piece.end, compressors, parsers: RAW_TEXT,
      onChunk: (chunk) => collect(values, chunk.columnName, chunk.columnData, chunk.rowStart, piece.start, piece.end),
    });
  } catch (err) {
    throw new InputError('a readable Parquet file', piece.part, undefined, (err as Error).message);
  }
  storeGroup(rows, roles, names, values, piece.end - piece.start, piece.part, piece.start);
}

export async function partFiles(folder: string): Promise<string[]> {
  const names = (await fsp.readdir(folder)).filter((n) => n.toLowerCase().endsWith('.parquet')).sort();
  if (names.length === 0) throw new InputError('a folder holding *.parquet part files', folder);
  return names.map((n) => join(folder, n));
}

/** Total size and latest modification time over all parts, so a change to any part is seen. */
export async function stampOf(parts: readonly string[]): Promise<FileStamp> {
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
