/**
 * The engine worker thread: holds loaded dumps and their evaluation in memory, keyed by session, and
 * answers page/detail/segment requests from memory so the extension host never blocks.
 *
 * Cancellation: an aborted request aborts the read (asynchronous) and, through a shared flag checked on
 * every progress tick, the synchronous evaluation loop too — a cancel message alone could not be seen
 * while the thread is busy.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { CancelledError, InputError } from '../engine/errors';
import { queryMovement } from '../engine/compare/movement';
import { queryDetail, type GradeRange } from '../engine/evaluate/detail';
import { gradeRange } from '../engine/evaluate/evaluate';
import { compareRuns, configureEngine, evaluateDump } from '../engine/index';
import { headlineCutoff } from '../engine/evaluate/scorer';
import type { Evaluation } from '../engine/evaluate/types';
import { parseMetricList } from '../engine/metrics/parse';
import type { RankedDump } from '../engine/model/dump';
import { groupByQuery, type QueryGroups } from '../engine/model/groups';
import { readSource } from './readSource';
import type { Comparison } from '../engine/compare/compare';
import { RequestServer, type HandlerContext, type RequestHandlers } from '../channel/request';
import type { DumpSource, LoadParams, ProgressEvent, WorkerRequests } from '../protocol/worker';
import { CompareTable, compareOverviewModel } from './compareTable';
import { QueryTable } from './queryTable';
import { overviewDiagnostics } from './diagnosticsView';
import type { ScoreDiagnosticsView, SensitivityView } from '../protocol/messages';
import type { Conventions } from '../engine/metrics/conventions';
import { sensitivityLater } from './sensitivityLater';
import { metricLabel, movementView, overviewModel, segmentTable } from './viewModels';
import { detailScreen, queryJsonText } from './queryViews';
import { isCancelled } from './cancelFlags';
import { warmUp } from './warmUp';
import { WarmUpControl } from './warmUpControl';
import { SeriesStore } from './seriesStore';
import { isSqlSource, loadSql, sqlQueryDetail, sqlQueryJson, type SqlLoaded } from './sqlSession';
import { joinedNote, loadStreamOrRead, mayStream, needsRows, streamedDetail, streamedQueryJson, streamedRowLocation, type StreamedLoaded } from './streamSession';

interface Loaded {
  readonly dump: RankedDump;
  readonly evaluation: Evaluation;
  readonly groups: QueryGroups;
  /** Scanned once here so that each detail request need not scan every grade again. */
  readonly gradeRange: GradeRange;
  readonly table: QueryTable;
  /** Computed when the overview first asks for it (after its headline is on screen), then kept. */
  diagnostics?: ScoreDiagnosticsView;
  /** The load scores without the sensitivity rows: the conventions to score them under when asked. */
  readonly sensitivityConventions?: Conventions;
  /** The rows once asked for (after the headline is on screen), then kept. */
  sensitivity?: Promise<SensitivityView[]>;
}
type Session =
  | ({ readonly kind: 'single' } & Loaded)
  | { readonly kind: 'compare'; readonly a: Loaded; readonly b: Loaded; readonly comparison: Comparison; readonly table: CompareTable }
  | { readonly kind: 'series'; readonly store: SeriesStore }
  | SqlLoaded
  | StreamedLoaded;

const sessions = new Map<string, Session>();
/** Above this, a view's old data is dropped before reading again rather than kept to answer meanwhile. */
const KEEP_WHILE_RELOADING_ROWS = 2_000_000;

function rowsHeld(s: Session | undefined): number {
  if (!s) return 0;
  if (s.kind === 'series') return 0; // per-query columns only; kept so a grown series reads only its new files
  return s.kind === 'single' ? s.dump.rowCount : s.kind === 'sql' || s.kind === 'streamed' ? 0 : s.a.dump.rowCount + s.b.dump.rowCount;
}

/** Forgets a session; an SQL one closes its connection (DuckDB's instance and its spill folder). */
function drop(key: string): boolean {
  const s = sessions.get(key);
  if (s?.kind === 'sql') void s.connection.close();
  return sessions.delete(key);
}

/** Keeps a session, closing the one it replaces. */
function keep(key: string, s: Session): void {
  const old = sessions.get(key);
  if (old !== s && old?.kind === 'sql') void old.connection.close();
  sessions.set(key, s);
}

/** Small views keep answering pages from their previous data while they are read again. */
function prepareReload(key: string): void {
  if (rowsHeld(sessions.get(key)) > KEEP_WHILE_RELOADING_ROWS) drop(key);
}
/** When this thread had loaded its code and could take requests (epoch ms), for the first screen's timeline. */
const readyAt = Date.now();
/** The warm-up read (warmUp.ts), when this thread runs one: stopped by each real read, run again after (warmUpControl.ts). */
const warmUps = workerData?.warmUp === true ? new WarmUpControl((signal) => warmUp(undefined, signal)) : undefined;

