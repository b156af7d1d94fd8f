/**
 * One row per query, for spreadsheets: query (with its text and segments from a queries table), counts,
 * skipped flag and every metric column.
 *
 * Rows are rendered a range of queries at a time, like the JSON records (jsonRecords.ts): by the record
 * writer's kernel in its CSV style when the rows carry no query facts (3× faster at printing numbers than
 * V8, and a million rows took 3 s as strings), else as text here; the two agree to the byte
 * (`record-text.test.ts`). The command line hands the renderer to threads/renderInOrder.ts.
 */
import { registerChunkRenderer, QUERIES_PER_CHUNK, type ChunkWork } from '../evaluate/chunkOutput';
import type { PerQueryColumns } from '../evaluate/types';
import type { MetricSpec } from '../metrics/registry';
import type { QueryFacts } from '../tables/queryFacts';
import { csvField } from './csvField';
import { nameOf, packNames, queryNameField, type PackedNames } from './jsonRecords';
import { CSV_ROWS, recordBytes, type RecordField } from './recordTextKernel';
import { recordColumns, type ReportInput } from './reportInput';

export { csvField } from './csvField';

/** What a thread needs to render rows: which columns, in which order. */
export interface CsvRowsSpec {
  readonly metrics: readonly MetricSpec[];
  readonly names: PackedNames;
  /** Text and segments from a queries table (rendered on one thread; never sent to score workers). */
  readonly facts?: QueryFacts;
  /** Add each query's count of judged items the run never retrieved (labels from a judgments file). */
  readonly notRetrieved?: boolean;
}

/** The header line (without its line break). */
function csvHeader(spec: CsvRowsSpec, perQuery: PerQueryColumns): string {
  const text = spec.facts?.text;
  const segments = spec.facts?.segments ?? [];
  return ['query', ...(text ? ['text'] : []), ...segments.map((s) => s.name), 'items', 'relevant',
    ...(spec.notRetrieved ? ['notRetrieved'] : []), 'skipped', ...recordColumns(spec.metrics, perQuery).map((c) => c.key)].map(csvField).join(',');
}

/** Rows of queries [from, to), separated by line breaks (none after the last); "" for an empty range. */
export function renderCsvRows(spec: CsvRowsSpec, perQuery: PerQueryColumns, from: number, to: number): string | Uint8Array {
  if (to <= from) return '';
  if (spec.facts === undefined) {
    const bytes = recordBytes(csvFields(spec, perQuery), from, to, CSV_ROWS);
    if (bytes !== undefined) return bytes;
  }
  return csvRowsText(spec, perQuery, from, to);
}

/** The cells in order, for the record writer. */
function csvFields(spec: CsvRowsSpec, perQuery: PerQueryColumns): RecordField[] {
  const fields: RecordField[] = [
    queryNameField(spec.names, CSV_ROWS),
    { key: 'items', kind: 'uint', values: perQuery.items },
    { key: 'relevant', kind: 'uint', values: perQuery.relevant },
  ];
  if (spec.notRetrieved) fields.push({ key: 'notRetrieved', kind: 'uint', values: perQuery.unretrieved ?? new Uint32Array(perQuery.items.length) });
  fields.push({ key: 'skipped', kind: 'flag', values: perQuery.skipped });
  for (const column of recordColumns(spec.metrics, perQuery)) fields.push({ key: column.key, kind: 'number', values: column.values });
  return fields;
}

/** renderCsvRows as text, cell by cell: the plain path, and the one that carries query facts. */
export function csvRowsText(spec: CsvRowsSpec, perQuery: PerQueryColumns, from: number, to: number): string {
  const columns = recordColumns(spec.metrics, perQuery);
  const text = spec.facts?.text;
  const segments = spec.facts?.segments ?? [];
  const { items, relevant, skipped } = perQuery;
  const lines: string[] = [];
  for (let q = from; q < to; q++) {
    const cells = [csvField(nameOf(spec.names, q)), ...(text ? [csvField(text[q]!)] : []), ...segments.map((s) => csvField(s.values[q]!)),
      String(items[q]), String(relevant[q]), ...(spec.notRetrieved ? [String(perQuery.unretrieved?.[q] ?? 0)] : []), skipped[q] ? 'true' : 'false'];
    for (const column of columns) {
      const v = column.values[q]!;
      cells.push(Number.isFinite(v) ? String(v) : '');
    }
    lines.push(cells.join(','));
  }
  return lines.join('\n');
}

/** The name the renderer is registered under, in every thread that loads this module (score threads do). */
const CSV_QUERY_ROWS = 'csv-query-rows';
registerChunkRenderer(CSV_QUERY_ROWS, renderCsvRows);

function specOf(input: ReportInput, names: PackedNames): CsvRowsSpec {
  const ev = input.evaluation;
  // With a judgments file, each query's judged items the run never retrieved (they count in the ideal).
  return { metrics: ev.metrics, names, ...(input.facts ? { facts: input.facts } : {}), notRetrieved: ev.judgments !== undefined && ev.perQuery.unretrieved !== undefined };
}

/** The rows of an evaluation's queries as work for renderInOrder, and the header that goes before them. */
export function csvRowsWork(input: ReportInput): { readonly header: string; readonly work: ChunkWork } {
  const spec = specOf(input, packNames(input.queryNames));
  return { header: csvHeader(spec, input.evaluation.perQuery), work: { renderer: CSV_QUERY_ROWS, params: spec, shared: !('texts' in spec.names) && spec.facts === undefined } };
}

export function formatCsv(input: ReportInput): string {
  const ev = input.evaluation;
  const spec = specOf(input, packNames(input.queryNames));
  const lines = [csvHeader(spec, ev.perQuery)];
  const decoder = new TextDecoder();
  for (let from = 0; from < ev.queryCount; from += QUERIES_PER_CHUNK) {
    const rows = renderCsvRows(spec, ev.perQuery, from, Math.min(ev.queryCount, from + QUERIES_PER_CHUNK));
    lines.push(typeof rows === 'string' ? rows : decoder.decode(rows));
  }
  return lines.join('\n') + '\n';
}
