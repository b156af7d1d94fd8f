/**
 * Reads a large CSV/TSV or JSON Lines file on several threads (Parquet's pieces go the same way:
 * parquetRanges.ts): the file is cut at newlines into a few byte ranges per thread, this thread and the workers claim ranges in turn and parse each into its own columns and
 * pools, and the ranges are put together in file order (mergeRanges.ts). A cut that fell on a newline
 * inside a quoted field shows as a range ending inside quotes (rangeParse.ts); the caller then falls
 * back to one thread.
 */
import { promises as fsp } from 'node:fs';
import { availableParallelism } from 'node:os';
import { engineSettings } from '../config';
import { CancelledError, InputError } from '../errors';
import type { DumpFormat, FileStamp, RankedDump } from '../model/dump';
import { addSummaries } from '../model/rowSummary';
import { ROW_COLUMN_NAMES, ROW_COLUMNS, sharedViews, type RowColumnName, type RowColumns, type SharedColumns } from '../readers/columns';
import { parseHeaderLine } from '../readers/headerLine';
import { emptyJsonLines, SHAPE_LINES } from '../readers/jsonLines';
import { fileHead, jsonLinesHead } from '../readers/jsonLinesHead';
import { mergeUnread, unreadFieldsMessage } from '../readers/unreadFields';
import type { ReadOptions } from '../readers/readOptions';
import { parseClaimedRanges, type ClaimedRanges, type RangeResult, type RangeTask } from '../readers/rangeParse';
import { changedSince, fileChangedError, statStamp, throwIfCancelled } from '../readers/source';
import type { CompactTask } from './compactRanges';
import { idleKeptThreads, leasePool, type PoolLease } from './keptPools';
import { shrinkingEnds } from './shrinkingShares';
import { keyUngroupedRows, type GroupAnswer, type GroupTask } from './keyUngrouped';
import { compactShared, itemKeysOfRanges, merge, type RangeRows } from './mergeRanges';

/**
 * Below this size one thread is faster: a worker starts cold, and the merge re-interns the later
 * ranges' item ids on this thread. Measured on 2 cores: 59 MB read in 0.42–0.58 s on one thread and
 * 0.49–0.63 s on two (this thread and one worker); 150 MB in 1.07–1.19 s on one and 1.02–1.11 s on two.
 */
const PARALLEL_FROM_BYTES = 96 << 20;
/** With a kept parse thread idle (keptPools.ts), from this size. Best of 5 warm reads on 2 cores, one thread
 * against two: 5.9 MB 26 and 27 ms; 14.8 MB 58 and 45 ms; 30 MB 98–105 and 76–86 ms; 60 MB 183–190 and 164–180 ms. */
const KEPT_PARALLEL_FROM_BYTES = 12 << 20;
const MAX_THREADS = 4;

export async function shouldParseInParallel(path: string, threads: number | undefined): Promise<number> {
  if (threads !== undefined) return Math.max(1, Math.min(16, Math.floor(threads)));
  const { size } = await statStamp(path);
  const kept = idleKeptThreads('parseWorker');
  if (kept > 0 && size >= KEPT_PARALLEL_FROM_BYTES) return Math.min(MAX_THREADS, availableParallelism(), kept + 1);
  return size < PARALLEL_FROM_BYTES ? 1 : Math.min(MAX_THREADS, availableParallelism());
}

/** Returns undefined when the file cannot be split safely (a cut inside a quoted field, no workers available). */
export async function readParallelDelimited(path: string, format: 'csv' | 'tsv', delimiter: number, threads: number,
  options: ReadOptions): Promise<RankedDump | undefined> {
  return inRanges(threads, options, async () => {
    const stamp = await statStamp(path);
    const header = await readHeader(path, delimiter, options);
    if (header === undefined) return undefined;
    return textPlan(stamp, { path, format, firstByte: header.end, linesBefore: 1, bytesPerRow: header.bytesPerRow, rowsPerLine: true, headerRows: header.parser.columns!,
      task: { delimiter, names: header.names }, empty: () => new InputError('at least one data row after the header', path, 2) }, options);
  });
}

/**
 * JSON Lines read in ranges as CSV/TSV are: the shape is learnt here from the file's head (its first line's
 * keys, whether lines hold lists) and every range parses with it. Undefined when the head does not tell
 * (jsonLinesHead.ts): the file is then read on one thread.
 */
