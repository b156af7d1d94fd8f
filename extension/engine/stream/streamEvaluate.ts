/**
 * Evaluates a CSV/TSV dump whose rows are grouped by query without holding its rows: the
 * file is cut at newlines into blocks, worker threads read and score each block (block.ts), and this
 * thread takes the results in file order, adds each query to the per-query table (streamColumns.ts)
 * and stitches the queries cut by a block boundary, which it reads again whole and scores at the end.
 * Memory holds the per-query table and the blocks in flight, whatever the file's size.
 *
 * The result is bit-identical to the in-memory path (readDump then evaluateDump) on the same file:
 * the same scorer scores each query from the same rows, query ids are given in first-seen order, and
 * every mean is taken over the per-query columns in query order, as the in-memory path takes them.
 * What the in-memory path learns before scoring, the stream learns at the end and then settles:
 * - ERR's highest grade (without --max-grade): blocks score with the highest grade seen so far, and
 *   blocks whose guess turns out low are read and scored again;
 * - the gain checks: scored with every gain, checked once the grade range and the largest query are
 *   known; an alternative gain that cannot score the data leaves the sensitivity rows as in memory.
 *
 * It gives up, and the caller reads the file in memory instead (the outcome says why), when:
 * - a query's rows stop and its id appears again later (the file is not grouped by query): merging
 *   or splitting it would change its metrics, so no streamed result is returned;
 * - a block ends inside a quoted field (a cut fell on a quoted newline: the next block began inside the
 *   field), or the header line holds a quote;
 * - the conventions cannot score the data (the in-memory path names the row at fault);
 * - there is no data row.
 */
import { availableParallelism } from 'node:os';
import { CancelledError, InputError } from '../errors';
import { emptyTally, finishEvaluation, newSensitivityPass, addTally, type RangeTally } from '../evaluate/evaluate';
import { checkGainsAndGrades } from '../evaluate/gainLimits';
import type { SensitivityColumns } from '../evaluate/sensitivity';
import type { Evaluation, MetricSummary } from '../evaluate/types';
import type { Conventions } from '../metrics/conventions';
import { anyNeeds, type MetricSpec } from '../metrics/registry';
import { emptyNotes, type FileStamp, type RankedDump, type ReaderNotes } from '../model/dump';
import { addSummaries, gradeRangeOf, type RowSummary } from '../model/rowSummary';
import type { StringPool } from '../model/stringPool';
import type { ColumnRoles } from '../readers/roles';
import { changedSince, checkUnchanged, fileChangedError, statStamp, throwIfCancelled } from '../readers/source';
import type { BlockResult, BlockTask } from './block';
import { startBlockRunner, type BlockRunner } from './blockRunner';
import { isWeightName } from '../tables/sideRoles';
import { blockBounds, readHeaderLine } from './fileBlocks';
import { PartialMeans } from './partialMeans';
import { newSensitivityPassWith, scoredBlockSetup } from './setup';
import { QueryReappeared, StreamColumns, type QueryLocations } from './streamColumns';
import { labelOptional } from './sharedJudgments';
import { joinStreamedQueries, partialWeights, type StreamQueriesTable } from './streamTables';
import { absentQueries, JoinTotals, joinedNotes, scoreAbsentQueries, type StreamJudgments } from './streamJudgments';

/** The most queries the per-query table makes room for ahead (about 0.8 GB of columns); past it the table grows by doubling. */
const RESERVED_QUERIES = 1 << 22;

/** Bytes per block: large enough that a block's fixed costs vanish, small enough that two in flight stay small. */
export const DEFAULT_BLOCK_BYTES = 32 << 20;

export interface StreamEvaluateOptions {
  readonly columns?: ColumnRoles;
  /** Compute the convention sensitivity rows (default true). */
  readonly sensitivity?: boolean;
  /** Threads that read and score blocks; default: every core, at most 4 (this thread only merges). */
  readonly threads?: number;
  readonly blockBytes?: number;
  /** Keep each query's segment values (its first row's), for segment means (`StreamedDump.querySegments`). */
  readonly segments?: boolean;
  readonly signal?: AbortSignal;
  readonly onProgress?: (fraction: number) => void;
  /** Called after each block is taken in, with the headline of the queries scored so far. */
  readonly onPartial?: (partial: StreamPartial) => void;
  /** Labels from a judgments table, joined block by block as the in-memory read joins them (sharedJudgments.ts). */
  readonly judgments?: StreamJudgments;
  /** A queries table, joined once every query is known, before the means (streamTables.ts). */
  readonly queriesTable?: StreamQueriesTable;
}