/** Runs a real read with the warm-up stopped, and lets it run again once the thread is quiet. */
async function whileReading<T>(work: () => Promise<T>): Promise<T> {
  warmUps?.readStarted();
  try {
    return await work();
  } finally {
    warmUps?.readDone();
  }
}

function threadTimes(): { threadReady: number; warmed?: number } {
  const warmedAt = warmUps?.warmedAt;
  return { threadReady: readyAt, ...(warmedAt !== undefined ? { warmed: warmedAt } : {}) };
}
const flags: Int32Array | undefined = workerData?.cancelFlags instanceof SharedArrayBuffer ? new Int32Array(workerData.cancelFlags) : undefined;

/** Progress at most every 100 ms, and a CancelledError as soon as the request is cancelled. */
function progressReporter(ctx: HandlerContext, from: number, to: number, message: string): (fraction: number) => void {
  let last = 0;
  return (fraction) => {
    if (ctx.signal.aborted || isCancelled(flags, ctx.id)) throw new CancelledError();
    const now = Date.now();
    if (now - last < 100 && fraction < 1) return;
    last = now;
    const event: ProgressEvent = { kind: 'progress', id: ctx.id, fraction: from + (to - from) * fraction, message };
    parentPort?.postMessage(event);
  };
}

async function read(source: DumpSource, ctx: HandlerContext, from: number, to: number, label = 'Reading'): Promise<RankedDump> {
  // Threads are the engine's choice, as for the command line's eval: parse threads (started from this
  // thread, found in the bundle folder) for large files, score threads for large dumps when cores are free.
  return readSource(source, {
    signal: ctx.signal,
    onProgress: progressReporter(ctx, from, to, `${label} ${source.path.split(/[\\/]/).pop()}…`),
  });
}

function loaded(dump: RankedDump, evaluation: Evaluation, groups: QueryGroups): Loaded {
  return { dump, evaluation, groups, gradeRange: gradeRange(dump), table: new QueryTable({ dump, evaluation, groups }) };
}

function session(key: string): Session {
  const s = sessions.get(key);
  if (!s) throw new Error(`nothing is loaded for this view (session ${key}); reopen the file`);
  return s;
}

function single(key: string): Extract<Session, { kind: 'single' }> {
  const s = session(key);
  if (s.kind === 'sql') throw new Error('this view is computed by an SQL engine and holds no rows; open the file without an engine for this');
  if (s.kind === 'streamed') throw needsRows('The score diagnostics');
  if (s.kind !== 'single') throw new Error('this request needs a single dump, not a comparison');
  return s;
}

function compared(key: string): Extract<Session, { kind: 'compare' }> {
  const s = session(key);
  if (s.kind !== 'compare') throw new Error('this request needs a comparison of two runs');
  return s;
}

/** The loaded run a per-query request refers to: the dump, or run A/B of a comparison. */
function runOf(key: string, run: 'a' | 'b' | undefined): Loaded {
  const s = session(key);
  if (s.kind === 'single') return s;
  if (s.kind === 'series') throw new Error('this request needs a dump or a comparison, not a series');
  if (s.kind === 'sql') throw new Error('this view is computed by an SQL engine and holds no rows or lines; open the file without an engine for this');
  if (s.kind === 'streamed') throw needsRows('Views of rows');
  return run === 'b' ? s.b : s.a;
}

function queryIdOf(l: Loaded, query: string): number {
  const id = l.dump.queries.find(query);
  if (id < 0) throw new InputError(`a query id present in ${l.dump.path}`, undefined, undefined, query);
  return id;
}

function detailOf(l: Loaded, query: string, maxPairs?: number) {
  const id = queryIdOf(l, query);
  const k = headlineCutoff(l.evaluation.metrics);
  const detail = queryDetail(l.dump, id, l.evaluation.conventions, Number.isFinite(k) ? k : l.evaluation.perQuery.items[id]!, {
    groups: l.groups,
    gradeRange: l.gradeRange,
    maxPairs: maxPairs ?? 200,
    metrics: l.evaluation.metrics,
  });
  return { id, detail };
}

/**
 * A view's first screen: only what the overview shows. The score diagnostics, a second pass over every
 * query, come with their own request once the headline is on screen.
 */
