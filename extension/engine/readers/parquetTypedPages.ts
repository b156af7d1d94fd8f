/**
 * Flat Parquet columns of the kinds a dump's roles need, decoded from their pages into typed arrays, with
 * no object per value: text (ids and segments) as byte ranges of the decompressed page or dictionary (integer
 * ids as ranges of their printed digits), and numbers (grades and scores) as doubles.
 *
 * The decoder's page functions (parquetPages.ts) build one view per text value, one array entry per level
 * and per dictionary index: on 10M rows a third of each thread was garbage collection, and a page of
 * millions of values held as many objects (a file of one 10M-row group peaked at 3.5 GB).
 *
 * Only what a dump's writers use is decoded here: data pages version 1 and 2, PLAIN and dictionary encodings,
 * definition levels in the RLE/bit-packed hybrid (the Parquet format's Encodings.md), any codec the decoder
 * decompresses. `typedKind` says which columns qualify; anything else met inside a page (another encoding,
 * bit-packed levels, bytes running out) throws, and the caller reads the rest of the row group the
 * decoder's way, which gives the same values or reports the error.
 */
import { parquetHeader } from 'hyparquet/src/column.js';
import { decompressPage } from 'hyparquet/src/datapage.js';
import type { ColumnMetaData, Compressors, SchemaElement } from 'hyparquet';
import { isUtf8 } from 'node:buffer';
import { engineActivity } from '../config';
import { readHybrid, readUint32 } from './parquetHybrid';
import { integerTexts } from './parquetIntegerText';
import { timeTexts, timeUnitOf, type TimeUnit } from './parquetTimeText';

/** A row of a typed slice with no value (the level says null) and one past the chunk's last page. */
export const NULL_ROW = -1;
export const PAST_END = -2;

/**
 * The next rows of a text column: row k is sources[source[k]][start[k], end[k]), or no value (source[k] <
 * 0: NULL_ROW or PAST_END). `entry[k]` is the row's dictionary entry (−1 when the value is not from one), of
 * dictionary number `dictionary` (a new number for each dictionary page met). `utf8` is true when every
 * value of the slice is UTF-8.
 */
export interface TextSlice {
  readonly kind: 'text';
  readonly sources: Uint8Array[];
  readonly source: Int32Array;
  readonly start: Int32Array;
  readonly end: Int32Array;
  readonly entry: Int32Array;
  dictionary: number;
  utf8: boolean;
}

/** The next rows of a number column: the value, or NaN for none (null, or past the chunk's last page). */
export interface NumberSlice {
  readonly kind: 'number';
  readonly value: Float64Array;
}

export type TypedSlice = TextSlice | NumberSlice;

const TEXT_TYPES = new Set([undefined, 'UTF8', 'ENUM']);
const INTEGER_TYPES = new Set([undefined, 'INT_8', 'INT_16', 'INT_32', 'INT_64']);
const ENCODINGS = new Set(['PLAIN', 'PLAIN_DICTIONARY', 'RLE_DICTIONARY', 'RLE', 'BIT_PACKED']);

/**
 * 'text' or 'number' when the column's values are decoded here exactly as the decoder converts them: text
 * is BYTE_ARRAY unannotated or UTF-8 or enum (the decoder hands those over as bytes); numbers are signed
 * integers, floats and doubles without a logical type that would change them (decimals, dates, unsigned).
 */