/** The queries scored so far, while the rest of the file is still being read. */
export interface StreamPartial {
  readonly queries: number;
  readonly rows: number;
  readonly bytesRead: number;
  readonly totalBytes: number;
  /** Means over the queries scored so far (the queries cut by block boundaries come at the end). */
  readonly summary: readonly MetricSummary[];
}

/** A dump known by its queries only: what reports read of a dump, without row columns. */
export interface StreamedDump {
  readonly path: string;
  readonly format: 'csv' | 'tsv';
  readonly stamp: FileStamp;
  readonly rowCount: number;
  readonly queries: StringPool;
  readonly notes: ReaderNotes;
  readonly joined?: RankedDump['joined'];
  /** Where each query's rows are, to read one query again for its detail (queryDetail.ts). */
  readonly locations: QueryLocations;
  /** The header's column names, to read a query's rows again. */
  readonly names: readonly string[];
  /**
   * With the `segments` option: per segment column (the weight column aside, as the in-memory join leaves
   * it), each query's value, as `segments` of a dump holding one row per query, each query's first.
   */
  readonly querySegments?: readonly { readonly name: string; readonly values: StringPool; readonly ofQuery: Uint32Array }[];
  readonly columns?: ColumnRoles;
  /** The judgments the labels came from, to join a query read again for its detail. */
  readonly judgments?: StreamJudgments;
  /** Queries from here on are judged queries the run lacks (missing queries `zero`): no rows, no segment values. */
  readonly firstAbsentQuery?: number;
}

export type StreamOutcome =
  | { readonly kind: 'streamed'; readonly dump: StreamedDump; readonly evaluation: Evaluation; readonly threads: number; readonly blocks: number }
  | { readonly kind: 'fallback'; readonly reason: string };

interface OpenEdge {
  readonly id: number;
  readonly query: string;
  end: number;
  rows: number;
  readonly start: number;
}

export async function streamEvaluate(path: string, format: 'csv' | 'tsv', metrics: readonly MetricSpec[], conventions: Conventions,
  options: StreamEvaluateOptions = {}): Promise<StreamOutcome> {
  throwIfCancelled(options.signal);
  const stamp = await statStamp(path);
  try {
    return await streamOnce(path, format, stamp, metrics, conventions, options);
  } catch (err) {
    if (!(err instanceof CancelledError) && await changedSince(path, stamp)) throw fileChangedError(path);
    throw err;
  }
}

