/**
 * A judgments file joined to a dump that streams: the table is read once on the calling thread, copied
 * into shared memory, and each stream thread joins its blocks to it (`joinBlock`) with the in-memory
 * join's rules (readers/judgments.ts): a judgment replaces the row's own label (disagreements counted),
 * a row without one is unjudged, and the judged items of a query its rows lack become the query's
 * unretrieved judged items, which the ideal ranking and the judged-set denominators count.
 *
 * Every rule of that join is per (query, item) pair, so a block joined on its own gives each row and
 * each query strictly inside it what the whole dump's join gives; a query cut by a block boundary is read
 * again whole and joined then (streamEvaluate.ts). What needs the whole file (judged queries without a
 * row, judged items no row names) is settled at the end on the calling thread (streamJudgments.ts).
 */
import { BytePool, type BytePoolState } from '../model/bytePool';
import { itemOfRow, type RankedDump, type UnretrievedJudged } from '../model/dump';
import { applyJudgments, judgmentsByQueryRun, type JoinCounts } from '../readers/judgmentMatch';
import { RowTexts } from '../model/rowTexts';
import type { StringPool } from '../model/stringPool';
import type { JudgmentTable } from '../readers/judgments';
import type { ColumnRoles } from '../readers/roles';

/** A judgment table in shared memory, handed to every block task without copying. */
export interface SharedJudgments {
  /** Tells one table from another in a thread's cache. */
  readonly key: number;
  readonly path: string;
  readonly queries: BytePoolState;
  readonly items: BytePoolState;
  readonly query: Uint32Array;
  readonly item: Uint32Array;
  readonly grade: Float64Array;
  readonly line: Uint32Array;
  /** The judgments grouped by query, file order within each: entries order[start[q]] .. order[start[q + 1] - 1]. */
  readonly start: Uint32Array;
  readonly order: Uint32Array;
  /** One byte per judged item, set by any thread once some row names the item (any query). */
  readonly seenItems: Uint8Array;
}

let nextKey = 1;

/** Column roles for a dump whose labels come from judgments: its own label column may be absent, as in memory (readers/index.ts). */
export function labelOptional(columns: ColumnRoles | undefined): ColumnRoles {
  return { ...columns, optional: [...(columns?.optional ?? []), 'label'] };
}

function shared<T extends Uint8Array | Uint32Array | Int32Array | Float64Array>(a: T, length = a.length): T {
  const copy = new (a.constructor as new (buffer: SharedArrayBuffer) => T)(new SharedArrayBuffer(length * a.BYTES_PER_ELEMENT));
  copy.set(a.subarray(0, length) as never);
  return copy;
}

/** A pool's state in shared memory (a pool of another kind is interned afresh first: same ids). */
function sharedPool(pool: StringPool): BytePoolState {
  // The pool's own arrays, only read here: the copies are what the threads get.
  const s = BytePool.copyOf(pool).exportState();
  return { arena: shared(s.arena, s.arenaUsed), arenaUsed: s.arenaUsed, starts: shared(s.starts, s.count), count: s.count, table: shared(s.table), mask: s.mask };
}

export function shareJudgments(table: JudgmentTable): SharedJudgments {
  const n = table.grade.length;
  const queryCount = table.queries.size;
  const start = new Uint32Array(new SharedArrayBuffer((queryCount + 1) * 4));
  for (let j = 0; j < n; j++) start[table.query[j]! + 1]!++;
  for (let q = 0; q < queryCount; q++) start[q + 1]! += start[q]!;
  const order = new Uint32Array(new SharedArrayBuffer(n * 4));
  const next = start.slice(0, queryCount);
  for (let j = 0; j < n; j++) order[next[table.query[j]!]!++] = j;
  return {
    key: nextKey++, path: table.path, queries: sharedPool(table.queries), items: sharedPool(table.items),
    query: shared(table.query), item: shared(table.item), grade: shared(table.grade), line: shared(table.line),
    start, order, seenItems: new Uint8Array(new SharedArrayBuffer(Math.max(1, table.items.size))),
  };
}

/** A thread's view of a shared table, made once per thread, with the scratch its block joins reuse. */
export class JudgmentLookup {
  readonly queries: BytePool;
  readonly items: BytePool;
  /**
   * The marks of judgmentsByQueryRun, kept zeroed between blocks: four bytes per judged item, where an index
   * of every (query, item) pair would take twelve per judgment on every thread.
   */
  private readonly entryOfItem: Int32Array;
  /** Marks the judgments a block's rows use; cleared again for each query once its side table is made. */
  private readonly used: Uint8Array;
  private itemIds = new Int32Array(1024);

  constructor(readonly table: SharedJudgments) {
    this.queries = BytePool.fromState(table.queries);
    this.items = BytePool.fromState(table.items);
    this.entryOfItem = new Int32Array(table.items.count);
    this.used = new Uint8Array(table.grade.length);
  }

