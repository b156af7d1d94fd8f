/**
 * The worst-queries table: sort, filter and page the per-query results without copying them. Sorted
 * orders are cached per (sort, filter, segment) so scrolling through pages costs only the page.
 */
import type { RankedDump } from '../engine/model/dump';
import { rowOf, type QueryGroups } from '../engine/model/groups';
import type { Evaluation } from '../engine/evaluate/types';
import { lossShares } from '../engine/evaluate/lossShare';
import type { MaybeNumber, QueryPage, QueryPageParams, QueryRow, SegmentFilter, SortSpec } from '../protocol/messages';

/** The parts of a dump the table reads: an SQL engine's per-query table has query ids and no rows. */
export type QueryTableDump = Pick<RankedDump, 'queries' | 'segments' | 'joined'>;

export interface QueryTableSource {
  readonly dump: QueryTableDump;
  readonly evaluation: Evaluation;
  /** Rows by query, for segment values; absent when the rows are not held (then there are no segments). */
  readonly groups?: QueryGroups;
}

const collator = new Intl.Collator('en', { numeric: true });

export function toMaybe(value: number): MaybeNumber {
  return Number.isFinite(value) ? value : null;
}

/** Per query, the interned value of a segment column on the query's first row. */
/** The segment value id of a query without rows (a judged query the run lacks, under missing queries `zero`): it belongs to no value. */
export const NO_SEGMENT_VALUE = 0xffffffff;

export function segmentOfQuery(source: QueryTableSource, column: string): { values: (id: number) => string; ofQuery: Uint32Array } {
  const segment = source.dump.segments.find((s) => s.name === column);
  if (!segment || !source.groups) throw new Error(`no segment column '${column}'`);
  const groups = source.groups;
  const start = groups.start;
  const ofQuery = new Uint32Array(source.evaluation.queryCount);
  for (let q = 0; q < ofQuery.length; q++) {
    ofQuery[q] = start[q + 1]! > start[q]! ? segment.ofRow[rowOf(groups, start[q]!)]! : NO_SEGMENT_VALUE;
  }
  return { values: (id) => (id === NO_SEGMENT_VALUE ? '' : segment.values.get(id)), ofQuery };
}

export { lossShares };

export class QueryTable {
  private readonly shares: Float64Array;
  private readonly segmentCache = new Map<string, ReturnType<typeof segmentOfQuery>>();
  private readonly orderCache = new Map<string, Uint32Array>();

  constructor(private readonly source: QueryTableSource) {
    this.shares = lossShares(source.evaluation.perQuery.values[source.evaluation.headline]!);
  }

  /** Query ids by index into the evaluation's per-query columns. */
  get queryNames(): QueryTableDump['queries'] {
    return this.source.dump.queries;
  }

  get lossShare(): Float64Array {
    return this.shares;
  }

  page(params: QueryPageParams): QueryPage {
    const order = this.order(params.sort ?? this.defaultSort(), params.filter ?? '', params.segment);
    const offset = Math.max(0, Math.min(Math.floor(params.offset), order.length));
    const limit = Math.max(0, Math.min(Math.floor(params.limit), 10_000));
    const rows: QueryRow[] = [];
    for (let i = offset; i < Math.min(order.length, offset + limit); i++) rows.push(this.row(order[i]!, i));
    return { total: order.length, offset, rows };
  }

  row(q: number, index: number): QueryRow {
    const { evaluation, dump } = this.source;
    const pq = evaluation.perQuery;
    return {
      query: dump.queries.get(q),
      index,
      values: pq.values.map((column) => toMaybe(column[q]!)),
      items: pq.items[q]!,
      relevant: pq.relevant[q]!,
      inversions: pq.inversions[q]!,
      inversionCost: pq.inversionCost[q]!,
      lossShare: toMaybe(this.shares[q]!),
      skipped: pq.skipped[q] === 1,
      ...(dump.joined?.queryText ? { text: dump.joined.queryText[q] ?? '' } : {}),
    };
  }

  /** Headline ascending: the worst query first. */
  defaultSort(): SortSpec {
    return { key: this.source.evaluation.metrics[this.source.evaluation.headline]!.key, descending: false };
  }

  segment(column: string): ReturnType<typeof segmentOfQuery> {
    let s = this.segmentCache.get(column);
    if (!s) {
      s = segmentOfQuery(this.source, column);
      this.segmentCache.set(column, s);
    }
    return s;
  }

  /** Query ids in display order after filtering. */
  order(sort: SortSpec, filter: string, segment: SegmentFilter | undefined): Uint32Array {
    const cacheKey = JSON.stringify([sort.key, sort.descending, filter, segment?.column, segment?.value]);
    const cached = this.orderCache.get(cacheKey);
    if (cached) return cached;
    const order = this.sorted(this.filtered(filter, segment), sort);
    if (this.orderCache.size >= 8) this.orderCache.delete(this.orderCache.keys().next().value!);
    this.orderCache.set(cacheKey, order);
    return order;
  }

  private filtered(filter: string, segment: SegmentFilter | undefined): Uint32Array {
    const { evaluation, dump } = this.source;
    const needle = filter.trim().toLowerCase();
    let segmentIds: Uint32Array | undefined;
    let wanted = -1;
    if (segment) {
      const s = this.segment(segment.column);
      segmentIds = s.ofQuery;
      wanted = this.source.dump.segments.find((c) => c.name === segment.column)!.values.find(segment.value);
      if (wanted < 0) return new Uint32Array(0);
    }
    const text = dump.joined?.queryText;
    const keep = new Uint32Array(evaluation.queryCount);
    let n = 0;
    for (let q = 0; q < evaluation.queryCount; q++) {
      if (segmentIds && segmentIds[q] !== wanted) continue;
      // The filter matches the query id and, with a queries table, its text.
      if (needle && !dump.queries.get(q).toLowerCase().includes(needle) && !(text?.[q]?.toLowerCase().includes(needle) ?? false)) continue;
      keep[n++] = q;
    }
    return keep.slice(0, n);
  }

  private sorted(ids: Uint32Array, sort: SortSpec): Uint32Array {
    const { dump } = this.source;
    const sign = sort.descending ? -1 : 1;
    if (sort.key === 'query') {
      const names = Array.from(ids, (q) => dump.queries.get(q));
      const idx = Array.from(ids.keys()).sort((a, b) => sign * collator.compare(names[a]!, names[b]!) || ids[a]! - ids[b]!);
      return Uint32Array.from(idx, (i) => ids[i]!);
    }
    const key = this.sortColumn(sort.key);
    // Missing values (skipped queries) go last in both directions; equal values keep first-seen order.
    return ids.sort((a, b) => {
      const x = key[a]!;
      const y = key[b]!;
      const xMissing = !Number.isFinite(x);
      const yMissing = !Number.isFinite(y);
      if (xMissing || yMissing) return xMissing === yMissing ? a - b : xMissing ? 1 : -1;
      return x === y ? a - b : x < y ? -sign : sign;
    });
  }

  private sortColumn(key: string): ArrayLike<number> {
    const { evaluation } = this.source;
    const pq = evaluation.perQuery;
    switch (key) {
      case 'items':
        return pq.items;
      case 'relevant':
        return pq.relevant;
      case 'inversions':
        return pq.inversions;
      case 'inversionCost':
        return pq.inversionCost;
      case 'lossShare':
        return this.shares;
    }
    const m = evaluation.metrics.findIndex((spec) => spec.key === key);
    if (m < 0) throw new Error(`unknown sort key '${key}'`);
    return pq.values[m]!;
  }
}