async function loadView({ session: key, source, settings, streamFromBytes }: LoadParams, ctx: HandlerContext): Promise<WorkerRequests['load']['result']> {
  const received = Date.now();
  const started = performance.now();
  prepareReload(key);
  if (isSqlSource(source)) {
    progressReporter(ctx, 0, 1, `Computing ${source.path.split(/[\\/]/).pop()} in ${source.sqlEngine === 'clickhouse' ? 'ClickHouse' : 'DuckDB'}…`)(0);
    const { session: loadedSql, overview } = await loadSql(source, settings, started);
    keep(key, loadedSql);
    const done = Date.now();
    return { ...overview, timeline: { ...threadTimes(), received, read: done, scored: done } };
  }
  // A large plain CSV/TSV dump is scored as it streams in, its overview so far sent with the progress.
  const streamed = streamFromBytes !== undefined && mayStream(source) ? await loadStreamOrRead(source, settings, {
    streamFromBytes, signal: ctx.signal, started, onProgress: progressReporter(ctx, 0, 1, `Streaming ${source.path.split(/[\\/]/).pop()}…`),
    onReadProgress: progressReporter(ctx, 0, 0.75, `Reading ${source.path.split(/[\\/]/).pop()}…`),
    onPartial: (partial) => parentPort?.postMessage({ kind: 'progress', id: ctx.id, fraction: partial.bytesRead / Math.max(1, partial.totalBytes), message: 'Streaming…', partial } satisfies ProgressEvent),
  }) : undefined;
  if (streamed?.kind === 'streamed') {
    keep(key, streamed.session);
    const done = Date.now();
    return { ...streamed.overview, timeline: { ...threadTimes(), received, read: done, scored: done } };
  }
  const dump = streamed?.kind === 'read' ? streamed.dump : await read(source, ctx, 0, 0.75);
  if (streamed?.note) dump.notes.messages.push(streamed.note);
  else if (streamFromBytes !== undefined && streamed === undefined && dump.stamp.size >= streamFromBytes) dump.notes.messages.push(joinedNote(source));
  const readDone = Date.now();
  const groups = groupByQuery(dump);
  const metrics = parseMetricList(settings.metrics);
  // Without the sensitivity rows: the headline goes first, the rows follow on their own request.
  const evaluation = await evaluateDump(dump, metrics, settings.conventions,
    { groups, signal: ctx.signal, onProgress: progressReporter(ctx, 0.75, 1, 'Scoring queries…'), sensitivity: false });
  const entry = loaded(dump, evaluation, groups);
  keep(key, { kind: 'single', ...entry, sensitivityConventions: settings.conventions });
  const overview = {
    ...overviewModel(dump, evaluation, performance.now() - started),
    sensitivityLater: true,
    ...(evaluation.weighting ? { weighting: evaluation.weighting.source } : {}),
    ...(dump.joined?.queryText ? { queryText: true } : {}),
  };
  return { ...overview, timeline: { ...threadTimes(), received, read: readDone, scored: Date.now() } };
}

