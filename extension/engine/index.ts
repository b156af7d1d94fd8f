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
import { readDump as readDumpFile, type ReadOptions } from './readers/index';

export { configureEngine, DEFAULT_TUNING, type EngineConfiguration, type EngineSettings, type EngineTuning } from './config';
export type { ChunkOutput } from './evaluate/chunkOutput';
export type { BaselineMemo, CompareOptions, Comparison } from './compare/compare';
export { combineCandidates } from './compare/candidates';
export type { Evaluation } from './evaluate/types';
export type { RankedDump, ReadOptions } from './readers/index';

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

/** Scores both runs (each as evaluateDump would) and pairs them query by query. */
export function compareRuns(a: RankedDump, b: RankedDump, metrics: readonly MetricSpec[], conventions: Conventions,
  options: Partial<CompareOptions> & { readonly threads?: number } = {}): Promise<Comparison> {
  const { threads, ...rest } = options;
  return compareScoredRuns(a, b, metrics, conventions, rest,
    (dump, runMetrics, shared, evaluateOptions) => evaluateDump(dump, runMetrics, shared, { ...evaluateOptions, ...(threads !== undefined ? { threads } : {}) }));
}
