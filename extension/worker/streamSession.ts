/**
 * A view of a dump scored as it streamed in (engine/stream/): the worker holds the per-query table and
 * where each query's rows are in the file, never the rows, so memory stays flat whatever the file's
 * size. While it streams, the overview of the queries scored so far goes to the view (`onPartial`);
 * the final overview is the in-memory path's to the bit (the stream's own guarantee). A query's detail
 * reads that query's rows again from its byte range. Each query's segment values are kept as it streams
 * (engine stream/segmentRows.ts: one row per query), so the segment views and filters work as in memory;
 * the score diagnostics need every row and are refused with a sentence saying why.
 */
import { stat } from 'node:fs/promises';
import { InputError } from '../engine/errors';
import { queryDetail, type GradeRange } from '../engine/evaluate/detail';
import { headlineCutoff } from '../engine/evaluate/scorer';
import type { Evaluation } from '../engine/evaluate/types';
import { readDump, segmentRowsOf, streamOrRead, type RankedDump, type StreamedDump, type StreamPartial } from '../engine/index';
import type { SegmentedRows } from '../engine/evaluate/segments';
import { parseMetricList } from '../engine/metrics/parse';
import { readQueryRows } from '../engine/stream/queryDetail';
import { withSideTables } from '../engine/tables/join';
import { DEFAULT_BLOCK_BYTES } from '../engine/stream/streamEvaluate';
import { describeConventions } from '../presentation/conventionsLine';
import { metricLabel } from '../presentation/metricText';
import type { OverviewModel, QueryDetailView } from '../protocol/messages';
import type { PartialOverview } from '../protocol/partialOverview';
import type { DumpSource, EvaluationSettings } from '../protocol/worker';
import { QueryTable, toMaybe } from './queryTable';
import { detailScreen, queryJsonText } from './queryViews';
import { overviewOf } from './viewModels';

export interface StreamedLoaded {
  readonly kind: 'streamed';
  readonly dump: StreamedDump;
  readonly evaluation: Evaluation;
  readonly table: QueryTable;
  /** One row per query with its segment values, as the segment views read a dump. */
  readonly rows: SegmentedRows;
  /** Row number (file order) of each query's first row, then the row count; made on first use. */
  firstRows?: Float64Array;
}

export interface StreamLoadOptions {
  readonly streamFromBytes: number;
  readonly signal: AbortSignal;
  readonly onProgress: (fraction: number) => void;
  /** Progress of reading into memory instead (a file below the threshold, or one unfit to stream). */
  readonly onReadProgress: (fraction: number) => void;
  readonly onPartial: (partial: PartialOverview) => void;
  /** performance.now() when the load was asked for. */
  readonly started: number;
}

export type StreamLoad =
  | { readonly kind: 'streamed'; readonly session: StreamedLoaded; readonly overview: OverviewModel }
  /** Not streamed: the dump read into memory (`why` is a note for the overview when a stream gave way). */
  | { readonly kind: 'read'; readonly dump: RankedDump; readonly note?: string };

/** Whether the source can stream at all: what is joined from other files needs the rows in memory. */
export function mayStream(source: DumpSource): boolean {
  return source.sqlEngine === undefined && sideFiles(source).length === 0;
}

function sideFiles(source: DumpSource): string[] {
  return [source.judgments !== undefined && `judgments file ${source.judgments}`, source.scores !== undefined && `scores file ${source.scores}`,
    source.queries !== undefined && `queries table ${source.queries}`, source.items !== undefined && `items table ${source.items}`].filter((f) => f !== false);
}

/** For a dump large enough to stream that was read into memory because files are joined to it: why, for its overview. */
export function joinedNote(source: DumpSource): string {
  const files = sideFiles(source);
  return `Read into memory rather than streamed (it is over gainline.reading.streamFromMegabytes), since the ${files.join(' and the ')} ` +
    `${files.length > 1 ? 'go' : 'goes'} with it, and joining needs its rows.`;
}