export function typedKind(element: SchemaElement, meta: ColumnMetaData, wanted: 'text' | 'number'): 'text' | 'number' | undefined {
  if (!meta.encodings.every((e) => ENCODINGS.has(e))) return undefined;
  const logical = element.logical_type;
  const signedInteger = (meta.type === 'INT32' || meta.type === 'INT64') && INTEGER_TYPES.has(element.converted_type)
    && (logical === undefined || (logical.type === 'INTEGER' && logical.isSigned));
  if (wanted === 'text') {
    const plainText = logical === undefined || logical.type === 'STRING' || logical.type === 'ENUM';
    // Signed integers as ids print as the decoder's number or bigint prints (parquetIntegerText.ts), dates and
    // timestamps as the ISO text of parquetTimes.ts (parquetTimeText.ts).
    return (meta.type === 'BYTE_ARRAY' && TEXT_TYPES.has(element.converted_type) && plainText) || signedInteger || timeUnitOf(element, meta) !== undefined
      ? 'text' : undefined;
  }
  if (meta.type === 'DOUBLE' || meta.type === 'FLOAT') return element.converted_type === undefined && logical === undefined ? 'number' : undefined;
  return signedInteger ? 'number' : undefined;
}

/** What a typed cursor needs of its column chunk. */
export interface TypedColumn {
  readonly kind: 'text' | 'number';
  readonly type: ColumnMetaData['type'];
  readonly codec: ColumnMetaData['codec'];
  readonly compressors: Compressors;
  /** 1 for an optional column (a definition level per row), 0 for a required one. */
  readonly maxDefinition: number;
  /** Text columns of dates or timestamps: what their integers count. */
  readonly time?: TimeUnit;
}

let dictionaries = 0;

/** A flat column chunk decoded one page at a time into typed slices. */
export class TypedColumnCursor {
  readonly slice: TypedSlice;
  private offset = 0;
  // The current page: rows, the next row, its values (text ranges or numbers) and the next value.
  private rows = 0;
  private row = 0;
  private present = new Uint8Array(0);
  private allPresent = true;
  private pageBytes: Uint8Array = new Uint8Array(0);
  private pageUtf8 = true;
  private starts = new Int32Array(0);
  private ends = new Int32Array(0);
  private numbers: Float64Array = new Float64Array(0);
  private indices = new Int32Array(0);
  private fromDictionary = false;
  private value = 0;
  // The dictionary: text ranges of its page, or numbers.
  private dictBytes: Uint8Array | undefined;
  private dictStarts = new Int32Array(0);
  private dictEnds = new Int32Array(0);
  private dictUtf8 = new Uint8Array(0);
  private dictNumbers: Float64Array = new Float64Array(0);
  private dictSize = -1;
  private dictNumber = -1;

  constructor(private readonly chunk: Uint8Array, private readonly column: TypedColumn, sliceRows: number) {
    this.slice = column.kind === 'text'
      ? { kind: 'text', sources: [], source: new Int32Array(sliceRows), start: new Int32Array(sliceRows), end: new Int32Array(sliceRows),
          entry: new Int32Array(sliceRows), dictionary: -1, utf8: true }
      : { kind: 'number', value: new Float64Array(sliceRows) };
  }

  /** The next `count` rows (at most the slice size) into `slice`. */
  fill(count: number): TypedSlice {
    const slice = this.slice;
    if (slice.kind === 'text') {
      slice.sources.length = 0;
      slice.utf8 = true;
      this.dictSource = -1;
    }
    // A page's run of rows at a time: a run with no nulls copies its values at once.
    for (let k = 0; k < count;) {
      if (this.row === this.rows && !this.nextPage()) {
        if (slice.kind === 'number') slice.value.fill(NaN, k, count);
        else slice.source.fill(PAST_END, k, count);
        break;
      }
      const n = Math.min(count - k, this.rows - this.row);
      if (slice.kind === 'number') this.numbersInto(slice.value, k, n);
      else if (this.fromDictionary) this.entriesInto(slice, k, n);
      else this.textsInto(slice, k, n);
      k += n;
    }
    return slice;
  }

  /** The slice's source number of the dictionary, in the slice now. */
  private dictSource = -1;

