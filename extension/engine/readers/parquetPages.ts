/**
 * Flat Parquet columns (not nested: the columns of a dump) read page by page with the decoder's own page
 * functions (headers, decompression, levels, encodings, dictionaries, conversions), a slice of rows at a
 * time, each row's value or null at the row's place: a row group of 10M rows is not held decoded at once.
 * The decoder's reader builds each page into arrays value by value for nested lists (`assembleLists`, a
 * fifth of a 10M-row read) and hands the whole group over; here each value goes straight to its place. The values are the decoder's, so the rows are the same:
 * tests compare the two paths (tuning `parquetPages` off and on).
 */
import { parquetHeader } from 'hyparquet/src/column.js';
import { convert, convertWithDictionary, DEFAULT_PARSERS } from 'hyparquet/src/convert.js';
import { decompressPage, readDataPage, readDataPageV2 } from 'hyparquet/src/datapage.js';
import { readPlain } from 'hyparquet/src/plain.js';
import { getMaxDefinitionLevel, getTreePath } from 'hyparquet/src/schema.js';
import { parquetSchema, type Compressors, type DecodedArray, type FileMetaData, type ParquetParsers } from 'hyparquet';
import { timeUnitOf } from './parquetTimeText';
import { TypedColumnCursor, typedKind, type TypedSlice } from './parquetTypedPages';

/** What the page functions read a column with (the decoder's ColumnDecoder). */
type ColumnDecoder = Parameters<typeof readDataPageV2>[2];

/** A column's next rows: the decoder's values, or typed (parquetTypedPages.ts). */
export type SliceColumn = unknown[] | TypedSlice;

/** A row group's flat columns, read a slice of rows at a time. */
export interface FlatGroup {
  /** The next `count` rows (at most `sliceRows`) of every column (arrays reused from call to call: use them before the next). */
  next(count: number): Map<string, SliceColumn>;
}

/**
 * A row group's flat columns, their chunks read; undefined when a column is not flat or the piece not a whole
 * group. A column `kinds` names ('text' for ids, 'number' for grades and scores) is decoded typed when its
 * type and encodings allow (typedKind).
 */
export async function openFlatColumns(
  file: { slice(start: number, end?: number): Promise<ArrayBuffer> | ArrayBuffer },
  metadata: FileMetaData,
  columns: readonly string[],
  piece: { readonly start: number; readonly end: number },
  options: { readonly compressors: Compressors; readonly parsers: Partial<ParquetParsers>; readonly sliceRows: number;
    readonly kinds?: ReadonlyMap<string, 'text' | 'number'> },
): Promise<FlatGroup | undefined> {
  let groupStart = 0;
  const group = metadata.row_groups.find((g) => {
    const end = groupStart + Number(g.num_rows);
    if (piece.start < end) return true;
    groupStart = end;
    return false;
  });
  if (group === undefined || piece.start !== groupStart || piece.end !== groupStart + Number(group.num_rows)) return undefined;
  const tree = parquetSchema(metadata);
  const cursors = new Map<string, ColumnCursor>();
  const typed = new Map<string, TypedColumnCursor>();
  for (const name of columns) {
    const chunk = group.columns.find((c) => c.meta_data?.path_in_schema.length === 1 && c.meta_data.path_in_schema[0] === name);
    const meta = chunk?.meta_data;
    if (meta === undefined) return undefined;
    const schemaPath = getTreePath(tree, meta.path_in_schema);
    const element = schemaPath[schemaPath.length - 1]!;
    if (schemaPath.length !== 2 || element.children.length > 0 || element.element.repetition_type === 'REPEATED') return undefined;
    const start = Number(meta.dictionary_page_offset || meta.data_page_offset);
    const bytes = await file.slice(start, start + Number(meta.total_compressed_size));
    const wanted = options.kinds?.get(name);
    const kind = wanted && typedKind(element.element, meta, wanted);
    if (kind !== undefined) {
      const column = { kind, type: meta.type, codec: meta.codec, compressors: options.compressors, maxDefinition: getMaxDefinitionLevel(schemaPath),
        time: timeUnitOf(element.element, meta) };
      typed.set(name, new TypedColumnCursor(new Uint8Array(bytes), column, options.sliceRows));
      continue;
    }
    cursors.set(name, new ColumnCursor(new DataView(bytes), { pathInSchema: meta.path_in_schema, element: element.element, schemaPath, type: meta.type,
      codec: meta.codec, compressors: options.compressors, parsers: { ...DEFAULT_PARSERS, ...options.parsers } }));
  }
  const out = new Map<string, SliceColumn>();
  return {
    next(count) {
      for (const [name, cursor] of typed) out.set(name, cursor.fill(count));
      for (const [name, cursor] of cursors) {
        let values = out.get(name) as unknown[] | undefined;
        if (values === undefined || values.length !== count) out.set(name, (values = new Array<unknown>(count)));
        cursor.fill(values);
      }
      return out;
    },
  };
}

