/**
 * The engine's one entry for callers (the command line, the engine worker of the extension, tests):
 * read a dump, evaluate it, compare two runs. How many threads read or score is decided in here,
 * from the input's size and the cores other programs leave free; callers may only ask for a number.
 * Process-wide settings (where the thread scripts live, tuning) are set with configureEngine.
 *
 * An engine for data that lives elsewhere (a database table) offers the same three calls over its
 * own dump type; the result types are what every caller reads.
 */
import { compareRuns as compareScoredRuns, type CompareOptions, type Comparison } from './compare/compare';
import { CoreMeter } from './evaluate/coreMeter';
import { evaluateInParallel, type ParallelEvaluateOptions } from './threads/parallelEvaluate';
import type { Evaluation } from './evaluate/types';
import type { Conventions } from './metrics/conventions';
import type { MetricSpec } from './metrics/registry';
import type { RankedDump } from './model/dump';
import { readDump as readDumpFile, readJudgments, type ReadOptions } from './readers/index';
import type { JudgmentTable } from './readers/judgments';
import { chooseReading, type ReadingMode } from './stream/choose';
import { streamEvaluate, type StreamedDump, type StreamEvaluateOptions } from './stream/streamEvaluate';
// Lets the scoring sort with the WebAssembly kernel (evaluate/ranking.ts).
import './evaluate/keySortKernel';
import { streamJudgments } from './stream/streamJudgments';
import { readTextTable } from './tables/readTable';

export { configureEngine, DEFAULT_TUNING, type EngineConfiguration, type EngineSettings, type EngineTuning } from './config';
export type { ChunkWork } from './evaluate/chunkOutput';
export type { BaselineMemo, CompareOptions, Comparison } from './compare/compare';
export { combineCandidates } from './compare/candidates';
export type { Evaluation } from './evaluate/types';
export type { RankedDump, ReadOptions } from './readers/index';
export { READING_MODES, type ReadingMode } from './stream/choose';
export type { StreamedDump, StreamPartial } from './stream/streamEvaluate';
export { segmentRowsOf } from './stream/segmentRows';

/**
 * Cores other programs kept busy while each dump was read: the read takes a second or more on the
 * dumps that are scored on several threads, long enough to see what the machine is doing now.
 */
const busyDuringRead = new WeakMap<object, number>();
/** Keyed by the query column: a dump joined with side tables is a new object over the same columns. */
const readKey = (dump: RankedDump): object => dump.query;

export async function readDump(path: string, options: ReadOptions = {}): Promise<RankedDump> {
  const meter = new CoreMeter();
  const dump = await readDumpFile(path, options);
  busyDuringRead.set(readKey(dump), meter.otherBusyCores());
  return dump;
}

/** Scoring threads: `threads` when given, else chosen from the dump's rows and the free cores. */
export type EvaluateDumpOptions = Omit<ParallelEvaluateOptions, 'otherBusyCores'>;

export function evaluateDump(dump: RankedDump, metrics: readonly MetricSpec[], conventions: Conventions,
  options: EvaluateDumpOptions = {}): Promise<Evaluation> {
  const busy = busyDuringRead.get(readKey(dump));
  return evaluateInParallel(dump, metrics, conventions, { ...options, ...(busy !== undefined ? { otherBusyCores: busy } : {}) });
}

/**
 * A dump scored as it streamed in (no rows kept), or the dump read into memory for the caller to score
 * with evaluateDump as usual; `why` says why it was not streamed.
 */
export type StreamOrRead =
  | { readonly kind: 'streamed'; readonly dump: StreamedDump; readonly evaluation: Evaluation; readonly threads: number; readonly blocks: number }
  | { readonly kind: 'read'; readonly dump: RankedDump; readonly why: string; readonly tried: boolean };

export interface StreamOrReadOptions extends Pick<StreamEvaluateOptions, 'sensitivity' | 'onPartial' | 'onProgress' | 'signal' | 'blockBytes' | 'segments'> {
  readonly reading?: ReadingMode;
  /** With `auto`: stream from this file size (default stream/choose.ts STREAM_FROM_BYTES). */
  readonly streamFromBytes?: number;
  /** The judgments file `read.judgments` names, already read by the caller (it is not read again). */
  readonly judgmentTable?: JudgmentTable;
  /**
   * A queries table to join (text, segments, weights), read once the dump is known to stream; `found`:
   * found beside the dump rather than named, so left out when it names none of the dump's queries.
   */
  readonly queriesTable?: { readonly path: string; readonly found?: boolean };
}

/** A dump scored as it streamed in, or why it was not (`tried`: a stream began and gave way). */
export type StreamIfFit =
  | Extract<StreamOrRead, { kind: 'streamed' }>
  | { readonly kind: 'declined'; readonly why: string; readonly tried: boolean };

/**
 * Streams a dump grouped by query when the reading mode, its format and size allow (stream/choose.ts);
 * otherwise, or when the stream finds the file unfit (not grouped, quoted fields, data the conventions
 * cannot score), says why and leaves the file for the caller to read.
 */
export async function streamIfFit(path: string, read: ReadOptions, metrics: readonly MetricSpec[], conventions: Conventions,
  options: StreamOrReadOptions = {}): Promise<StreamIfFit> {
  const choice = await chooseReading(path, read, options.reading ?? 'auto', options.streamFromBytes);
  if (!choice.stream) return { kind: 'declined', why: choice.why, tried: false };
  // A named judgments file is read first, so its errors come before the stream's work, as the read's do.
  const { judgmentTable, queriesTable, ...streamOptions } = options;
  const judgments = read.judgments === undefined ? undefined
    : streamJudgments(judgmentTable ?? await readJudgments(read.judgments, read), read.missingQueries ?? 'skip');
  const queries = queriesTable && {
    table: await readTextTable(queriesTable.path, { ...(read.signal ? { signal: read.signal } : {}), purpose: 'a queries table' }),
    ...(queriesTable.found ? { found: true } : {}),
  };
  const outcome = await streamEvaluate(path, choice.format, metrics, conventions, {
    ...streamOptions, ...(read.columns ? { columns: read.columns } : {}), ...(read.threads !== undefined ? { threads: read.threads } : {}),
    ...(read.signal ? { signal: read.signal } : {}), ...(judgments ? { judgments } : {}), ...(queries ? { queriesTable: queries } : {}),
  });
  return outcome.kind === 'streamed' ? outcome : { kind: 'declined', why: outcome.reason, tried: true };
}

/**
 * streamIfFit, reading the dump in memory when it does not stream, which gives the same numbers, or the
 * same error.
 */
export async function streamOrRead(path: string, read: ReadOptions, metrics: readonly MetricSpec[], conventions: Conventions,
  options: StreamOrReadOptions = {}): Promise<StreamOrRead> {
  const outcome = await streamIfFit(path, read, metrics, conventions, options);
  if (outcome.kind === 'streamed') return outcome;
  return { kind: 'read', dump: await readDump(path, read), why: outcome.why, tried: outcome.tried };
}

/** Scores both runs (each as evaluateDump would) and pairs them query by query. */
export function compareRuns(a: RankedDump, b: RankedDump, metrics: readonly MetricSpec[], conventions: Conventions,
  options: Partial<CompareOptions> & { readonly threads?: number } = {}): Promise<Comparison> {
  const { threads, ...rest } = options;
  return compareScoredRuns(a, b, metrics, conventions, rest,
    (dump, runMetrics, shared, evaluateOptions) => evaluateDump(dump, runMetrics, shared, { ...evaluateOptions, ...(threads !== undefined ? { threads } : {}) }));
}