  private numbersInto(out: Float64Array, k: number, n: number): void {
    const { present, allPresent, fromDictionary, numbers, dictNumbers, indices } = this;
    let { row, value } = this;
    if (allPresent && !fromDictionary) {
      out.set(numbers.subarray(value, value + n), k);
      value += n;
      row += n;
    } else {
      for (let i = k; i < k + n; i++) {
        const has = allPresent || present[row] === 1;
        row++;
        out[i] = has ? (fromDictionary ? dictNumbers[indices[value++]!]! : numbers[value++]!) : NaN;
      }
    }
    this.row = row;
    this.value = value;
  }

  private textsInto(slice: TextSlice, k: number, n: number): void {
    const source = slice.sources.push(this.pageBytes) - 1;
    if (!this.pageUtf8) slice.utf8 = false;
    const { present, allPresent, starts, ends } = this;
    let { row, value } = this;
    slice.entry.fill(-1, k, k + n);
    if (allPresent) {
      slice.source.fill(source, k, k + n);
      slice.start.set(starts.subarray(value, value + n), k);
      slice.end.set(ends.subarray(value, value + n), k);
      value += n;
      row += n;
    } else {
      for (let i = k; i < k + n; i++) {
        if (present[row++] !== 1) {
          slice.source[i] = NULL_ROW;
          continue;
        }
        slice.source[i] = source;
        slice.start[i] = starts[value]!;
        slice.end[i] = ends[value++]!;
      }
    }
    this.row = row;
    this.value = value;
  }

  private entriesInto(slice: TextSlice, k: number, n: number): void {
    if (this.dictSource < 0) {
      this.dictSource = slice.sources.push(this.dictBytes!) - 1;
      slice.dictionary = this.dictNumber;
    }
    const { present, allPresent, indices, dictStarts, dictEnds, dictUtf8, dictSource } = this;
    const { source, start, end, entry } = slice;
    let { row, value } = this;
    let utf8 = true;
    for (let i = k; i < k + n; i++) {
      if (!allPresent && present[row++] !== 1) {
        source[i] = NULL_ROW;
        continue;
      }
      const e = indices[value++]!;
      source[i] = dictSource;
      start[i] = dictStarts[e]!;
      end[i] = dictEnds[e]!;
      entry[i] = e;
      utf8 = utf8 && dictUtf8[e] === 1;
    }
    if (allPresent) row += n;
    if (!utf8) slice.utf8 = false;
    this.row = row;
    this.value = value;
  }

  /** Decodes the next data page (reading a dictionary page on the way); false at the chunk's end. */
  private nextPage(): boolean {
    const { chunk, column } = this;
    const reader = { view: new DataView(chunk.buffer, chunk.byteOffset, chunk.byteLength), offset: this.offset };
    while (reader.offset < chunk.byteLength - 1) {
      const header = parquetHeader(reader);
      const start = reader.offset;
      const end = start + header.compressed_page_size;
      if (end > chunk.byteLength) throw new Error('a page runs past its column chunk');
      reader.offset = end;
      this.offset = end;
      const compressed = chunk.subarray(start, end);
      const size = Number(header.uncompressed_page_size);
      if (header.type === 'DICTIONARY_PAGE') {
        this.readDictionary(decompressPage(compressed, size, column.codec, column.compressors), header.dictionary_page_header!.num_values);
      } else if (header.type === 'DATA_PAGE') {
        const page = header.data_page_header!;
        const bytes = decompressPage(compressed, size, column.codec, column.compressors);
        let at = 0;
        if (column.maxDefinition > 0) {
          if (page.definition_level_encoding !== 'RLE') throw new Error('levels not in the hybrid encoding');
          const length = readUint32(bytes, 0);
          this.readLevels(bytes, 4, 4 + length, page.num_values);
          at = 4 + length;
        } else this.allPresent = true;
        if (this.startPage(bytes, at, page.num_values, page.encoding)) return true;
      } else if (header.type === 'DATA_PAGE_V2') {
        const page = header.data_page_header_v2!;
        if (page.repetition_levels_byte_length !== 0 || page.num_values !== page.num_rows) throw new Error('repetition levels in a flat column');
        const levels = page.definition_levels_byte_length;
        if (column.maxDefinition > 0) this.readLevels(compressed, 0, levels, page.num_rows);
        else this.allPresent = true;
        // The decoder counts a version 2 page's values from its header: a header that disagrees goes to it.
        if (this.nulls(page.num_rows) !== page.num_nulls) throw new Error('a page header miscounting its nulls');
        const valuesSize = size - levels;
        let values = compressed.subarray(levels);
        if (page.is_compressed !== false && valuesSize > 0) values = decompressPage(values, valuesSize, column.codec, column.compressors);
        if (this.startPage(values, 0, page.num_rows, page.encoding)) return true;
      }
    }
    return false;
  }

