/**
 * What a judgments join needs of the whole streamed file, settled once every block is in: the blocks
 * joined their own rows (sharedJudgments.ts); here the judged queries with no row are found (counted, and
 * under missing queries `zero` added after the run's queries as queries without rows, scored 0 as the
 * in-memory path scores them), the judged items no row names are counted, and the dump's notes are
 * written as the in-memory join writes them (readers/judgments.ts `joinJudgments`).
 */
import { allocatePerQuery, emptyTally, RangeScorer, sensitivityColumns, type RangeTally } from '../evaluate/evaluate';
import type { PerQueryColumns } from '../evaluate/types';
import type { Conventions } from '../metrics/conventions';
import type { MetricSpec } from '../metrics/registry';
import type { JudgmentsJoin, MissingQueriesPolicy, RankedDump, ReaderNotes, UnretrievedJudged } from '../model/dump';
import type { RowSummary } from '../model/rowSummary';
import type { StringPool } from '../model/stringPool';
import { describeJoin, joinJudgments, noSharedQueryError, sharesQuery, type JudgmentTable } from '../readers/judgments';
import { BytePool } from '../model/bytePool';
import type { ScoredRuns } from './block';
import { packTexts } from '../model/packedNames';
import { shareJudgments, type SharedJudgments } from './sharedJudgments';
import { JOIN_EXAMPLES, type JoinCounts } from '../readers/judgmentMatch';
import { newSensitivityPassWith, scoredBlockSetup } from './setup';

/** Labels for a streamed dump from a judgments table (read before the stream, so its errors come first). */
export interface StreamJudgments {
  /** The table as the threads share it (`table` reads the same memory). */
  readonly shared: SharedJudgments;
  readonly table: JudgmentTable;
  readonly missingQueries: MissingQueriesPolicy;
}

/**
 * A judgments table made ready to stream with: copied into shared memory, and read from there on this
 * thread too, so the table as read can be dropped (one copy of a large table, not two).
 */
export function streamJudgments(read: JudgmentTable, missingQueries: MissingQueriesPolicy): StreamJudgments {
  const shared = shareJudgments(read);
  const table: JudgmentTable = {
    path: shared.path, queries: BytePool.fromState(shared.queries), items: BytePool.fromState(shared.items),
    query: shared.query, item: shared.item, grade: shared.grade, line: shared.line,
  };
  return { shared, table, missingQueries };
}

/** The blocks' row-level join counts, added in file order. */
export class JoinTotals {
  inlineRows = 0;
  disagreements = 0;
  readonly examples: string[] = [];

  add(block: JoinCounts | undefined): void {
    if (block === undefined) return;
    this.inlineRows += block.inlineRows;
    this.disagreements += block.disagreements;
    for (const e of block.examples) if (this.examples.length < JOIN_EXAMPLES) this.examples.push(e);
  }
}

/** Judged queries with no row in the run, in the judgments' order, with their judgments as a side table. */
export interface AbsentQueries {
  readonly names: string[];
  /** Judgment lines whose query has no row in the run. */
  readonly lines: number;
  /** Their judgments, grouped by absent query (`firstAbsentQuery` 0: every query of it is absent). */
  readonly side: UnretrievedJudged;
  /** Their grades' extremes as a row summary of no rows (the in-memory range counts them under `zero`). */
  readonly range: RowSummary;
}

/**
 * The judged queries the streamed queries lack. A table that shares no query with them is the in-memory
 * join's error (the stream then gives no result, as the read gives none).
 */
export function absentQueries(judging: StreamJudgments, streamed: StringPool, dumpPath: string): AbsentQueries {
  const { table, shared } = judging;
  if (!sharesQuery(streamed, table)) throw noSharedQueryError(table, dumpPath);
  const names: string[] = [];
  const absent: number[] = [];
  for (let q = 0; q < table.queries.size; q++) {
    const name = table.queries.get(q);
    if (streamed.find(name) >= 0) continue;
    names.push(name);
    absent.push(q);
  }
  const start = new Uint32Array(absent.length + 1);
  absent.forEach((q, k) => (start[k + 1] = start[k]! + shared.start[q + 1]! - shared.start[q]!));
  const total = start[absent.length]!;
  const grade = new Float64Array(total);
  const item = new Uint32Array(total);
  const line = new Uint32Array(total);
  const range: RowSummary = { unjudged: 0, missing: 0, lowest: Infinity, highest: -Infinity };
  let at = 0;
  for (const q of absent) {
    for (let e = shared.start[q]!; e < shared.start[q + 1]!; e++) {
      const j = shared.order[e]!;
      grade[at] = shared.grade[j]!;
      item[at] = shared.item[j]!;
      line[at++] = shared.line[j]!;
      range.lowest = Math.min(range.lowest, shared.grade[j]!);
      range.highest = Math.max(range.highest, shared.grade[j]!);
    }
  }
  return { names, lines: total, side: { start, grade, item, line, firstAbsentQuery: 0 }, range };
}