async function streamOnce(path: string, format: 'csv' | 'tsv', stamp: FileStamp, metrics: readonly MetricSpec[], conventions: Conventions,
  options: StreamEvaluateOptions): Promise<StreamOutcome> {
  const delimiter = format === 'csv' ? 44 : 9;
  const judging = options.judgments;
  const header = await readHeaderLine(path, delimiter, judging ? labelOptional(options.columns) : options.columns);
  if (header === undefined) return { kind: 'fallback', reason: 'the header line holds a quote' };
  const weightColumn = header.segmentNames.find(isWeightName);
  const bounds = await blockBounds(path, header.end, stamp.size, options.blockBytes ?? DEFAULT_BLOCK_BYTES);
  const sensitivity = options.sensitivity !== false;
  const blank = scoredBlockSetup(metrics, conventions, { rowsOfQuery: new Uint32Array(0), start: new Uint32Array(1) }, 0, 0, sensitivity);
  // The pass the blocks record with (every gain kept), to match its columns with the final pass's.
  const spec = sensitivity ? newSensitivityPassWith(blank, () => undefined) : undefined;
  // A queries table's segments replace the dump's own of the same name, so the dump's are kept to compare.
  const keepSegments = (options.segments === true || options.queriesTable !== undefined) && header.segmentNames.length > 0;
  const table = new StreamColumns(metrics.length, blank.hasRbp, spec?.variantCount, weightColumn !== undefined, keepSegments ? header.segmentNames.length : 0);
  const mapGain = conventions.gain.kind === 'map';
  const joinCounts = new JoinTotals();
  // The marks of a stream before (the same table streamed again) would count items this one never saw.
  judging?.shared.seenItems.fill(0);
  const base = { path, format, delimiter, names: header.names, segmentCount: header.segmentNames.length, ...(options.columns ? { columns: options.columns } : {}), metrics, conventions, sensitivity,
    distinctGrades: mapGain, weights: weightColumn !== undefined, segmentValues: keepSegments, ...(judging ? { judgments: judging.shared } : {}) };
  const threads = Math.max(1, Math.min(16, Math.floor(options.threads ?? Math.min(4, availableParallelism()))));
  const runner = startBlockRunner(threads, options.signal);
  const blocks = bounds.length - 1;
  try {
    const state = { highest: -Infinity, lineOffset: 1, rows: 0, tally: emptyTally(), largest: 0, gaps: [] as RowSummary[], grades: new Set<number>() };
    const scoredBlocks: { index: number; firstId: number; count: number; gmax: number }[] = [];
    const edges: OpenEdge[] = [];
    const tableWeights = partialWeights(options.queriesTable);
    const partialMeans = options.onPartial ? new PartialMeans(metrics.map((m) => m.key), weightColumn !== undefined || tableWeights !== undefined) : undefined;
    let weightSoFar: Float64Array<ArrayBufferLike> = new Float64Array(0);
    let open: OpenEdge | undefined;
    let sized = false;
    const closeOpen = () => {
      if (open) edges.push(open);
      open = undefined;
    };
    const taskFor = (k: number, extra: Partial<BlockTask> = {}): BlockTask =>
      ({ ...base, start: bounds[k]!, end: bounds[k + 1]!, whole: false, ...(state.highest > -Infinity ? { gmaxFloor: state.highest } : {}), ...extra });
    // Keep every lane busy plus one task queued, so a lane never waits on this thread.
    const inFlight: Promise<BlockResult>[] = [];
    let issued = 0;
    const issue = () => {
      while (issued < blocks && inFlight.length < runner.lanes + 1) {
        const p = runner.run(taskFor(issued++));
        p.catch(() => undefined);
        inFlight.push(p);
      }
    };
    issue();
    for (let k = 0; k < blocks; k++) {
      const result = await inFlight.shift()!;
      issue();
      throwIfCancelled(options.signal);
      if (result.kind === 'quoted') return { kind: 'fallback', reason: 'a quoted field holds a newline where the file was cut into blocks' };
      if (result.kind === 'ungrouped') return ungrouped(result.query, result.line + state.lineOffset);
      if (result.kind === 'weights') return weightsRefused(result.why);
      if (result.kind === 'error') throw new InputError(result.expected, result.file, result.line === undefined ? undefined : result.line + state.lineOffset, result.found);
      if (result.kind === 'empty') {
        state.lineOffset += result.lines;
        continue;
      }
      try {
        const f = result.first;
        if (open !== undefined && open.query === f.query) {
          open.end = f.end;
          open.rows += f.rows;
        } else {
          closeOpen();
          open = { id: table.add(f.query, f.line + state.lineOffset), query: f.query, start: f.start, end: f.end, rows: f.rows };
        }
        if (result.runs >= 2) {
          closeOpen();
          const firstId = table.size;
          scoredBlocks.push({ index: k, firstId, count: result.scored.names.ends.length, gmax: result.gmax });
          table.addScored(result.scored, state.lineOffset);
          const now = table.current();
          if (partialMeans && tableWeights) {
            if (weightSoFar.length < table.size) weightSoFar = grownTo(weightSoFar, table.size * 2);
            for (let q = firstId; q < table.size; q++) weightSoFar[q] = tableWeights.get(table.queries.get(q)) ?? NaN;
          }
          partialMeans?.add(now.values, tableWeights ? weightSoFar : now.weight, firstId, table.size);
          const l = result.last;
          open = { id: table.add(l.query, l.line + state.lineOffset), query: l.query, start: l.start, end: l.end, rows: l.rows };
        }
      } catch (err) {
        if (err instanceof QueryReappeared) return ungrouped(err.query, err.line);
        throw err;
      }
      // After the first block with queries, room for as many queries as the whole file holds at its density (a tenth more).
      if (!sized && table.size > 0) {
        // At most RESERVED_QUERIES: a dense first block would otherwise reserve for queries that never come.
        table.reserve(Math.min(RESERVED_QUERIES, (table.size / (bounds[k + 1]! - bounds[0]!)) * (stamp.size - bounds[0]!) * 1.1));
        sized = true;
      }
      state.lineOffset += result.lines;
      state.rows += result.rowCount;
      state.highest = Math.max(state.highest, result.gaps.highest, result.gaps.unjudged > 0 ? 0 : -Infinity);
      state.gaps.push(result.gaps);
      state.largest = Math.max(state.largest, result.largestQuery);
      for (const g of result.grades ?? []) state.grades.add(g);
      addTally(state.tally, result.tally);
      joinCounts.add(result.judged);
      options.onProgress?.((bounds[k + 1]! - bounds[0]!) / Math.max(1, stamp.size - bounds[0]!));
      if (options.onPartial && partialMeans) {
        options.onPartial({ queries: table.size, rows: state.rows, bytesRead: bounds[k + 1]!, totalBytes: stamp.size, summary: partialMeans.summary() });
      }
    }
    closeOpen();
    if (state.rows === 0) return { kind: 'fallback', reason: 'the file has no data row' };
    const absent = judging ? absentQueries(judging, table.queries, path) : undefined;
    // Under missing queries `zero` the judged queries without rows join the dump, and their grades its range.
    const zeroAbsent = absent && judging!.missingQueries === 'zero' && absent.names.length > 0 ? absent : undefined;
    if (zeroAbsent) {
      state.gaps.push(zeroAbsent.range);
      for (const g of zeroAbsent.side.grade) state.grades.add(g);
    }
    const summary = addSummaries(state.gaps);
    const range = gradeRangeOf(summary);
    for (const e of edges) state.largest = Math.max(state.largest, e.rows);
    const problem = conventionProblem(metrics, conventions, range, state.largest, mapGain ? [...state.grades] : [range.lowest, range.highest]);
    if (problem !== undefined) return { kind: 'fallback', reason: `the conventions cannot score this data (${problem})` };
    const gmax = conventions.maxGrade ?? range.highest;
    const refused = await settleQueries(runner, table, edges, scoredBlocks, taskFor, gmax, anyNeeds(metrics, 'maxGrade'), state.tally);
    if (refused !== undefined) return weightsRefused(refused);
    const runQueries = table.size;
    if (zeroAbsent) {
      const absentScored = scoreAbsentQueries(zeroAbsent, metrics, conventions, gmax, sensitivity);
      table.addScored(absentScored.scored, 0);
      addTally(state.tally, absentScored.tally);
    }
    await checkUnchanged(path, stamp);
    const notes = header.notes;
    notes.unjudgedRows = summary.unjudged;
    notes.missingScoreRows = summary.missing;
    notes.gradeRange = range;
    const view = table.finish();
    if (judging && absent) joinedNotes(notes, judging, joinCounts, absent, view.perQuery, runQueries);
    // As the in-memory joins give them (tables/join.ts): the weight of each query from its rows, then the queries table.
    const ownSegments = keepSegments ? header.segmentNames.map((name, k) => ({ name, values: table.segment(k).pool, ofQuery: table.segment(k).ofQuery }))
      .filter((s) => s.name !== weightColumn) : [];
    const ownWeight = view.weight && weightColumn !== undefined ? { weight: view.weight.fill(NaN, runQueries), source: `column '${weightColumn}' of ${path}` } : undefined;
    const { joined, querySegments } = joinStreamedQueries({ queries: table.queries, runQueries, ownSegments, ...(ownWeight ? { ownWeight } : {}) },
      options.queriesTable);
    const dump: StreamedDump = { path, format, stamp, rowCount: state.rows, queries: table.queries, notes, locations: view.locations,
      names: header.names, ...(options.columns ? { columns: options.columns } : {}), ...(joined ? { joined } : {}), ...(keepSegments || querySegments.length > 0 ? { querySegments } : {}),
      ...(judging ? { judgments: judging } : {}), ...(zeroAbsent ? { firstAbsentQuery: runQueries } : {}) };
    const setup = scoredBlockSetup(metrics, conventions, { rowsOfQuery: new Uint32Array(0), start: new Uint32Array(table.size + 1) }, table.size, gmax,
      sensitivity, range, state.largest);
    const pass = sensitivity ? newSensitivityPass(setup) : undefined;
    let recorded: SensitivityColumns | undefined;
    if (pass && spec && view.sensitivity) {
      // The blocks kept every gain; keep the columns of the variants the in-memory path would have.
      const specKeys = spec.variantKeys();
      const picked = pass.variantKeys().map((key) => specKeys.indexOf(key));
      recorded = { value: picked.map((i) => view.sensitivity!.value[i]!) };
      pass.sumColumns(recorded, state.tally.sensitivityNoRelevant);
    }
    options.onProgress?.(1);
    const evaluation = finishEvaluation(setup, { notes, queries: table.queries, ...(joined ? { joined } : {}) }, view.perQuery, state.tally, pass, recorded);
    return { kind: 'streamed', dump, evaluation, threads: runner.lanes, blocks };
  } finally {
    runner.stop();
  }
}

