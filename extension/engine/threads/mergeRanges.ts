/**
 * Puts the ranges of a parallel read (parallel.ts) together in file order. Query and segment ids are
 * re-interned range by range in local first-seen order, which reproduces exactly the ids a single pass
 * would give; item bytes are kept per row and simply follow one another. Ranges parsed into the shared
 * buffers are compacted in place, the columns shared between this thread and an idle parse worker
 * (compactRanges.ts); a range that outgrew its slice sends the read down the copying merge.
 */
import { engineActivity } from '../config';
import { BytePool, hashBytes, type BytePoolState } from '../model/bytePool';
import { isGrouped, RowTexts } from '../model/rowTexts';
import { ROW_COLUMNS, RowColumns, rowArray, rowArrays, type RowArrays, type RowColumnName, type SharedColumns } from '../readers/columns';
import type { RangeResult } from '../readers/rangeParse';
import { compactColumns, type ColumnMove, type CompactTask } from './compactRanges';

export type RangeRows = Extract<RangeResult, { kind: 'rows' }>;

/**
 * Compacts ranges parsed into shared slices: every range moves down to follow the previous one inside
 * the shared buffers, ids remapped and lines shifted on the way. The dump keeps views of the shared
 * buffers: copying them out would double the peak memory of a large read. `helper`, when given, runs a
 * share of the columns on another thread meanwhile (the moves of plain values, items and segment ids).
 */
export async function compactShared(parts: RangeRows[], slices: SharedColumns[], lineOffsets: number[], headerRows: RowColumns,
  helper?: (task: CompactTask) => Promise<void>): Promise<RowColumns> {
  engineActivity().rangesCompacted++;
  const rows = new RowColumns(headerRows.segmentNames, 16);
  rows.notes.messages.push(...headerRows.notes.messages);
  const total = parts.reduce((sum, p) => sum + p.count, 0);
  const buffers = slices[0]!;
  const place = { firstRows: parts.map((_, k) => slices[k]!.firstRow), counts: parts.map((p) => p.count) };
  const pools = adoptPools(rows, parts);
  const segmentMaps = pools.segmentMaps();
  const plain = (name: RowColumnName): ColumnMove => ({ buffer: buffers[name], float: true });
  const starts = rangeStarts(place.counts);
  // Ranges keyed their items from their first row: shifted by the rows before them, while moving. When
  // every range keyed its rows but the file turns out not grouped, the keyed ranges are hashed again after.
  const allKeyed = parts.every((p) => p.itemKeys);
  // Shared so the two threads finish together: the values, segment ids and items there, while this thread
  // merges the query pools (0.2 s for 1M queries) and moves the query ids, lines and offsets.
  const away: CompactTask = { ...place, moves: [plain('label'), plain('score'),
    { buffer: buffers.item, float: false, ...(allKeyed ? { adds: starts } : {}) },
    ...buffers.segmentIds.map((buffer, s) => ({ buffer, float: false, maps: segmentMaps.map((m) => m[s]!) }))] };
  // A move is not repeatable (ids would be mapped twice), so a helper's failure fails the read.
  const moved = helper !== undefined ? helper(away) : Promise.resolve(compactColumns(away));
  try {
    const queryMaps = pools.queryMaps();
    compactColumns({ ...place, moves: [{ buffer: buffers.query, float: false, maps: queryMaps }, ...(buffers.offset.byteLength > 0 ? [plain('offset')] : []),
      { buffer: buffers.line, float: false, adds: lineOffsets }] });
    const keyed = allKeyed && mergedStaysGrouped(queryMaps);
    await moved;
    Object.assign(rows, rowArrays((name) => rowArray(name, buffers[name].byteLength / ROW_COLUMNS[name].array.BYTES_PER_ELEMENT, buffers[name])
      .subarray(0, total) as never));
    rows.count = total;
    rows.capacity = total;
    if (keyed) rekeyCutQueries(rows, starts);
    else hashKeyedRanges(rows, parts, starts);
  } finally {
    await moved;
  }
  rows.segmentIds = buffers.segmentIds.map((b) => new Uint32Array(b).subarray(0, total));
  return rows;
}