/**
 * A flat column chunk's rows in order: a value, null where the row has none, and undefined past the chunk's
 * last page (a short chunk), as the decoder's reader leaves them. One page is decoded at a time.
 */
class ColumnCursor {
  private readonly reader: { view: DataView; offset: number };
  private readonly maxDefinition: number;
  private dictionary: DecodedArray | undefined;
  private values: DecodedArray = [];
  private levels: number[] = [];
  /** Rows of the current page, the next of them, and the next of its values. */
  private rows = 0;
  private row = 0;
  private value = 0;

  constructor(view: DataView, private readonly decoder: ColumnDecoder) {
    this.reader = { view, offset: 0 };
    this.maxDefinition = getMaxDefinitionLevel(decoder.schemaPath);
  }

  fill(out: unknown[]): void {
    for (let k = 0; k < out.length; k++) {
      if (this.row === this.rows && !this.nextPage()) {
        out.fill(undefined, k);
        return;
      }
      const levels = this.levels;
      out[k] = levels.length === 0 || levels[this.row] === this.maxDefinition ? this.values[this.value++] : null;
      this.row++;
    }
  }

  /** Decodes the next data page (a dictionary page on the way is kept); false at the chunk's end. */
  private nextPage(): boolean {
    const { reader, decoder } = this;
    const view = reader.view;
    while (reader.offset < view.byteLength - 1) {
      const header = parquetHeader(reader);
      const compressed = new Uint8Array(view.buffer, view.byteOffset + reader.offset, header.compressed_page_size);
      reader.offset += header.compressed_page_size;
      let page: ReturnType<typeof readDataPage>;
      let encoding: string;
      let rows: number;
      if (header.type === 'DICTIONARY_PAGE') {
        const bytes = decompressPage(compressed, Number(header.uncompressed_page_size), decoder.codec, decoder.compressors);
        const pageReader = { view: new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength), offset: 0 };
        this.dictionary = convert(readPlain(pageReader, decoder.type, header.dictionary_page_header!.num_values, decoder.element.type_length), decoder);
        continue;
      } else if (header.type === 'DATA_PAGE') {
        encoding = header.data_page_header!.encoding;
        rows = header.data_page_header!.num_values;
        page = readDataPage(decompressPage(compressed, Number(header.uncompressed_page_size), decoder.codec, decoder.compressors), header.data_page_header!, decoder);
      } else if (header.type === 'DATA_PAGE_V2') {
        encoding = header.data_page_header_v2!.encoding;
        rows = header.data_page_header_v2!.num_rows;
        page = readDataPageV2(compressed, header, decoder);
      } else {
        continue;
      }
      if (rows === 0) continue;
      // A flat column's page holds one value or null per row.
      this.values = convertWithDictionary(page.dataPage, this.dictionary, encoding as never, decoder);
      this.levels = page.definitionLevels ?? [];
      this.rows = rows;
      this.row = 0;
      this.value = 0;
      return true;
    }
    return false;
  }
}