/** The join's message counts lines from the block's start, so the reason leaves the row to the in-memory path. */
function weightsRefused(why: string): StreamOutcome {
  const what = why.startsWith('one ') ? 'the rows of a query disagree on its weight' : 'a weight is not a number of 0 or more';
  return { kind: 'fallback', reason: `${what} (reading in memory names the row)` };
}

function ungrouped(query: string, line: number): StreamOutcome {
  return { kind: 'fallback', reason: `the rows are not grouped by query: query '${query}' appears again at line ${line} after its rows ended` };
}

/**
 * Scores the queries cut by block boundaries, read again whole, and scores again the blocks whose guess
 * of ERR's highest grade was not the final one (their counts were taken the first time).
 */
async function settleQueries(runner: BlockRunner, table: StreamColumns, edges: readonly OpenEdge[],
  scoredBlocks: readonly { index: number; firstId: number; count: number; gmax: number }[],
  taskFor: (k: number, extra: Partial<BlockTask>) => BlockTask, gmax: number, needsGmax: boolean, tally: RangeTally): Promise<string | undefined> {
  const jobs: Promise<void>[] = [];
  let refused: string | undefined;
  for (const edge of edges) {
    table.place(edge.id, edge.start, edge.end, edge.rows);
    const task = { ...taskFor(0, {}), start: edge.start, end: edge.end, whole: true, gmax, distinctGrades: false };
    jobs.push(runner.run(task).then((result) => {
      if (result.kind === 'weights') {
        refused ??= result.why;
        return;
      }
      if (result.kind !== 'rows' || result.runs !== 1) throw new Error(`query '${edge.query}' read again gave ${result.kind === 'rows' ? `${result.runs} runs` : result.kind}`);
      table.put(result.scored, 0, 1, edge.id, undefined);
      addTally(tally, result.tally);
    }));
  }
  for (const b of scoredBlocks) {
    if (!needsGmax || b.gmax === gmax || b.count === 0) continue;
    jobs.push(runner.run(taskFor(b.index, { gmax })).then((result) => {
      if (result.kind !== 'rows' || result.scored.names.ends.length !== b.count) throw new Error('a block read again gave other queries');
      table.put(result.scored, 0, b.count, b.firstId, undefined);
    }));
  }
  for (const job of jobs) job.catch(() => undefined);
  await Promise.all(jobs);
  return refused;
}