/**
 * The ranges' query-scoped item keys as the dump's: when every range keyed its rows and the merged file
 * is grouped by query, each range's keys are shifted by the rows before it, and the query cut by each
 * range's end is keyed again as a whole (its rows after the cut were keyed apart from those before).
 * Otherwise the keyed ranges get their hashes back and `finish` keys the whole dump as one thread does.
 */
export function itemKeysOfRanges(rows: RowColumns, parts: readonly RangeRows[]): void {
  const item = rows.item;
  const starts = rangeStarts(parts.map((p) => p.count));
  if (!parts.every((p) => p.itemKeys) || !isGrouped(rows.query, rows.count)) {
    hashKeyedRanges(rows, parts, starts);
    return;
  }
  parts.forEach((p, k) => {
    const first = starts[k]!;
    if (first > 0) for (let i = first; i < first + p.count; i++) item[i] = item[i]! + first;
  });
  rekeyCutQueries(rows, starts);
}

/**
 * The item column of every range that keyed its rows gets its hashes back, so `finish` (or keyUngrouped.ts)
 * keys the whole dump as one thread does; a range not grouped by query kept its hashes (hashing 10M rows
 * again took 0.3 s).
 */
function hashKeyedRanges(rows: RowColumns, parts: readonly RangeRows[], starts: readonly number[]): void {
  parts.forEach((p, k) => {
    if (p.itemKeys) rows.itemTexts!.hashRows(rows.item, starts[k]!, starts[k]! + p.count);
  });
}

/** The first row of each range in the merged rows: the rows of the ranges before it. */
function rangeStarts(counts: readonly number[]): number[] {
  let first = 0;
  return counts.map((n) => (first += n) - n);
}

/**
 * isGrouped of the merged query column, known from the ranges' id maps without a pass over the rows,
 * given that every range is grouped on its own (its ids are first-seen, so they climb by at most one
 * per row from 0): each range's ids must map to consecutive ids starting at the last id of the ranges
 * before, or the next one.
 */
export function mergedStaysGrouped(queryMaps: readonly Uint32Array[]): boolean {
  let last = -1;
  for (const map of queryMaps) {
    if (map.length === 0) continue;
    const first = map[0]!;
    if (first !== last && first !== last + 1) return false;
    for (let i = 1; i < map.length; i++) if (map[i] !== first + i) return false;
    last = map[map.length - 1]!;
  }
  return true;
}

/** The query cut by each range's start keyed again as a whole (its rows after the cut were keyed apart from those before). */
function rekeyCutQueries(rows: RowColumns, starts: readonly number[]): void {
  const texts = rows.itemTexts!;
  const item = rows.item;
  const query = rows.query;
  // Once, however many ranges it spans.
  let rekeyedTo = 0;
  for (const at of starts) {
    if (at === 0 || at >= rows.count || at < rekeyedTo || query[at - 1] !== query[at]) continue;
    const q = query[at]!;
    let from = at - 1;
    while (from > 0 && query[from - 1] === q) from--;
    let to = at;
    while (to < rows.count && query[to] === q) to++;
    texts.rekeyRows(item, from, to);
    rekeyedTo = to;
  }
  rows.itemKeysMade = true;
}

/** Merges ranges column by column, dropping each range's copy as soon as it is merged to bound peak memory. */
export function merge(parts: RangeRows[], lineOffsets: number[], headerRows: RowColumns): RowColumns {
  engineActivity().rangesMergedByCopying++;
  const rows = new RowColumns(headerRows.segmentNames, 16);
  rows.notes.messages.push(...headerRows.notes.messages);
  const total = parts.reduce((sum, p) => sum + p.count, 0);
  const pools = adoptPools(rows, parts);
  const segmentMaps = pools.segmentMaps();
  const queryMaps = pools.queryMaps();
  const columns = parts as unknown as Record<string, unknown>[];
  const take = <T>(key: string): T[] => columns.map((c) => {
    const value = c[key] as T;
    c[key] = undefined;
    return value;
  });
  const merged = rowArrays((name) => {
    const how = ROW_COLUMNS[name].merge;
    const ranges = take<RowArrays[typeof name]>(name);
    // A column some range did not keep (the row offsets, when not asked for) is kept by none.
    if (ranges.some((column, k) => column.length < parts[k]!.count)) return rowArray(name, 0);
    if (how === 'none') return concat(ranges, rowArray(name, total));
    if (how === 'lines') return shiftLines(ranges as Uint32Array[], lineOffsets, total) as never;
    return concatMapped(ranges as Uint32Array[], queryMaps, total) as never;
  });
  Object.assign(rows, merged);
  const segmentColumns = take<Uint32Array[]>('segmentIds');
  rows.segmentIds = headerRows.segmentNames.map((_, k) =>
    concatMapped(segmentColumns.map((ids) => ids[k]!), segmentMaps.map((m) => m[k]!), total));
  rows.count = total;
  rows.capacity = total;
  return rows;
}