/** Streams the source when its format and size allow (engine stream/choose.ts), else reads it. */
export async function loadStreamOrRead(source: DumpSource, settings: EvaluationSettings, options: StreamLoadOptions): Promise<StreamLoad> {
  const metrics = parseMetricList(settings.metrics);
  const read = {
    signal: options.signal,
    onProgress: options.onReadProgress,
    ...(source.format ? { format: source.format as never } : {}),
    ...(source.columns ? { columns: source.columns } : {}),
  };
  const conventions = describeConventions(settings.conventions);
  const fileName = source.path.split(/[\\/]/).pop() ?? source.path;
  const onPartial = (p: StreamPartial): void => options.onPartial(partialOverview(p, fileName, conventions, performance.now() - options.started));
  // A file that cannot be looked at is the reader's to name, in its words (file: expected …).
  const size = await stat(source.path).then((s) => s.size, () => undefined);
  if (size === undefined) return { kind: 'read', dump: await withSideTables(await readDump(source.path, read), {}, options.signal) };
  const outcome = await streamOrRead(source.path, read, metrics, settings.conventions, { reading: 'auto', streamFromBytes: options.streamFromBytes,
    sensitivity: true, segments: true, onPartial, onProgress: options.onProgress, signal: options.signal, blockBytes: editorBlockBytes(size) });
  if (outcome.kind === 'read') {
    // As readSource gives it: the dump's own weight column joined (mayStream left no side table to join).
    const dump = await withSideTables(outcome.dump, {}, options.signal);
    return { kind: 'read', dump, ...(outcome.tried ? { note: `Read into memory rather than streamed, since ${outcome.why}.` } : {}) };
  }
  const { dump, evaluation } = outcome;
  const rows = segmentRowsOf(dump);
  // Each query is its own one-row group: the table's segment of a query is the value of that row.
  const groups = { rowsOfQuery: rows.query, start: Uint32Array.from({ length: rows.rowCount + 1 }, (_, q) => q) };
  const table = new QueryTable({ dump: { queries: dump.queries, segments: rows.segments, ...(dump.joined ? { joined: dump.joined } : {}) }, evaluation, groups });
  const file = { path: dump.path, name: fileName, format: dump.format, rowCount: dump.rowCount, sizeBytes: dump.stamp.size, textual: true };
  const streamedNote = `Streamed: scored as the file was read (${outcome.blocks} blocks on ${outcome.threads} threads), without keeping its rows in memory; ` +
    'the score diagnostics need the rows (raise gainline.reading.streamFromMegabytes above the file\'s size to read it into memory).';
  const overview = { ...overviewOf(file, evaluation, [...dump.notes.messages, streamedNote], performance.now() - options.started),
    segmentColumns: rows.segments.map((c) => c.name), ...(evaluation.weighting ? { weighting: evaluation.weighting.source } : {}) };
  return { kind: 'streamed', session: { kind: 'streamed', dump, evaluation, table, rows }, overview };
}

/**
 * The first partial overview comes after the first block: the engine's 32 MB block would be a third of a
 * 100 MB file. A sixteenth of the file (at least 1 MB, where a block's fixed costs are still small) gives a
 * partial overview early and about sixteen of them on any file below 512 MB. Results do not depend on it.
 */
export function editorBlockBytes(fileBytes: number): number {
  return Math.round(Math.min(DEFAULT_BLOCK_BYTES, Math.max(1 << 20, fileBytes / 16)));
}

/** The engine's partial result as the protocol's view model. */
export function partialOverview(p: StreamPartial, fileName: string, conventions: string, elapsedMs: number): PartialOverview {
  return {
    fileName,
    metrics: p.summary.map((m) => ({ key: m.key, label: metricLabel(m.key), mean: toMaybe(m.mean), counted: m.counted })),
    headline: 0,
    queries: p.queries,
    rows: p.rows,
    bytesRead: p.bytesRead,
    totalBytes: p.totalBytes,
    conventions,
    elapsedMs: Math.round(elapsedMs),
  };
}

