/**
 * Flat Parquet columns (not nested: the columns of a dump) read page by page with the decoder's own page
 * functions (headers, decompression, levels, encodings, dictionaries, conversions) into one array per
 * column, a row's value or null at the row's place. The decoder's reader builds each page into arrays
 * value by value for nested lists (`assembleLists`, a fifth of a 10M-row read) and then hands them over;
 * here each value goes straight to its place. The values are the decoder's, so the rows are the same:
 * tests compare the two paths (tuning `parquetPages` off and on).
 */
import { parquetHeader } from 'hyparquet/src/column.js';
import { convert, convertWithDictionary, DEFAULT_PARSERS } from 'hyparquet/src/convert.js';
import { decompressPage, readDataPage, readDataPageV2 } from 'hyparquet/src/datapage.js';
import { readPlain } from 'hyparquet/src/plain.js';
import { getMaxDefinitionLevel, getTreePath } from 'hyparquet/src/schema.js';
import { parquetSchema, type Compressors, type DecodedArray, type FileMetaData, type ParquetParsers } from 'hyparquet';

/** What the page functions read a column with (the decoder's ColumnDecoder). */
type ColumnDecoder = Parameters<typeof readDataPageV2>[2];

/** The values of one row group's rows, per column name; undefined when a column is not flat or the piece not a whole group. */
export async function readFlatColumns(
  file: { slice(start: number, end?: number): Promise<ArrayBuffer> | ArrayBuffer },
  metadata: FileMetaData,
  columns: readonly string[],
  piece: { readonly start: number; readonly end: number },
  options: { readonly compressors: Compressors; readonly parsers: Partial<ParquetParsers> },
): Promise<Map<string, unknown[]> | undefined> {
  let groupStart = 0;
  const group = metadata.row_groups.find((g) => {
    const end = groupStart + Number(g.num_rows);
    if (piece.start < end) return true;
    groupStart = end;
    return false;
  });
  if (group === undefined || piece.start !== groupStart || piece.end !== groupStart + Number(group.num_rows)) return undefined;
  const tree = parquetSchema(metadata);
  const decoders: { name: string; decoder: ColumnDecoder; start: number; end: number }[] = [];
  for (const name of columns) {
    const chunk = group.columns.find((c) => c.meta_data?.path_in_schema.length === 1 && c.meta_data.path_in_schema[0] === name);
    const meta = chunk?.meta_data;
    if (meta === undefined) return undefined;
    const schemaPath = getTreePath(tree, meta.path_in_schema);
    const element = schemaPath[schemaPath.length - 1]!;
    if (schemaPath.length !== 2 || element.children.length > 0 || element.element.repetition_type === 'REPEATED') return undefined;
    const start = Number(meta.dictionary_page_offset || meta.data_page_offset);
    decoders.push({
      name,
      start,
      end: start + Number(meta.total_compressed_size),
      decoder: { pathInSchema: meta.path_in_schema, element: element.element, schemaPath, type: meta.type, codec: meta.codec,
        compressors: options.compressors, parsers: { ...DEFAULT_PARSERS, ...options.parsers } },
    });
  }
  const values = new Map<string, unknown[]>();
  for (const { name, decoder, start, end } of decoders) {
    const bytes = await file.slice(start, end);
    values.set(name, readChunk(new DataView(bytes), decoder, piece.end - piece.start));
  }
  return values;
}

/**
 * The `rows` rows of a row group from its column chunk: a value, null where the row has none, and undefined
 * past the chunk's last page (a short chunk), as the decoder's reader leaves them.
 */
function readChunk(view: DataView, decoder: ColumnDecoder, rows: number): unknown[] {
  const out = new Array<unknown>(rows).fill(undefined);
  const reader = { view, offset: 0 };
  const maxDefinition = getMaxDefinitionLevel(decoder.schemaPath);
  let dictionary: DecodedArray | undefined;
  let row = 0;
  while (row < rows && reader.offset < view.byteLength - 1) {
    const header = parquetHeader(reader);
    const compressed = new Uint8Array(view.buffer, view.byteOffset + reader.offset, header.compressed_page_size);
    reader.offset += header.compressed_page_size;
    let page: ReturnType<typeof readDataPage>;
    let encoding: string;
    if (header.type === 'DICTIONARY_PAGE') {
      const bytes = decompressPage(compressed, Number(header.uncompressed_page_size), decoder.codec, decoder.compressors);
      const pageReader = { view: new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength), offset: 0 };
      dictionary = convert(readPlain(pageReader, decoder.type, header.dictionary_page_header!.num_values, decoder.element.type_length), decoder);
      continue;
    } else if (header.type === 'DATA_PAGE') {
      encoding = header.data_page_header!.encoding;
      page = readDataPage(decompressPage(compressed, Number(header.uncompressed_page_size), decoder.codec, decoder.compressors), header.data_page_header!, decoder);
    } else if (header.type === 'DATA_PAGE_V2') {
      encoding = header.data_page_header_v2!.encoding;
      page = readDataPageV2(compressed, header, decoder);
    } else {
      continue;
    }
    // A flat column's page holds one value or null per row.
    const values = convertWithDictionary(page.dataPage, dictionary, encoding as never, decoder);
    const levels = page.definitionLevels ?? [];
    const count = header.type === 'DATA_PAGE' ? header.data_page_header!.num_values : header.data_page_header_v2!.num_rows;
    let next = 0;
    for (let i = 0; i < count && row + i < rows; i++) out[row + i] = levels.length === 0 || levels[i] === maxDefinition ? values[next++] : null;
    row += count;
  }
  return out;
}
