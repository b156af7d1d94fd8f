/**
 * Keys the items of a parallel read whose rows are not grouped by query (a query's rows spread over the
 * file, as when many inference jobs append to one dump), on this thread and an idle parse worker. On one
 * thread the grouping (a counting sort) and the keying of each query took 0.65 s of 10M rows while the
 * worker sat idle. Here each thread counts and places half of the rows, then keys half of the queries.
 * The worker holds no item bytes: it keys a query from the hashes alone and leaves one whose rows share
 * a hash to this thread (model/itemProbe.ts, keyGroupsByHash). The grouping is kept for scoring
 * (groupByQuery), so the rows are not counted again, and with it each row's score and grade in grouped
 * order (GroupedValues), written while placing the rows: scoring then reads each query's rows side by side.
 */
import { engineActivity } from '../config';
import { countRowsPerQuery, noteValuesSource, placeRowsWithValues, sharedColumn, type GroupedValues, type QueryGroups } from '../model/groups';
import { ItemProbe, keyGroupsByHash, type KeysInOrder } from '../model/itemProbe';
import { isGrouped } from '../model/rowTexts';
import type { RowColumns } from '../readers/columns';

/** Row-order columns read by placement, and the grouped-order columns it writes. */
interface ValueColumns {
  readonly score: Float64Array;
  readonly label: Float64Array;
}

/** A worker's share of the work, one step at a time (the steps depend on each other's results). */
export type GroupTask =
  | { readonly kind: 'count'; readonly query: Uint32Array; readonly from: number; readonly to: number; readonly counts: Uint32Array }
  | { readonly kind: 'place'; readonly query: Uint32Array; readonly from: number; readonly to: number; readonly next: Uint32Array; readonly out: Uint32Array;
      readonly rowOrder: ValueColumns; readonly placed: ValueColumns }
  | { readonly kind: 'key'; readonly column: Uint32Array; readonly groups: QueryGroups; readonly fromQuery: number; readonly toQuery: number;
      readonly inOrder: KeysInOrder };

/** The queries a `key` step left to the thread with the bytes (none for the other steps). */
export interface GroupAnswer {
  readonly left: readonly number[];
}

export function runGroupTask(task: GroupTask): GroupAnswer {
  if (task.kind === 'count') countRowsPerQuery(task.query, task.from, task.to, task.counts);
  else if (task.kind === 'place') placeRowsWithValues(task.query, task.from, task.to, task.next, task.out, task.rowOrder, task.placed);
  else return { left: keyGroupsByHash(task.column, task.groups, task.fromQuery, task.toQuery, task.inOrder) };
  return { left: [] };
}

/**
 * Groups and keys rows whose query and item columns are in shared memory, when they are not grouped by
 * query already (a grouped read's ranges key their own rows; `finish` handles what is left). Sets
 * `itemKeysMade` and `groups`; the keys and the grouping are those of RowTexts.queryScopedKeys.
 */
export async function keyUngroupedRows(rows: RowColumns, helper: (task: GroupTask) => Promise<GroupAnswer>): Promise<void> {
  const texts = rows.itemTexts;
  const n = rows.count;
  const query = rows.query.subarray(0, n);
  if (texts === undefined || rows.itemKeysMade || isGrouped(query, n)) return;
  const column = rows.item.subarray(0, n);
  const queryCount = rows.queries.size;
  const mid = n >>> 1;
  // Counted apart: this thread's rows into start[q + 1], the worker's into `theirs`.
  const start = sharedColumn(queryCount + 1);
  const theirs = sharedColumn(queryCount);
  const counted = helper({ kind: 'count', query, from: mid, to: n, counts: theirs });
  countRowsPerQuery(query, 0, mid, start.subarray(1));
  await counted;
  // Each query's rows: this thread's first (they come first in the file), then the worker's.
  let before = 0;
  for (let q = 0; q < queryCount; q++) {
    const mine = start[q + 1]!;
    const other = theirs[q]!;
    start[q] = before;
    theirs[q] = before + mine;
    before += mine + other;
  }
  start[queryCount] = n;
  const rowsOfQuery = sharedColumn(n);
  const score = rows.score.subarray(0, n);
  const label = rows.label.subarray(0, n);
  const rowOrder: ValueColumns = { score, label };
  const placedValues: ValueColumns = {
    score: new Float64Array(new SharedArrayBuffer(n * 8)), label: new Float64Array(new SharedArrayBuffer(n * 8)) };
  const placed = helper({ kind: 'place', query, from: mid, to: n, next: theirs, out: rowsOfQuery, rowOrder, placed: placedValues });
  placeRowsWithValues(query, 0, mid, start.slice(0, queryCount), rowsOfQuery, rowOrder, placedValues);
  await placed;
  const values: GroupedValues = { score: placedValues.score, label: placedValues.label, first: new Uint8Array(new SharedArrayBuffer(n)) };
  const groups: QueryGroups = { rowsOfQuery, start, values };
  // The keying notes which rows repeat an item of their query, by place, for the scoring.
  const inOrder: KeysInOrder = { first: values.first };
  // Queries split where the rows are halved.
  let split = 0;
  while (split < queryCount && start[split]! < mid) split++;
  const keyed = helper({ kind: 'key', column, groups: { rowsOfQuery, start }, fromQuery: split, toQuery: queryCount, inOrder });
  const probe = new ItemProbe();
  texts.keyGroups(column, groups, 0, split, probe, inOrder);
  const { left } = await keyed;
  for (const q of left) texts.keyGroups(column, groups, q, q + 1, probe, inOrder);
  engineActivity().queriesKeyedElsewhere += queryCount - split - left.length;
  noteValuesSource(values, { score, label, itemKey: column });
  rows.itemKeysMade = true;
  rows.groups = groups;
}