/**
 * The absent queries scored as the in-memory path scores a judged query without rows (0 on every metric,
 * never skipped; evaluate.ts `scoreAbsent`), as a block's scored runs with no place in the file.
 */
export function scoreAbsentQueries(absent: AbsentQueries, metrics: readonly MetricSpec[], conventions: Conventions, gmax: number,
  sensitivity: boolean): { scored: ScoredRuns; tally: RangeTally } {
  const n = absent.names.length;
  const setup = scoredBlockSetup(metrics, conventions, { rowsOfQuery: new Uint32Array(0), start: new Uint32Array(n + 1) }, n, gmax, sensitivity);
  const perQuery = allocatePerQuery(n, metrics, setup.hasRbp);
  const pass = sensitivity ? newSensitivityPassWith(setup, () => undefined) : undefined;
  const recorded = pass ? sensitivityColumns(pass, n) : undefined;
  if (pass && recorded) pass.recordInto(recorded);
  const tally = emptyTally();
  const columns = { item: new Uint32Array(0), label: new Float64Array(0), score: new Float64Array(0), unretrieved: absent.side };
  new RangeScorer(setup, columns, perQuery, pass).score(0, n, tally);
  const nowhere = new Float64Array(n);
  return {
    scored: { names: packTexts(absent.names), start: nowhere, end: nowhere, line: new Uint32Array(n), rows: new Uint32Array(n), perQuery, ...(recorded ? { sensitivity: recorded } : {}) },
    tally,
  };
}

/** The dump's notes after the join, as `joinJudgments` leaves them; `runQueries` are the streamed queries (absent ones follow). */
export function joinedNotes(notes: ReaderNotes, judging: StreamJudgments, counts: JoinTotals, absent: AbsentQueries,
  perQuery: PerQueryColumns, runQueries: number): void {
  const { shared } = judging;
  let unretrieved = 0;
  for (let q = 0; q < runQueries; q++) unretrieved += perQuery.unretrieved![q]!;
  let unknownItems = 0;
  for (let i = 0; i < judging.table.items.size; i++) unknownItems += 1 - shared.seenItems[i]!;
  const join: JudgmentsJoin = {
    path: judging.table.path, unretrieved, absentQueries: absent.names.length, absentExamples: absent.names.slice(0, JOIN_EXAMPLES),
    missingQueries: judging.missingQueries, inlineLabelRows: counts.inlineRows, disagreements: counts.disagreements, disagreementExamples: counts.examples,
  };
  notes.judgments = join;
  notes.judgmentsWithoutRun = absent.lines;
  notes.judgedQueriesWithoutRun = absent.names.length;
  notes.messages.push(...describeJoin(join, unknownItems));
}

/**
 * A query read again for its detail (a dump of that one query, maybe without rows: a judged query the
 * run lacks), joined to its own judgments by the in-memory join, so the detail lists its unretrieved
 * judged items by name.
 */
export function joinQueryRows(rows: RankedDump, query: string, judging: StreamJudgments): RankedDump {
  const { table, shared } = judging;
  const own = table.queries.find(query);
  const queries = new BytePool();
  queries.internString(query);
  const items = new BytePool();
  // The query's own judgments, file order, from the table's grouping (not a scan of every judgment per detail).
  const picked = own < 0 ? [] : Array.from(shared.order.subarray(shared.start[own]!, shared.start[own + 1]!));
  if (picked.length === 0) return { ...rows, label: new Float64Array(rows.rowCount).fill(NaN) };
  const sub: JudgmentTable = {
    path: table.path, queries, items, query: new Uint32Array(picked.length),
    item: Uint32Array.from(picked, (j) => items.internString(table.items.get(table.item[j]!))),
    grade: Float64Array.from(picked, (j) => table.grade[j]!), line: Uint32Array.from(picked, (j) => table.line[j]!),
  };
  if (rows.queries.size === 0) (rows.queries as BytePool).internString(query);
  return joinJudgments(rows, sub, 'skip');
}