const handlers: RequestHandlers<WorkerRequests> = {
  load(params, ctx) {
    return whileReading(() => loadView(params, ctx));
  },

  overviewDiagnostics({ session: key }) {
    const s = single(key);
    const started = Date.now();
    s.diagnostics ??= overviewDiagnostics(s.dump, s.evaluation, s.groups);
    return { ...s.diagnostics, times: { started, done: Date.now() } };
  },

  async overviewSensitivity({ session: key }) {
    const s = single(key);
    const started = Date.now();
    s.sensitivity ??= sensitivityLater(s.dump, s.groups, s.evaluation, s.sensitivityConventions ?? s.evaluation.conventions);
    // A failure is not kept: asking again computes again.
    s.sensitivity.catch(() => (s.sensitivity = undefined));
    return { rows: await s.sensitivity, times: { started, done: Date.now() } };
  },

  loadCompare: ({ session: key, a: sourceA, b: sourceB, settings }, ctx) => whileReading(async () => {
    const started = performance.now();
    prepareReload(key);
    const a = await read(sourceA, ctx, 0, 0.3, 'Reading run A,');
    const b = await read(sourceB, ctx, 0.3, 0.6, 'Reading run B,');
    const metrics = parseMetricList(settings.metrics);
    const comparison = await compareRuns(a, b, metrics, settings.conventions, {
      permutations: settings.permutations,
      bootstrap: settings.bootstrapResamples,
      seed: settings.seed,
      tieTolerance: settings.tieTolerance,
      signal: ctx.signal,
      onProgress: progressReporter(ctx, 0.6, 1, 'Comparing runs…'),
    });
    keep(key, {
      kind: 'compare',
      a: loaded(a, comparison.evaluationA, groupByQuery(a)),
      b: loaded(b, comparison.evaluationB, groupByQuery(b)),
      comparison,
      table: new CompareTable(comparison, a),
    });
    return compareOverviewModel(comparison, a, b, performance.now() - started);
  }),

  headline: ({ source, settings }, ctx) => whileReading(async () => {
    if (isSqlSource(source)) throw new Error('a headline for the tree is read from files, not computed by an SQL engine');
    const dump = await read(source, ctx, 0, 0.8);
    const metrics = parseMetricList(settings.metrics);
    const evaluation = await evaluateDump(dump, metrics, settings.conventions, { signal: ctx.signal, sensitivity: false });
    const h = evaluation.headline;
    const mean = evaluation.summary[h]?.mean ?? NaN;
    return { key: metrics[h]!.key, label: metricLabel(metrics[h]!), mean: Number.isFinite(mean) ? mean : null, queryCount: evaluation.queryCount, rowCount: dump.rowCount };
  }),

  threadTimes() {
    return threadTimes();
  },

  unload({ session: key }) {
    return { unloaded: drop(key) };
  },

  queryPage({ session: key, ...params }) {
    const s = session(key);
    return (s.kind === 'sql' || s.kind === 'streamed' ? s : single(key)).table.page(params);
  },

  async queryDetail({ session: key, query, maxPairs, run }) {
    const s = session(key);
    if (s.kind === 'sql') return sqlQueryDetail(s, query, maxPairs);
    if (s.kind === 'streamed') return streamedDetail(s, query, maxPairs);
    const l = runOf(key, run);
    const { id, detail } = detailOf(l, query, maxPairs);
    return detailScreen(l.dump, l.evaluation, detail, id, l.table);
  },

  async queryJson({ session: key, query, run }) {
    const s = session(key);
    if (s.kind === 'sql') return { json: await sqlQueryJson(s, query) };
    if (s.kind === 'streamed') return { json: await streamedQueryJson(s, query) };
    const l = runOf(key, run);
    const { id, detail } = detailOf(l, query, 0);
    return { json: queryJsonText(query, l.dump.path, l.evaluation, id, detail, (row) => l.dump.line[row] || null) };
  },

  async rowLocation({ session: key, row, run }) {
    const s = session(key);
    if (s.kind === 'streamed') return streamedRowLocation(s, row);
    const { dump } = runOf(key, run);
    if (!Number.isInteger(row) || row < 0 || row >= dump.rowCount) throw new Error(`row ${row} is outside 0..${dump.rowCount - 1}`);
    return { line: dump.line[row]!, offset: dump.offset[row]!, path: dump.path };
  },

  segments({ session: key, column }) {
    const held = session(key);
    if (held.kind === 'streamed') return segmentTable(held.rows, held.evaluation, held.table, column);
    const s = single(key);
    return segmentTable(s.dump, s.evaluation, s.table, column);
  },

  comparePage({ session: key, ...params }) {
    return compared(key).table.page(params);
  },

  queryMovement({ session: key, query }) {
    const s = compared(key);
    const i = s.table.pairOf(query);
    if (i < 0) throw new InputError('a query present in both runs', undefined, undefined, query);
    const k = headlineCutoff(s.comparison.metrics);
    const qa = s.comparison.perQuery.queryA[i]!;
    const qb = s.comparison.perQuery.queryB[i]!;
    const depth = Number.isFinite(k) ? k : Math.max(s.a.evaluation.perQuery.items[qa]!, s.b.evaluation.perQuery.items[qb]!);
    const known = { a: { groups: s.a.groups, gradeRange: s.a.gradeRange }, b: { groups: s.b.groups, gradeRange: s.b.gradeRange } };
    return movementView(queryMovement(s.a.dump, s.b.dump, qa, qb, s.comparison.conventions, depth, known));
  },

  compareSegments({ session: key, column, metric }) {
    return compared(key).table.segments(column, metric);
  },

  async loadSeries(params, ctx) {
    const held = sessions.get(params.session);
    const store = held?.kind === 'series' ? held.store : new SeriesStore();
    sessions.set(params.session, { kind: 'series', store });
    return store.load(params, ctx.signal);
  },

  seriesTrajectory({ session: key, query }) {
    return seriesOf(key).trajectory(query);
  },

  seriesQueries({ session: key, filter, limit }) {
    return seriesOf(key).queries(filter, limit);
  },
};

function seriesOf(key: string): SeriesStore {
  const s = session(key);
  if (s.kind !== 'series') throw new Error('this request needs a training series');
  return s.store;
}

if (parentPort) {
  // This thread reads dump after dump for as long as the editor runs: its parse and score threads are
  // kept, and warmed up below, so mid-sized dumps are read and scored on several threads too.
  configureEngine({ keepThreads: true });
  const port = parentPort;
  const server = new RequestServer<WorkerRequests>(handlers, (message) => port.postMessage(message));
  port.on('message', (message: unknown) => {
    server.handleMessage(message);
  });
  // A failed warm-up costs only the speed it was for; the first real read reports its own errors.
  warmUps?.start();
}