  /** The page's values from bytes[at..]; false for a page of no rows. */
  private startPage(bytes: Uint8Array, at: number, rows: number, encoding: string): boolean {
    if (rows === 0) return false;
    const values = rows - this.nulls(rows);
    this.rows = rows;
    this.row = 0;
    this.value = 0;
    this.pageBytes = bytes;
    if (encoding === 'PLAIN') {
      this.fromDictionary = false;
      if (this.column.kind === 'text') {
        const integers = this.integerTexts(bytes, at, values, 'page');
        if (integers !== undefined) this.pageBytes = integers;
        this.pageUtf8 = integers !== undefined || this.readTexts(bytes, at, values, 'page');
      } else this.numbers = this.readNumbers(bytes, at, values, this.numbers);
    } else if (encoding === 'PLAIN_DICTIONARY' || encoding === 'RLE_DICTIONARY') {
      if (this.dictSize < 0) throw new Error('a dictionary page missing');
      this.fromDictionary = true;
      if (this.indices.length < values) this.indices = new Int32Array(Math.max(values, 2 * this.indices.length));
      // The decoder reads the indices' bit width even on a page of nulls: a page without it goes to the decoder.
      if (at >= bytes.length) throw new Error('a page ends before its values');
      if (values > 0) {
        const width = bytes[at]!;
        if (width === 0) this.indices.fill(0, 0, values);
        else readHybrid(bytes, at + 1, bytes.length, width, this.indices, values);
        for (let v = 0; v < values; v++) if (this.indices[v]! >= this.dictSize) throw new Error('a dictionary index out of range');
      }
    } else throw new Error(`${encoding} pages are read by the decoder`);
    engineActivity().parquetTypedPages++;
    return true;
  }

  private nulls(rows: number): number {
    let nulls = 0;
    if (!this.allPresent) for (let r = 0; r < rows; r++) nulls += this.present[r] === 1 ? 0 : 1;
    return nulls;
  }

  private readLevels(bytes: Uint8Array, from: number, to: number, rows: number): void {
    if (to > bytes.length) throw new Error('levels run past the page');
    if (this.present.length < rows) this.present = new Uint8Array(Math.max(rows, 2 * this.present.length));
    readHybrid(bytes, from, to, 1, this.present, rows);
    let all = true;
    for (let r = 0; r < rows && all; r++) all = this.present[r] === 1;
    this.allPresent = all;
  }

  private readDictionary(bytes: Uint8Array, count: number): void {
    // A slice's rows name one dictionary (TextSlice.dictionary).
    if (this.dictSize >= 0) throw new Error('a second dictionary page in a column chunk');
    this.dictNumber = ++dictionaries;
    this.dictSize = count;
    if (this.column.kind === 'number') {
      this.dictNumbers = this.readNumbers(bytes, 0, count, new Float64Array(count));
      return;
    }
    const integers = this.integerTexts(bytes, 0, count, 'dictionary');
    const allUtf8 = integers !== undefined || this.readTexts(bytes, 0, count, 'dictionary');
    this.dictBytes = integers ?? bytes;
    if (this.dictUtf8.length < count) this.dictUtf8 = new Uint8Array(count);
    for (let e = 0; e < count; e++) {
      this.dictUtf8[e] = allUtf8 || isUtf8(bytes.subarray(this.dictStarts[e]!, this.dictEnds[e]!)) ? 1 : 0;
    }
  }

