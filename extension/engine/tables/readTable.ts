/**
 * Reads a side table (queries, items) as plain text cells: a header row naming the columns, then one
 * record per row. CSV and TSV go through the dump's delimited parser in its plain mode, JSON Lines
 * through the same line streaming (one object per line), Parquet through hyparquet. Side tables are
 * small next to a dump (thousands to millions of rows), so cells are kept as strings, column by column.
 */
import { asyncBufferFromFile, parquetMetadataAsync, parquetReadObjects, parquetSchema } from 'hyparquet';
import { TIME_PARSERS } from '../readers/parquetTimes';
import { compressors } from 'hyparquet-compressors';
import { InputError } from '../errors';
import { DelimitedParser } from '../readers/delimited';
import { detectFormat } from '../readers/detect';
import { LineSink, pumpText, statStamp, throwIfCancelled } from '../readers/source';

export interface TextTable {
  readonly file: string;
  /** Column names in file order. */
  readonly names: readonly string[];
  /** cells[c][r]: column c of data row r, as text ('' when empty or null). */
  readonly cells: readonly (readonly string[])[];
  /** 1-based line of each data row (0 for Parquet, which has no lines). */
  readonly lines: readonly number[];
  readonly rowCount: number;
  /** 1-based line of the header (0 for Parquet). */
  readonly headerLine: number;
}

export type TableFormat = 'csv' | 'tsv' | 'jsonl' | 'parquet';

export interface ReadTableOptions {
  readonly signal?: AbortSignal;
  /** What the table is for, in error messages: "a queries table". */
  readonly purpose?: string;
}

export async function readTextTable(path: string, options: ReadTableOptions = {}): Promise<TextTable> {
  throwIfCancelled(options.signal);
  const purpose = options.purpose ?? 'a table';
  if ((await statStamp(path)).size === 0) throw new InputError(`${purpose} with a header row naming the columns (the file is empty)`, path);
  const sniffed = await detectFormat(path).catch((e: unknown) => {
    if (e instanceof InputError) throw new InputError(`${purpose} with a header row (CSV, TSV, JSON Lines or Parquet)`, path, e.line, e.found);
    throw e;
  });
  switch (sniffed.format) {
    case 'csv':
    case 'tsv':
      return readDelimitedTable(path, sniffed.format === 'csv' ? 44 : 9, options);
    case 'jsonl':
      return readJsonLinesTable(path, options);
    case 'parquet':
      if (sniffed.directory) throw new InputError(`${purpose} in one file, not a folder`, path);
      return readParquetTable(path);
    default:
      throw new InputError(`${purpose} with a header row (CSV, TSV, JSON Lines or Parquet), not a ${sniffed.format} file`, path, 1);
  }
}

/** Collects rows into columns and checks the header is usable. */
class TableBuilder {
  names: string[] | undefined;
  cells: string[][] = [];
  lines: number[] = [];
  headerLine = 0;

  constructor(private readonly file: string) {}

  header(names: readonly string[], line: number, text: string): void {
    const seen = new Set<string>();
    for (const name of names) {
      if (name.trim() === '') throw new InputError('a name for every column in the header', this.file, line, text);
      if (seen.has(name)) throw new InputError(`each column named once in the header, not '${name}' twice`, this.file, line, text);
      seen.add(name);
    }
    this.names = [...names];
    this.headerLine = line;
    this.cells = names.map(() => []);
  }

  record(fields: readonly string[], line: number): void {
    for (let c = 0; c < fields.length; c++) this.cells[c]!.push(fields[c]!);
    this.lines.push(line);
  }

  finish(): TextTable {
    if (this.names === undefined) throw new InputError('a header row naming the columns (the file is empty)', this.file);
    return { file: this.file, names: this.names, cells: this.cells, lines: this.lines, rowCount: this.lines.length, headerLine: this.headerLine };
  }
}

async function readDelimitedTable(path: string, delimiter: number, options: ReadTableOptions): Promise<TextTable> {
  const table = new TableBuilder(path);
  const parser = new DelimitedParser({ file: path, delimiter, plain: table });
  await pumpText(path, parser, { signal: options.signal });
  return table.finish();
}

async function readJsonLinesTable(path: string, options: ReadTableOptions): Promise<TextTable> {
  const table = new TableBuilder(path);
  const lines = new LineSink((buf, start, end, line) => {
    const text = buf.toString('utf8', start, end).trim();
    if (text.length === 0) return;
    let value: unknown;
    try {
      value = JSON.parse(text);
    } catch (err) {
      throw new InputError(`a JSON object on each line (${(err as Error).message})`, path, line, text);
    }
    if (value === null || typeof value !== 'object' || Array.isArray(value)) throw new InputError('a JSON object on each line', path, line, text);
    const obj = value as Record<string, unknown>;
    if (table.names === undefined) table.header(Object.keys(obj), line, text);
    const names = table.names!;
    for (const key of Object.keys(obj)) {
      if (!names.includes(key)) throw new InputError(`only the keys of the first line (${names.join(', ')})`, path, line, key);
    }
    table.record(names.map((n) => cellText(obj[n])), line);
  });
  await pumpText(path, lines, { signal: options.signal });
  return table.finish();
}

async function readParquetTable(path: string): Promise<TextTable> {
  const table = new TableBuilder(path);
  let rows: Record<string, unknown>[];
  try {
    const file = await asyncBufferFromFile(path);
    const metadata = await parquetMetadataAsync(file);
    const names = parquetSchema(metadata).children.filter((c) => c.children.length === 0).map((c) => c.element.name);
    table.header(names, 0, names.join(', '));
    rows = await parquetReadObjects({ file, metadata, columns: names, compressors, parsers: TIME_PARSERS });
  } catch (err) {
    if (err instanceof InputError) throw err;
    throw new InputError('a readable Parquet file', path, undefined, (err as Error).message);
  }
  const names = table.names!;
  for (const row of rows) table.record(names.map((n) => cellText(row[n])), 0);
  return table.finish();
}

function cellText(v: unknown): string {
  if (v === null || v === undefined) return '';
  if (typeof v === 'string') return v;
  if (typeof v === 'number' || typeof v === 'bigint' || typeof v === 'boolean') return String(v);
  return JSON.stringify(v);
}