/** Why a view that needs every row cannot be given for a streamed dump. */
export function needsRows(what: string): Error {
  return new Error(`${what} need the rows in memory, and this dump was streamed without keeping them (files of gainline.reading.streamFromMegabytes or more stream)`);
}

function queryId(s: StreamedLoaded, query: string): number {
  const id = s.dump.queries.find(query);
  if (id < 0) throw new InputError(`a query id present in ${s.dump.path}`, undefined, undefined, query);
  return id;
}

/** Query `id` read again, its detail computed as the in-memory path's, with the rows numbered in the query. */
async function detailOf(s: StreamedLoaded, id: number, maxPairs: number) {
  const rows = await readQueryRows(s.dump, id);
  const k = headlineCutoff(s.evaluation.metrics);
  const range: GradeRange | undefined = s.dump.notes.gradeRange;
  const detail = queryDetail(rows, 0, s.evaluation.conventions, Number.isFinite(k) ? k : s.evaluation.perQuery.items[id]!,
    { maxPairs, metrics: s.evaluation.metrics, ...(range ? { gradeRange: range } : {}) });
  return { rows, detail };
}

function firstRows(s: StreamedLoaded): Float64Array {
  if (s.firstRows) return s.firstRows;
  const counts = s.dump.locations.rows;
  const first = new Float64Array(s.dump.queries.size + 1);
  for (let q = 0; q < s.dump.queries.size; q++) first[q + 1] = first[q]! + counts[q]!;
  s.firstRows = first;
  return first;
}

/** The detail screen, its rows numbered in the whole file (as the in-memory path numbers them) for `revealRow`. */
export async function streamedDetail(s: StreamedLoaded, query: string, maxPairs: number | undefined): Promise<QueryDetailView> {
  const id = queryId(s, query);
  const { rows, detail } = await detailOf(s, id, maxPairs ?? 200);
  // The query's segment values come from the table (its first row's, the weight column aside, as in memory).
  const view = detailScreen({ ...rows, segments: [] }, s.evaluation, detail, id, s.table);
  const shift = firstRows(s)[id]!;
  const at = (row: number) => (row < 0 ? row : row + shift);
  return {
    ...view,
    segments: Object.fromEntries(s.rows.segments.map((c) => [c.name, c.values.get(c.ofRow[id]!)])),
    positions: view.positions.map((p) => ({ ...p, row: at(p.row) })),
    ideal: view.ideal.map((p) => ({ ...p, row: at(p.row) })),
    invertedPairs: view.invertedPairs.map((p) => ({ ...p, aboveRow: at(p.aboveRow), belowRow: at(p.belowRow) })),
  };
}

export async function streamedQueryJson(s: StreamedLoaded, query: string): Promise<string> {
  const id = queryId(s, query);
  const { rows, detail } = await detailOf(s, id, 0);
  return queryJsonText(query, s.dump.path, s.evaluation, id, detail, (row) => rows.line[row] || null);
}

/** Line and byte offset of row `row` (file order): its query is found by row counts and read again. */
export async function streamedRowLocation(s: StreamedLoaded, row: number): Promise<{ line: number; offset: number; path: string }> {
  const first = firstRows(s);
  const total = first[first.length - 1]!;
  if (!Number.isInteger(row) || row < 0 || row >= total) throw new Error(`row ${row} is outside 0..${total - 1}`);
  let lo = 0;
  let hi = first.length - 2;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (first[mid]! <= row) lo = mid;
    else hi = mid - 1;
  }
  const rows = await readQueryRows(s.dump, lo);
  const local = row - first[lo]!;
  return { line: rows.line[local]!, offset: rows.offset[local]!, path: s.dump.path };
}