export async function readParallelJsonLines(path: string, threads: number, options: ReadOptions): Promise<RankedDump | undefined> {
  return inRanges(threads, options, async () => {
    const stamp = await statStamp(path);
    const head = jsonLinesHead(path, await fileHead(path), options.columns);
    if (head === undefined) return undefined;
    return textPlan(stamp, { path, format: 'jsonl', firstByte: 0, linesBefore: 0, bytesPerRow: head.bytesPerRow, rowsPerLine: !head.list, headerRows: head.rows,
      task: { delimiter: 0, names: [], json: { keys: head.keys, list: head.list, nested: head.nested } }, empty: () => emptyJsonLines(path) }, options);
  });
}

/** How a read is cut into ranges, and what it starts from. */
export interface RangePlan {
  /** The file or folder read. */
  readonly path: string;
  readonly format: DumpFormat;
  /** Lines before the first range. */
  readonly linesBefore: number;
  /** The header's columns: segment names and notes. */
  readonly headerRows: RowColumns;
  /** The error of a read with no row. */
  readonly empty: () => InputError;
  /** The read's files as they were before anything of them was read. */
  readonly stamp: FileStamp;
  /** True when the files changed since `stamp`. */
  changed(stamp: FileStamp): Promise<boolean>;
  /** About `parts` tasks with their shared slices (task k writes slice k), and the size the tasks' progress adds up to. */
  cut(parts: number, stamp: FileStamp): Promise<{ tasks: RangeTask[]; slices: SharedColumns[]; size: number }>;
}

/** A text file's ranges: cut at newlines after `firstByte`, each range's rows guessed from its bytes. */
interface TextLayout {
  readonly path: string;
  readonly format: 'csv' | 'tsv' | 'jsonl';
  /** The first range's first byte (after the header line of a CSV/TSV file). */
  readonly firstByte: number;
  readonly linesBefore: number;
  readonly bytesPerRow: number;
  /** True when a line holds one row (CSV/TSV records, JSON Lines of rows); false for lines of lists. */
  readonly rowsPerLine: boolean;
  readonly headerRows: RowColumns;
  readonly task: Pick<RangeTask, 'delimiter' | 'names' | 'json'>;
  readonly empty: () => InputError;
}

function textPlan(stamp: FileStamp, layout: TextLayout, options: ReadOptions): RangePlan {
  const { path } = layout;
  return {
    ...layout,
    stamp,
    changed: (stamp) => changedSince(path, stamp),
    cut: async (parts, stamp) => {
      const bounds = await splitPoints(path, layout.firstByte, stamp.size, parts);
      // Lines of lists hold rows by the dozen: a newline count says nothing of their rows, so the head's figure serves every range.
      const perRow = layout.rowsPerLine ? await rowSizes(path, bounds, layout.bytesPerRow) : bounds.slice(0, -1).map(() => layout.bytesPerRow);
      const margin = layout.rowsPerLine ? SLICE_MARGIN : LIST_SLICE_MARGIN;
      const slices = sharedSlices(bounds.slice(0, -1).map((start, k) => Math.ceil(((bounds[k + 1]! - start) / perRow[k]!) * margin) + 1024),
        layout.headerRows.segmentNames.length, options.rowOffsets !== false);
      const tasks: RangeTask[] = bounds.slice(0, -1).map((start, k) => ({
        path, start, end: bounds[k + 1]!, ...layout.task, columns: options.columns, chunkBytes: engineSettings().tuning.plainChunkBytes,
        shared: slices[k],
      }));
      return { tasks, slices, size: stamp.size };
    },
  };
}

export async function inRanges(threads: number, options: ReadOptions, plan: () => Promise<RangePlan | undefined>): Promise<RankedDump | undefined> {
  const lease = leasePool<ParseRequests>('parseWorker', Math.max(1, threads - 1));
  if (lease === undefined) return undefined;
  // Started now, the threads' start-up overlaps reading the header and choosing the ranges.
  lease.pool.warm(lease.workers);
  try {
    const planned = await plan();
    return planned === undefined ? undefined : await readInRanges(lease, planned, threads, options);
  } finally {
    lease.done();
  }
}