/**
 * Why the conventions cannot score grades `grades` (each grade present, or the two extremes when only
 * they matter) in queries of up to `largestQuery` rows; undefined when they can. The same check as the
 * in-memory path's, on one row per grade.
 */
function conventionProblem(metrics: readonly MetricSpec[], conventions: Conventions, range: { lowest: number; highest: number },
  largestQuery: number, grades: readonly number[]): string | undefined {
  const n = grades.length;
  const label = Float64Array.from(grades);
  const probe = {
    path: '', format: 'csv', stamp: { size: 0, mtimeMs: 0 }, rowCount: n, query: new Uint32Array(n), item: new Uint32Array(n), label,
    score: new Float64Array(n), line: new Uint32Array(n), offset: new Float64Array(n), queries: { size: 0, get: () => '', find: () => -1 },
    items: { size: 0, get: () => '', find: () => -1 }, segments: [], notes: emptyNotes(),
  } satisfies RankedDump;
  try {
    checkGainsAndGrades(probe, metrics, conventions, range, largestQuery);
    return undefined;
  } catch (err) {
    if (err instanceof InputError) return err.expected;
    throw err;
  }
}

function grownTo(old: Float64Array<ArrayBufferLike>, length: number): Float64Array<ArrayBufferLike> {
  const grown = new Float64Array(length).fill(NaN);
  grown.set(old);
  return grown;
}