/**
 * The first range's pools become the result's pools as they are (its ids are already final); later
 * ranges are interned into them range by range, each in its own first-seen order, which gives
 * exactly the ids of a single pass. The maps are made when asked for, segments and queries apart (the
 * segment maps are quick, and the helper of a shared compaction waits for them).
 */
function adoptPools(rows: RowColumns, parts: RangeRows[]) {
  // Batched like the row parser's item lookups: warm the slots of 64 values, then intern them.
  const starts = new Int32Array(64);
  const ends = new Int32Array(64);
  const hashes = new Int32Array(64);
  const records = new Int32Array(64);
  const remap = (pool: BytePool, state: BytePoolState): Uint32Array => {
    const ids = new Uint32Array(state.count);
    let done = 0;
    let n = 0;
    const flush = () => {
      pool.warm(hashes, n, records);
      for (let b = 0; b < n; b++) ids[done++] = pool.internHashed(state.arena, starts[b]!, ends[b]!, hashes[b]!);
      n = 0;
    };
    BytePool.forEachInState(state, (arena, start, end) => {
      starts[n] = start;
      ends[n] = end;
      hashes[n++] = hashBytes(arena, start, end);
      if (n === 64) flush();
    });
    flush();
    return ids;
  };
  // A plain loop: Uint32Array.from with a map callback takes about ten times as long for a million ids.
  const identity = (n: number) => {
    const ids = new Uint32Array(n);
    for (let i = 0; i < n; i++) ids[i] = i;
    return ids;
  };
  const first = parts[0]!;
  rows.queries = BytePool.fromState(first.queries);
  // Every later range's queries may be new (a grouped file's are, but for the query cut by each range's start).
  rows.queries.reserve(parts.reduce((n, p) => n + p.queries.count, 0), parts.slice(1).reduce((n, p) => n + p.queries.arenaUsed, 0));
  // Item bytes stay per row (model/rowTexts.ts): the ranges' records follow one another, nothing to re-intern.
  rows.itemTexts = RowTexts.concat(parts.map((p) => p.itemTexts));
  rows.segmentPools = first.segmentPools.map((s) => BytePool.fromState(s));
  return {
    /** Per range, per segment column. */
    segmentMaps: () => parts.map((p, k) => p.segmentPools.map((state, s) => (k === 0 ? identity(state.count) : remap(rows.segmentPools[s]!, state)))),
    queryMaps: () => parts.map((p, k) => (k === 0 ? identity(p.queries.count) : remap(rows.queries, p.queries))),
  };
}

function concatMapped(columns: Uint32Array[], maps: Uint32Array[], total: number): Uint32Array {
  const out = new Uint32Array(total);
  let at = 0;
  columns.forEach((ids, k) => {
    const map = maps[k]!;
    for (let i = 0; i < ids.length; i++) out[at + i] = map[ids[i]!]!;
    at += ids.length;
  });
  return out;
}

/** Line numbers of each range, counted from 1 at its start, shifted by the lines before it. */
function shiftLines(ranges: Uint32Array[], lineOffsets: number[], total: number): Uint32Array {
  const out = new Uint32Array(total);
  let at = 0;
  ranges.forEach((lines, k) => {
    const shift = lineOffsets[k]!;
    for (let i = 0; i < lines.length; i++) out[at + i] = lines[i]! + shift;
    at += lines.length;
  });
  return out;
}

function concat<T extends Uint32Array<ArrayBufferLike> | Float64Array<ArrayBufferLike>>(columns: T[], out: T): T {
  let at = 0;
  for (const c of columns) {
    out.set(c, at);
    at += c.length;
  }
  return out;
}
