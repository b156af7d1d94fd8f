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
import { readDump, segmentRowsOf, streamIfFit, streamOrRead, type RankedDump, type ReadOptions, type StreamedDump, type StreamIfFit, type StreamPartial } from '../engine/index';
import { readJudgments } from '../engine/readers/index';
import { judgesFirstQueries } from '../engine/stream/firstQueries';
import { sharesQuery, unusedJudgmentsNote, type JudgmentTable } from '../engine/readers/judgments';
import { withFields } from '../engine/model/dump';
import type { StringPool } from '../engine/model/stringPool';
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
  /** Not streamed: the dump read into memory (`note` is for the overview when a stream gave way). */
  | { readonly kind: 'read'; readonly dump: RankedDump; readonly note?: string }
  /** Not streamed, and not read: files found beside it are joined, so the caller reads it with them (readSource). */
  | { readonly kind: 'declined'; readonly note?: string };

/**
 * Whether the source can stream at all. A judgments file, named or found, is joined block by block (engine
 * stream/sharedJudgments.ts), a queries table once every query is known (engine stream/streamTables.ts).
 * A scores file and a named items table need the rows in memory; an items table found beside the dump by
 * the naming rule often belongs to other data, so the stream goes ahead without it (loadStreamOrRead).
 */
export function mayStream(source: DumpSource): boolean {
  if (source.sqlEngine !== undefined || source.scores !== undefined) return false;
  return source.items === undefined || source.tablesFound === true;
}

/** The read options of a judgments file joined as the dump streams (the missing-queries policy with it). */
function judgedBy(source: DumpSource): Pick<ReadOptions, 'judgments' | 'missingQueries'> {
  return { judgments: source.judgments, ...(source.missingQueries ? { missingQueries: source.missingQueries } : {}) };
}

function sideFiles(source: DumpSource): string[] {
  // A judgments file and a queries table stream with the dump (mayStream), so they are never why a dump was read into memory.
  return [source.scores !== undefined && `scores file ${source.scores}`,
    source.items !== undefined && source.tablesFound !== true && `items table ${source.items}`].filter((f) => f !== false);
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
    // A judgments file named for the dump is joined as it streams; one found beside it only once it is known to name its queries.
    ...(source.judgments !== undefined && source.judgmentsFound !== true ? judgedBy(source) : {}),
  };
  const conventions = describeConventions(settings.conventions);
  const fileName = source.path.split(/[\\/]/).pop() ?? source.path;
  const onPartial = (p: StreamPartial): void => options.onPartial(partialOverview(p, fileName, conventions, performance.now() - options.started));
  // A file that cannot be looked at is the reader's to name, in its words (file: expected …).
  const size = await stat(source.path).then((s) => s.size, () => undefined);
  const found = foundFiles(source);
  // A named queries table (mayStream: no named items table with it) is joined once every query is known.
  const namedTables = source.queries !== undefined && source.tablesFound !== true ? { queries: source.queries } : {};
  if (size === undefined) {
    return found.length > 0 ? { kind: 'declined' } : { kind: 'read', dump: await withSideTables(await readDump(source.path, read), namedTables, options.signal) };
  }
  const queriesTable = source.queries === undefined ? {} : { queriesTable: { path: source.queries, ...(source.tablesFound === true ? { found: true } : {}) } };
  const streamOptions = { reading: 'auto' as const, streamFromBytes: options.streamFromBytes,
    sensitivity: true, segments: true, onPartial, onProgress: options.onProgress, signal: options.signal, blockBytes: editorBlockBytes(size), ...queriesTable };
  const gaveWay = (why: string) => `Read into memory rather than streamed, since ${why}.`;
  if (found.length > 0) {
    // A found judgments file is read once, here: checked, and joined if it goes with the dump. Not for a dump
    // too small to stream (the usual one): the read into memory reads and checks it.
    const mayJoin = source.judgmentsFound === true && source.judgments !== undefined && size >= options.streamFromBytes;
    const foundTable = mayJoin ? await readJudgments(source.judgments!, { signal: options.signal }) : undefined;
    const joinedOptions = { ...streamOptions, ...(foundTable ? { judgmentTable: foundTable } : {}) };
    // One that judges the dump's first queries goes with it: joined in the one stream.
    const joinedAtOnce = foundTable !== undefined && await judgesFirstQueries(source.path, foundTable, read);
    // The files found beside it are joined when the dump is read, so one that does not stream is left to the caller.
    const outcome = joinedAtOnce ? await streamIfFit(source.path, { ...read, ...judgedBy(source) }, metrics, settings.conventions, joinedOptions)
      : await streamIfFit(source.path, read, metrics, settings.conventions, streamOptions);
    if (outcome.kind === 'declined') return { kind: 'declined', ...(outcome.tried ? { note: gaveWay(outcome.why) } : {}) };
    const check = checkFoundFiles(source, outcome.dump.queries, joinedAtOnce ? undefined : foundTable);
    if (check.judgmentsRelated) {
      // Related after all, though none of the first queries is judged: streamed again with them joined.
      const joined = await streamIfFit(source.path, { ...read, ...judgedBy(source) }, metrics, settings.conventions, joinedOptions);
      if (joined.kind === 'streamed') {
        const note = `${source.judgments} was found beside the dump and names its queries: the dump was streamed a second time to join its labels.`;
        return { kind: 'streamed', ...streamedSession(joined, fileName, options.started, [note, ...check.notes]) };
      }
      return { kind: 'declined', ...(joined.tried ? { note: gaveWay(joined.why) } : {}) };
    }
    return { kind: 'streamed', ...streamedSession(outcome, fileName, options.started, check.notes) };
  }
  const outcome = await streamOrRead(source.path, read, metrics, settings.conventions, streamOptions);
  if (outcome.kind === 'read') {
    // As readSource gives it: the named queries table and the dump's own weight column joined.
    const dump = await withSideTables(outcome.dump, namedTables, options.signal);
    return { kind: 'read', dump, ...(outcome.tried ? { note: gaveWay(outcome.why) } : {}) };
  }
  return { kind: 'streamed', ...streamedSession(outcome, fileName, options.started, []) };
}

