/**
 * One block of a grouped CSV/TSV dump read and scored on its own: the newline-aligned byte range is
 * parsed into small columns (ids local to the block), its runs of rows of one query are found, and the
 * runs strictly inside the block are scored with the same scorer as the in-memory path. The first and
 * the last run may belong to a query that began in the block before or goes on in the next one; they
 * are handed back as byte ranges for the caller to stitch and score whole (see stitch.ts).
 *
 * A block is also how one query, or a range of queries, is read again later: for ERR's highest grade
 * once the whole file is known, and for a query's detail.
 */
import { engineSettings } from '../config';
import { InputError, UnclosedQuoteError } from '../errors';
import { newSensitivityPassWith, scoredBlockSetup } from './setup';
import { allocatePerQuery, emptyTally, RangeScorer, sensitivityColumns, type RangeTally } from '../evaluate/evaluate';
import type { SensitivityColumns } from '../evaluate/sensitivity';
import type { PerQueryColumns } from '../evaluate/types';
import type { Conventions } from '../metrics/conventions';
import type { MetricSpec } from '../metrics/registry';
import type { RankedDump } from '../model/dump';
import { BytePool } from '../model/bytePool';
import { packNames, type PackedNames } from '../model/packedNames';
import { RowTexts } from '../model/rowTexts';
import { groupByQuery } from '../model/groups';
import { summariseRows, type RowSummary } from '../model/rowSummary';
import { ROW_COLUMN_NAMES, ROW_COLUMNS, type RowColumnName, type SharedColumns } from '../readers/columns';
import { DelimitedParser } from '../readers/delimited';
import type { ColumnRoles } from '../readers/roles';
import { pumpRange } from '../readers/source';
import { joinTables } from '../tables/join';
import { judgmentLookup, labelOptional, releaseJudgmentLookup, type SharedJudgments } from './sharedJudgments';
import type { JoinCounts } from '../readers/judgmentMatch';

export interface BlockTask {
  readonly path: string;
  readonly format: 'csv' | 'tsv';
  readonly start: number;
  readonly end: number;
  readonly delimiter: number;
  readonly names: string[];
  /** Columns kept as segments (the header's columns without a role). */
  readonly segmentCount: number;
  readonly columns?: ColumnRoles;
  readonly metrics: readonly MetricSpec[];
  readonly conventions: Conventions;
  readonly sensitivity: boolean;
  /**
   * ERR's g_max to score with. Undefined: the highest grade seen so far by this thread and in this
   * block (a guess the caller checks once every block is in, rescoring the blocks that guessed low).
   */
  readonly gmax?: number;
  /** The highest grade the caller has seen in earlier blocks (ERR's g_max guess starts there). */
  readonly gmaxFloor?: number;
  /** Score every run, the first and the last too (a stitched query, a range read again). */
  readonly whole: boolean;
  /** The dump has a query weight column: each scored query's weight is taken as the in-memory join takes it. */
  readonly weights: boolean;
  /** Collect the distinct grades (a gain map must list each of them). */
  readonly distinctGrades: boolean;
  /** Give each scored query's segment values (its first row's), for segment means over the streamed queries. */
  readonly segmentValues?: boolean;
  /** Labels come from this judgments table (the dump's label column is then optional), joined block by block. */
  readonly judgments?: SharedJudgments;
}

/** A run of one query's rows: its id, first line (counted from 1 at the block start) and byte range. */
export interface RunPiece {
  readonly query: string;
  readonly line: number;
  readonly start: number;
  readonly end: number;
  readonly rows: number;
}

/** The scored runs: per-query columns indexed from 0 in file order. */
export interface ScoredRuns {
  readonly names: PackedNames;
  readonly start: Float64Array;
  readonly end: Float64Array;
  /** First line of each query, counted from 1 at the block start. */
  readonly line: Uint32Array;
  readonly rows: Uint32Array;
  readonly perQuery: PerQueryColumns;
  readonly sensitivity?: SensitivityColumns;
  /** Each query's weight (NaN when unknown), when the dump has a weight column. */
  readonly weight?: Float64Array;
  /** Per segment column, each query's value on its first row (with `segmentValues`). */
  readonly segments?: string[][];
}

export type BlockResult =
  | {
    readonly kind: 'rows';
    /** Newlines consumed in the block. */
    readonly lines: number;
    readonly rowCount: number;
    readonly gaps: RowSummary;
    /** The g_max the runs were scored with. */
    readonly gmax: number;
    /** Runs of the block (1 when one query fills it). */
    readonly runs: number;
    readonly first: RunPiece;
    readonly last: RunPiece;
    readonly scored: ScoredRuns;
    readonly tally: RangeTally;
    readonly largestQuery: number;
    readonly grades?: number[];
    /** The join's counts over the block's rows, when labels come from a judgments table (a query read again whole adds nothing). */
    readonly judged?: JoinCounts;
  }
  | { readonly kind: 'empty'; readonly lines: number }
  /** The block ends inside a quoted field: a cut fell on a quoted newline. */
  | { readonly kind: 'quoted' }
  /** A weight the in-memory join refuses (rows of a query that disagree, a negative weight): its error names the row. */
  | { readonly kind: 'weights'; readonly why: string }
  /** A query whose rows stop and start again inside the block: the file is not grouped by query. */
  | { readonly kind: 'ungrouped'; readonly query: string; readonly line: number }
  | { readonly kind: 'error'; readonly expected: string; readonly file?: string; readonly line?: number; readonly found?: string };