async function readInRanges(lease: PoolLease<ParseRequests>, plan: RangePlan, threads: number, options: ReadOptions): Promise<RankedDump | undefined> {
  const { path, stamp } = plan;
  const { tasks, slices, size } = await plan.cut(threads * Math.max(1, engineSettings().tuning.parseRangesPerThread), stamp);
  const results = await parseRanges(lease, tasks, size, options);
  // A range ending inside quotes stopped the claims (later ranges may be missing): the file is read on one thread.
  if (results.some((r) => r.kind === 'quoted')) return undefined;
  const lineOffsets = [plan.linesBefore];
  for (const r of results) lineOffsets.push(lineOffsets.at(-1)! + (r.kind === 'rows' ? r.lines : 0));
  const failed = results.findIndex((r) => r.kind === 'error');
  if (failed >= 0) {
    const e = results[failed] as Extract<RangeResult, { kind: 'error' }>;
    throw new InputError(e.expected, e.file, e.line === undefined ? undefined : e.line + lineOffsets[failed]!, e.found);
  }
  const parts = results.splice(0) as RangeRows[];
  const gaps = addSummaries(parts.map((p) => p.gaps));
  const helper = lease.pool.idle > 0 ? (task: CompactTask) => lease.pool.request('compactColumns', task, { signal: options.signal }).then(() => undefined) : undefined;
  let rows: RowColumns;
  if (parts.every((p) => p.inShared)) rows = await compactShared(parts, slices, lineOffsets, plan.headerRows, helper);
  else {
    rows = merge(parts.map((p, k) => (p.inShared ? { ...p, ...sharedViews(slices[k]!, p.count) } : p)), lineOffsets, plan.headerRows);
    itemKeysOfRanges(rows, parts);
  }
  if (rows.count === 0) throw plan.empty();
  if (parts.every((p) => p.inShared) && lease.pool.idle > 0) {
    await keyUngroupedRows(rows, (task) => lease.pool.request('groupRows', task, { signal: options.signal }));
  }
  if (await plan.changed(stamp)) throw fileChangedError(path);
  rows.setGaps(gaps);
  const unread = mergeUnread(parts.map((p) => p.unreadFields), lineOffsets);
  if (unread !== undefined) rows.notes.messages.push(unreadFieldsMessage(unread, SHAPE_LINES));
  options.onProgress?.(1);
  return rows.finish(path, plan.format, stamp);
}

/** Parses the header line on this thread, so role errors read as they do single-threaded. */
async function readHeader(path: string, delimiter: number, options: ReadOptions) {
  const fh = await fsp.open(path, 'r');
  try {
    const header = await parseHeaderLine(fh, path, delimiter, options.columns);
    if (!header) return undefined;
    const { parser, names, end } = header;
    const sample = Buffer.alloc(256 * 1024);
    const { bytesRead } = await fh.read(sample, 0, sample.length, end);
    return { names, end, parser, bytesPerRow: bytesPerLine(sample.subarray(0, bytesRead)) };
  } finally {
    await fh.close();
  }
}

/** Bytes per line of a sample of a file (64 when it holds no newline). */
function bytesPerLine(sample: Uint8Array): number {
  let newlines = 0;
  for (let i = 0; i < sample.length; i++) if (sample[i] === 10) newlines++;
  return newlines > 0 ? sample.length / newlines : 64;
}

/**
 * One slice of shared columns per range, of the given rows (a text range's: a guess from its bytes, with a
 * margin; the room a range leaves unused ends up above the compacted rows, written and kept). Without
 * `offsets` the offset buffer has no bytes, and the parse threads write no offsets (RowColumns.keepsOffsets):
 * on 10M rows that is 80 MB never written, and 0.08 s less for the whole run.
 */
export function sharedSlices(sizes: readonly number[], segments: number, offsets: boolean): SharedColumns[] {
  const total = sizes.reduce((a, b) => a + b, 0);
  const buffers = {} as Record<RowColumnName, SharedArrayBuffer>;
  for (const name of ROW_COLUMN_NAMES) buffers[name] = new SharedArrayBuffer(name === 'offset' && !offsets ? 0 : total * ROW_COLUMNS[name].array.BYTES_PER_ELEMENT);
  const segmentIds = Array.from({ length: segments }, () => new SharedArrayBuffer(total * 4));
  let firstRow = 0;
  return sizes.map((rows) => {
    const slice = { ...buffers, segmentIds, firstRow, rows };
    firstRow += rows;
    return slice;
  });
}

/**
 * Rows per range are guessed from samples of the rows at both ends of each range (the smaller bytes per
 * row of the two, as rows often lengthen along a file: ids with growing numbers); a range that still
 * outgrows its slice goes on in private arrays, merged by copying (slower, never wrong).
 */
const SLICE_MARGIN = 1.06;
/** Lines of lists vary more (a query's rows, a line): their ranges get more room. */
const LIST_SLICE_MARGIN = 1.3;
const SAMPLE_BYTES = 64 * 1024;