/** The side files found beside the dump, not named for it (named judgments and queries tables stream with it). */
function foundFiles(source: DumpSource): string[] {
  const tables = source.tablesFound === true ? [source.queries, source.items] : [];
  return [source.judgmentsFound === true ? source.judgments : undefined, ...tables].filter((f): f is string => f !== undefined);
}

/**
 * The found files checked against the streamed dump's queries, as the in-memory read checks them: a
 * judgments file that names one of them goes with the dump (`judgmentsRelated`); one that names none is left out,
 * with the read's note. A found queries table was checked, and joined or left out, by the stream itself.
 * An items table can only be checked against item ids, which a stream does not keep: it is left out, with
 * a note saying so (it only adds titles to a query's detail).
 */
function checkFoundFiles(source: DumpSource, queries: StringPool, judgments: JudgmentTable | undefined): { notes: string[]; judgmentsRelated: boolean } {
  const notes: string[] = [];
  let judgmentsRelated = false;
  if (source.judgments !== undefined && judgments !== undefined) {
    judgmentsRelated = sharesQuery(queries, judgments);
    if (!judgmentsRelated) notes.push(unusedJudgmentsNote(source.judgments));
  }
  if (source.items !== undefined) {
    notes.push(`${source.items} was found beside the dump; it is not used while streaming (item titles need the dump's rows).`);
  }
  return { notes, judgmentsRelated };
}

/** The session and overview of a streamed dump; `notes` go before the dump's own. */
function streamedSession(outcome: Extract<StreamIfFit, { kind: 'streamed' }>, fileName: string, started: number, notes: readonly string[]):
  { readonly session: StreamedLoaded; readonly overview: OverviewModel } {
  const { dump, evaluation } = outcome;
  const rows = segmentRowsOf(dump);
  // Each query is its own one-row group: the table's segment of a query is the value of that row. Judged
  // queries the run lacks (missing queries `zero`) come last, with no row, as in memory.
  const groups = { rowsOfQuery: rows.query, start: Uint32Array.from({ length: evaluation.queryCount + 1 }, (_, q) => Math.min(q, rows.rowCount)) };
  const table = new QueryTable({ dump: { queries: dump.queries, segments: rows.segments, ...(dump.joined ? { joined: dump.joined } : {}) }, evaluation, groups });
  const file = { path: dump.path, name: fileName, format: dump.format, rowCount: dump.rowCount, sizeBytes: dump.stamp.size, textual: true };
  const streamedNote = `Streamed: scored as the file was read (${outcome.blocks} blocks on ${outcome.threads} threads), without keeping its rows in memory; ` +
    'the score diagnostics need the rows (raise gainline.reading.streamFromMegabytes above the file\'s size to read it into memory).';
  const overview = { ...overviewOf(file, evaluation, [...notes, streamedNote], performance.now() - started),
    segmentColumns: rows.segments.map((c) => c.name), ...(evaluation.weighting ? { weighting: evaluation.weighting.source } : {}) };
  return { session: { kind: 'streamed', dump, evaluation, table, rows }, overview };
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
  // The query's segment values come from the table (its first row's, the weight column aside, as in memory),
  // its text from the queries table joined to the stream.
  const joinedText = s.dump.joined?.queryText ? { joined: { notes: [], queryText: s.dump.joined.queryText } } : {};
  const view = detailScreen(withFields(rows, { segments: [], ...joinedText }), s.evaluation, detail, id, s.table);
  const shift = firstRows(s)[id]!;
  const at = (row: number) => (row < 0 ? row : row + shift);
  return {
    ...view,
    // A judged query the run lacks has no row, so no segment value (as in memory).
    segments: Object.fromEntries(s.rows.segments.filter((c) => id < c.ofRow.length).map((c) => [c.name, c.values.get(c.ofRow[id]!)])),
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