  /**
   * Joins a block's rows in place: each row's label becomes its judgment's grade (NaN without one), and
   * the dump gets the side table of its queries' unretrieved judged items (their `item` ids are the
   * judgment table's: a block keeps no dump-wide item ids, and scoring reads only the grades).
   */
  joinBlock(dump: RankedDump): JoinCounts {
    const t = this.table;
    const queryCount = dump.queries.size;
    const judgedQuery = new Int32Array(queryCount);
    for (let q = 0; q < queryCount; q++) judgedQuery[q] = findIn(this.queries, dump.queries, q);
    const rowItem = this.itemIdsOf(dump);
    for (let r = 0; r < dump.rowCount; r++) if (rowItem[r]! >= 0) t.seenItems[rowItem[r]!] = 1;
    // The judgments of each block query, from the table's grouping (only the block's queries are visited).
    const start = new Uint32Array(queryCount + 1);
    for (let q = 0; q < queryCount; q++) {
      const tq = judgedQuery[q]!;
      start[q + 1] = start[q]! + (tq < 0 ? 0 : t.start[tq + 1]! - t.start[tq]!);
    }
    const order = new Uint32Array(start[queryCount]!);
    for (let q = 0; q < queryCount; q++) {
      const tq = judgedQuery[q]!;
      if (tq >= 0) order.set(t.order.subarray(t.start[tq]!, t.start[tq + 1]!), start[q]!);
    }
    const judgmentOf = judgmentsByQueryRun({ rowQuery: dump.query, rowItem: rowItem.subarray(0, dump.rowCount), itemCount: this.entryOfItem.length,
      itemOf: (j) => t.item[j]! }, { start, order }, this.entryOfItem);
    const counts = applyJudgments(judgmentOf, t.grade, dump.label, dump.label, this.used, (r) => `${dump.queries.get(dump.query[r]!)}/${itemOfRow(dump, r)}`);
    (dump as { unretrieved?: UnretrievedJudged }).unretrieved = this.sideTable(judgedQuery);
    return counts;
  }

  /** The judged items each block query's rows did not name, file order within a query (as the in-memory side table). */
  private sideTable(judgedQuery: Int32Array): UnretrievedJudged {
    const t = this.table;
    const used = this.used;
    const queryCount = judgedQuery.length;
    const start = new Uint32Array(queryCount + 1);
    for (let q = 0; q < queryCount; q++) {
      const tq = judgedQuery[q]!;
      let unused = 0;
      if (tq >= 0) for (let e = t.start[tq]!; e < t.start[tq + 1]!; e++) unused += 1 - used[t.order[e]!]!;
      start[q + 1] = start[q]! + unused;
    }
    const total = start[queryCount]!;
    const grade = new Float64Array(total);
    const item = new Uint32Array(total);
    const line = new Uint32Array(total);
    let at = 0;
    for (let q = 0; q < queryCount; q++) {
      const tq = judgedQuery[q]!;
      if (tq < 0) continue;
      for (let e = t.start[tq]!; e < t.start[tq + 1]!; e++) {
        const j = t.order[e]!;
        if (used[j] === 1) {
          used[j] = 0;
          continue;
        }
        grade[at] = t.grade[j]!;
        item[at] = t.item[j]!;
        line[at++] = t.line[j]!;
      }
    }
    return { start, grade, item, line, firstAbsentQuery: queryCount, items: this.items };
  }

  /** Each row's item as an id of the judgments' item pool (-1 when no judgment names it). */
  private itemIdsOf(dump: RankedDump): Int32Array {
    const n = dump.rowCount;
    if (this.itemIds.length < n) this.itemIds = new Int32Array(Math.max(n, this.itemIds.length * 2));
    const out = this.itemIds;
    const texts = dump.itemTexts;
    if (texts instanceof RowTexts) {
      texts.findEachIn(this.items, out);
    } else {
      // Rows with interned ids (a query read again alone): one look-up per distinct item.
      const ofItem = new Int32Array(dump.items.size);
      for (let i = 0; i < ofItem.length; i++) ofItem[i] = findIn(this.items, dump.items, i);
      for (let r = 0; r < n; r++) out[r] = ofItem[dump.item[r]!]!;
    }
    return out;
  }

}

/** Id in `pool` of id `id` of `from`, by bytes (-1 when absent). */
function findIn(pool: BytePool, from: StringPool, id: number): number {
  if (from instanceof BytePool) {
    const bytes = from.bytesOf(id);
    return pool.findBytes(bytes, 0, bytes.length);
  }
  return pool.find(from.get(id));
}

let cached: JudgmentLookup | undefined;

/** This thread's lookup of a shared table, built on first use and kept while the same table comes. */
export function judgmentLookup(table: SharedJudgments): JudgmentLookup {
  if (cached === undefined || cached.table.key !== table.key || cached.table.path !== table.path) cached = new JudgmentLookup(table);
  return cached;
}

/** Drops this thread's lookup (a thread that lives on after its stream). */
export function releaseJudgmentLookup(): void {
  cached = undefined;
}