const textEncoder = new TextEncoder();

/**
 * Row columns reused from block to block on this thread: a block's rows are scored before the next is
 * read, and fresh columns for every block cost more time than parsing them (the pages of new memory).
 */
let reused: SharedColumns | undefined;

function rowSpace(segments: number, rows: number): SharedColumns {
  if (reused !== undefined && reused.segmentIds.length === segments && reused.rows >= rows) return reused;
  const buffers = {} as Record<RowColumnName, SharedArrayBuffer>;
  for (const name of ROW_COLUMN_NAMES) buffers[name] = new SharedArrayBuffer(rows * ROW_COLUMNS[name].array.BYTES_PER_ELEMENT);
  reused = { ...buffers, segmentIds: Array.from({ length: segments }, () => new SharedArrayBuffer(rows * 4)), firstRow: 0, rows };
  return reused;
}

/**
 * Item ids interned on this thread, kept from block to block: only equality within a query matters
 * (repeated rows), so any consistent ids do, and a catalogue's items recur across blocks, where a look-up
 * that finds the item costs far less than adding it again to a fresh pool. Started afresh past
 * ITEM_POOL_LIMIT items, so distinct ids cannot make it grow with the file.
 */
let itemPool: BytePool | undefined;
const ITEM_POOL_LIMIT = 2_000_000;

function items(): BytePool {
  if (itemPool === undefined || itemPool.size > ITEM_POOL_LIMIT) itemPool = new BytePool();
  return itemPool;
}

/**
 * The rows' item bytes, kept from block to block on this thread like the row columns: a fresh store per
 * block was the largest allocation of a block (zeroed pages for every row's item id).
 */
let texts: RowTexts | undefined;

/** Drops the columns and item ids kept for the next block (a thread that lives on after its stream). */
export function releaseBlockMemory(): void {
  reused = undefined;
  itemPool = undefined;
  texts = undefined;
  releaseJudgmentLookup();
}

/** Rows a block of `bytes` bytes is given room for before its columns spill into arrays of their own. */
const BYTES_PER_ROW_GUESS = 40;

export async function readBlock(task: BlockTask): Promise<BlockResult> {
  // A stitched query is read alone and seldom: it takes fresh arrays and leaves the reused ones alone.
  const shared = task.whole ? undefined : rowSpace(task.segmentCount, Math.ceil((task.end - task.start) / BYTES_PER_ROW_GUESS));
  if (shared) texts ??= new RowTexts(shared.rows, 16);
  const parser = new DelimitedParser({ file: task.path, delimiter: task.delimiter, columns: task.judgments ? labelOptional(task.columns) : task.columns, expectedBytes: task.end - task.start,
    ...(shared ? { shared, itemTexts: texts } : {}) }, { names: task.names });
  if (!task.whole) parser.columns!.items = items();
  try {
    // Reads of a small range (a stitched query) need no buffers of the full chunk size.
    const chunkBytes = Math.min(engineSettings().tuning.plainChunkBytes, Math.max(4096, task.end - task.start));
    await pumpRange(task.path, task.start, task.end, parser, () => undefined, chunkBytes);
  } catch (err) {
    // Quoted fields are parsed as on one thread. A block that ends inside quotes was cut on a quoted
    // newline (the next block then began inside a field): the stream gives way. One that ends outside
    // quotes ended on a record's end, so the blocks before it all began on a record's start.
    if (err instanceof UnclosedQuoteError) return { kind: 'quoted' };
    if (err instanceof InputError) return { kind: 'error', expected: err.expected, file: err.file, line: err.line, found: err.found };
    throw err;
  }
  const lines = parser.line - 1;
  const rows = parser.columns!;
  if (rows.count === 0) return { kind: 'empty', lines };
  const dump = rows.finish(task.path, task.format, { size: 0, mtimeMs: 0 });
  return scoreBlock(task, dump, lines);
}