  /** An integer column's PLAIN values printed as text (ASCII), their ranges in starts and ends; undefined for a text column. */
  private integerTexts(bytes: Uint8Array, at: number, count: number, into: 'page' | 'dictionary'): Uint8Array | undefined {
    const { type, time } = this.column;
    if (type !== 'INT32' && type !== 'INT64') return undefined;
    const [starts, ends] = this.ranges(count, into);
    if (time !== undefined) return timeTexts(bytes, at, count, time, starts, ends);
    return integerTexts(bytes, at, count, type === 'INT32' ? 4 : 8, starts, ends);
  }

  /** The page's or the dictionary's value ranges, with room for `count`. */
  private ranges(count: number, into: 'page' | 'dictionary'): [Int32Array, Int32Array] {
    let starts = into === 'page' ? this.starts : this.dictStarts;
    let ends = into === 'page' ? this.ends : this.dictEnds;
    if (starts.length < count) {
      starts = new Int32Array(Math.max(count, 2 * starts.length));
      ends = new Int32Array(starts.length);
      if (into === 'page') [this.starts, this.ends] = [starts, ends];
      else [this.dictStarts, this.dictEnds] = [starts, ends];
    }
    return [starts, ends];
  }

  /**
   * PLAIN BYTE_ARRAY values: a 4-byte little-endian length, then the bytes. Returns whether every value
   * is UTF-8, checked on the whole run at once where that is the same: when every length is below 128
   * its four bytes are ASCII, which no UTF-8 sequence can straddle, so the run is UTF-8 exactly when
   * each value is.
   */
  private readTexts(bytes: Uint8Array, at: number, count: number, into: 'page' | 'dictionary'): boolean {
    const [starts, ends] = this.ranges(count, into);
    const first = at;
    let short = true;
    for (let v = 0; v < count; v++) {
      if (at + 4 > bytes.length) throw new Error('a page ends inside its values');
      const length = readUint32(bytes, at);
      if (length >= 128) short = false;
      at += 4;
      if (at + length > bytes.length) throw new Error('a page ends inside its values');
      starts[v] = at;
      at += length;
      ends[v] = at;
    }
    if (short) return isUtf8(bytes.subarray(first, at));
    for (let v = 0; v < count; v++) if (!isUtf8(bytes.subarray(starts[v]!, ends[v]!))) return false;
    return true;
  }

  /** PLAIN numbers of the column's type, as the decoder converts them (64-bit integers rounded as Number(bigint) does). */
  private readNumbers(bytes: Uint8Array, at: number, count: number, out: Float64Array): Float64Array {
    const type = this.column.type;
    const width = type === 'INT32' || type === 'FLOAT' ? 4 : 8;
    if (at + count * width > bytes.length) throw new Error('a page ends inside its values');
    if (out.length < count) out = new Float64Array(Math.max(count, 2 * out.length));
    const view = new DataView(bytes.buffer, bytes.byteOffset + at, count * width);
    if (type === 'DOUBLE') for (let v = 0; v < count; v++) out[v] = view.getFloat64(8 * v, true);
    else if (type === 'FLOAT') for (let v = 0; v < count; v++) out[v] = view.getFloat32(4 * v, true);
    else if (type === 'INT32') for (let v = 0; v < count; v++) out[v] = view.getInt32(4 * v, true);
    // hi × 2^32 is exact and adding lo rounds once: the nearest double to the integer, as Number(bigint) gives.
    else for (let v = 0; v < count; v++) out[v] = view.getInt32(8 * v + 4, true) * 4294967296 + view.getUint32(8 * v, true);
    return out;
  }
}