/** Bytes per row at each range start (the first from the header's sample) and at the file's end, per range the smaller of its two ends. */
async function rowSizes(path: string, bounds: number[], first: number): Promise<number[]> {
  const at: number[] = [first];
  const fh = await fsp.open(path, 'r');
  try {
    const probe = Buffer.alloc(SAMPLE_BYTES);
    for (let k = 1; k < bounds.length; k++) {
      const last = k === bounds.length - 1;
      const from = last ? Math.max(bounds[0]!, bounds[k]! - SAMPLE_BYTES) : bounds[k]!;
      const { bytesRead } = await fh.read(probe, 0, SAMPLE_BYTES, from);
      let newlines = 0;
      for (let i = 0; i < bytesRead; i++) if (probe[i] === 10) newlines++;
      at.push(newlines > 1 ? bytesRead / newlines : at[k - 1]!);
    }
  } finally {
    await fh.close();
  }
  return bounds.slice(0, -1).map((_, k) => Math.min(at[k]!, at[k + 1]!));
}

/** Range starts: shrinking along the file (shrinkingShares.ts), each moved just past the next newline. The last entry is the size. */
async function splitPoints(path: string, from: number, size: number, parts: number): Promise<number[]> {
  const points = [from];
  const ends = shrinkingEnds(parts);
  const fh = await fsp.open(path, 'r');
  try {
    const probe = Buffer.alloc(64 * 1024);
    for (let k = 1; k < parts; k++) {
      let at = Math.max(points.at(-1)!, from + Math.floor((size - from) * ends[k - 1]!) - 1);
      let found = -1;
      while (found < 0 && at < size) {
        const { bytesRead } = await fh.read(probe, 0, probe.length, at);
        if (bytesRead === 0) break;
        const lf = probe.subarray(0, bytesRead).indexOf(10);
        if (lf >= 0) found = at + lf + 1;
        else at += bytesRead;
      }
      points.push(found < 0 ? size : found);
    }
  } finally {
    await fh.close();
  }
  points.push(size);
  return points;
}

/** What a parse thread answers (parseWorker.ts): the ranges it claimed, each parsed into its own columns and pools. */
export type ParseRequests = {
  parseRanges: { params: { tasks: readonly RangeTask[]; next: Int32Array }; result: ClaimedRanges };
  /** A share of the columns of a read's shared compaction (mergeRanges.ts). */
  compactColumns: { params: CompactTask; result: true };
  /** A step of grouping and keying rows not grouped by query (keyUngrouped.ts). */
  groupRows: { params: GroupTask; result: GroupAnswer };
};

/**
 * This thread and the workers claim ranges from one shared counter until none is left. This thread
 * would otherwise wait idle, and a worker takes about 0.1 s to start: this thread claims the first
 * ranges meanwhile. Results come back in file order (a range ending inside quotes stops the claims: holes are left).
 */
async function parseRanges({ pool, workers }: PoolLease<ParseRequests>, tasks: RangeTask[], size: number,
  options: ReadOptions): Promise<RangeResult[]> {
  throwIfCancelled(options.signal);
  const done = new Array<number>(workers + 1).fill(0);
  const progress = (thread: number, bytes: number) => {
    done[thread] = bytes;
    if (size > 0) options.onProgress?.(Math.min(1, done.reduce((a, b) => a + b, 0) / size));
  };
  const next = new Int32Array(new SharedArrayBuffer(4));
  let stopped = false;
  const reported: (() => void)[] = [];
  const firstReports = Array.from({ length: workers }, (_, w) => new Promise<void>((resolve) => (reported[w] = resolve)));
  const remote = Array.from({ length: workers }, (_, w) =>
    pool.request('parseRanges', { tasks, next }, { signal: options.signal, onProgress: (bytes) => {
      reported[w]!();
      progress(w + 1, bytes);
    } }));
  // Tests only: a worker reports bytes once it has claimed a range (or all of them ended first).
  if (engineSettings().tuning.workersFirst && tasks.length > workers) await Promise.race([Promise.all(firstReports), Promise.allSettled(remote)]);
  const onBytes = (bytes: number) => {
    // This thread's parse stops at the next chunk once the read is cancelled or a worker failed.
    if (stopped || options.signal?.aborted) throw new CancelledError();
    progress(0, bytes);
  };
  try {
    const results = new Array<RangeResult>(tasks.length);
    for (const parsed of await Promise.all([parseClaimedRanges(tasks, next, onBytes), ...remote])) {
      for (const [k, result] of parsed) results[k] = result;
    }
    return results;
  } finally {
    stopped = true;
    // Claims end too, so a worker still parsing takes no further range before the pool stops it.
    Atomics.store(next, 0, tasks.length);
  }
}