function scoreBlock(task: BlockTask, dump: RankedDump, lines: number): BlockResult {
  const n = dump.rowCount;
  const query = dump.query;
  // Ids are interned in first-seen order, so in a grouped block each run starts a new id, one higher.
  let runs = 0;
  let largest = 0;
  let runStart = 0;
  for (let r = 0; r <= n; r++) {
    if (r < n && r > 0 && query[r] === query[r - 1]) continue;
    if (r > 0) largest = Math.max(largest, r - runStart);
    if (r === n) break;
    if (query[r] !== runs) return { kind: 'ungrouped', query: dump.queries.get(query[r]!), line: dump.line[r]! };
    runs++;
    runStart = r;
  }
  // As in memory, the judgments are joined before the weights (readers, then tables/join.ts).
  const judged = task.judgments ? judgmentLookup(task.judgments).joinBlock(dump) : undefined;
  let weights: Float64Array | undefined;
  if (task.weights) {
    try {
      weights = joinTables(dump).joined?.queryWeight;
    } catch (err) {
      if (err instanceof InputError) return { kind: 'weights', why: err.expected };
      throw err;
    }
  }
  const gaps = summariseRows(dump.label, dump.score, 0, n);
  // The in-memory join's grade range counts the unretrieved judged grades too (readers/judgments.ts).
  for (const g of dump.unretrieved?.grade ?? []) {
    if (g < gaps.lowest) gaps.lowest = g;
    if (g > gaps.highest) gaps.highest = g;
  }
  const groups = groupByQuery(dump);
  const start = groups.start;
  const piece = (q: number): RunPiece => ({
    query: dump.queries.get(q),
    line: dump.line[start[q]!]!,
    start: dump.offset[start[q]!]!,
    end: q + 1 < runs ? dump.offset[start[q + 1]!]! : task.end,
    rows: start[q + 1]! - start[q]!,
  });
  // The in-memory path's g_max is the highest grade of the whole dump (unjudged rows count as 0).
  const highest = Math.max(task.gmaxFloor ?? -Infinity, gaps.highest, gaps.unjudged > 0 ? 0 : -Infinity);
  const gmax = task.gmax ?? task.conventions.maxGrade ?? (highest === -Infinity ? 0 : highest);
  const from = task.whole ? 0 : 1;
  const to = task.whole ? runs : Math.max(1, runs - 1);
  const setup = scoredBlockSetup(task.metrics, task.conventions, groups, runs, gmax, task.sensitivity);
  const perQuery = allocatePerQuery(runs, task.metrics, setup.hasRbp);
  const pass = task.sensitivity ? newSensitivityPassWith(setup, () => undefined) : undefined;
  const recorded = pass ? sensitivityColumns(pass, runs) : undefined;
  if (pass && recorded) pass.recordInto(recorded);
  const tally = emptyTally();
  if (to > from) new RangeScorer(setup, dump, perQuery, pass).score(from, to, tally);
  const names: Uint8Array[] = [];
  const scoredStart = new Float64Array(Math.max(0, to - from));
  const scoredEnd = new Float64Array(scoredStart.length);
  const scoredLine = new Uint32Array(scoredStart.length);
  const scoredRows = new Uint32Array(scoredStart.length);
  let largestScored = 0;
  // As piece(q) gives them, without the query's text: its bytes are handed over as they are.
  const pool = dump.queries instanceof BytePool ? dump.queries : undefined;
  for (let q = from; q < to; q++) {
    names.push(pool !== undefined ? pool.bytesOf(q) : textEncoder.encode(dump.queries.get(q)));
    const rows = start[q + 1]! - start[q]!;
    scoredStart[q - from] = dump.offset[start[q]!]!;
    scoredEnd[q - from] = q + 1 < runs ? dump.offset[start[q + 1]!]! : task.end;
    scoredLine[q - from] = dump.line[start[q]!]!;
    scoredRows[q - from] = rows;
    largestScored = Math.max(largestScored, rows);
  }
  return {
    kind: 'rows',
    lines,
    rowCount: n,
    gaps,
    gmax,
    runs,
    first: piece(0),
    last: piece(runs - 1),
    scored: {
      names: packNames(names), start: scoredStart, end: scoredEnd, line: scoredLine, rows: scoredRows,
      perQuery: slicePerQuery(perQuery, from, to),
      ...(weights ? { weight: weights.slice(from, to) } : {}),
      ...(task.segmentValues ? { segments: dump.segments.map((c) => names.map((_, i) => c.values.get(c.ofRow[start[from + i]!]!))) } : {}),
      ...(recorded ? { sensitivity: { value: recorded.value.map((v) => v.slice(from, to)) } } : {}),
    },
    tally,
    largestQuery: largestScored,
    ...(task.distinctGrades ? { grades: distinctGrades(dump.label, dump.unretrieved?.grade) } : {}),
    ...(judged ? { judged } : {}),
  };
}

function slicePerQuery(p: PerQueryColumns, from: number, to: number): PerQueryColumns {
  return {
    items: p.items.slice(from, to),
    relevant: p.relevant.slice(from, to),
    ...(p.unretrieved ? { unretrieved: p.unretrieved.slice(from, to) } : {}),
    values: p.values.map((v) => v.slice(from, to)),
    inversions: p.inversions.slice(from, to),
    inversionCost: p.inversionCost.slice(from, to),
    skipped: p.skipped.slice(from, to),
    ...(p.rbpResidual ? { rbpResidual: p.rbpResidual.slice(from, to) } : {}),
  };
}

/** Grades as metrics see them (unjudged = 0), each once, with the unretrieved judged grades. */
function distinctGrades(label: Float64Array, unretrieved: Float64Array | undefined): number[] {
  const seen = new Set<number>();
  for (let r = 0; r < label.length; r++) {
    const g = label[r]!;
    seen.add(g !== g ? 0 : g);
  }
  for (const g of unretrieved ?? []) seen.add(g);
  return [...seen];
}
