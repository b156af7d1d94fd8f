/**
 * The per-query table of a streamed dump, grown as blocks come in (in file order): query ids interned
 * in first-seen order as the in-memory path interns them, each query's metric values and recorded
 * sensitivity values, and where its rows are in the file (byte range and first line), which is all the
 * query detail needs to read them again.
 */
import type { SensitivityColumns } from '../evaluate/sensitivity';
import type { PerQueryColumns } from '../evaluate/types';
import { BytePool } from '../model/bytePool';
import type { ScoredRuns } from './block';

const encoder = new TextEncoder();

/** Where each query's rows are: bytes [start, end) of the file, the first at line `line`. */
export interface QueryLocations {
  readonly start: Float64Array;
  readonly end: Float64Array;
  readonly line: Uint32Array;
  /** Rows of each query in the file (duplicates included). */
  readonly rows: Uint32Array;
}

/** A query seen again after its rows ended: the file is not grouped by query. */
export class QueryReappeared extends Error {
  constructor(readonly query: string, readonly line: number) {
    super(`query '${query}' appears again at line ${line} after its rows ended`);
  }
}

type Typed = Float64Array | Uint32Array | Uint8Array;

function grown<T extends Typed>(old: T, capacity: number): T {
  const fresh = new (old.constructor as new (n: number) => T)(capacity);
  fresh.set(old as never);
  return fresh;
}

export class StreamColumns {
  readonly queries = new BytePool();
  private capacity = 1024;
  private count = 0;
  private columns: PerQueryColumns;
  private sensitivity: { value: Float64Array[] } | undefined;
  private locations: { start: Float64Array; end: Float64Array; line: Uint32Array; rows: Uint32Array };
  /** Query weights, when the dump has a weight column. */
  private weight: Float64Array | undefined;
  /** Per segment column kept, each query's value (its first row's), interned in the order queries come. */
  private readonly segmentPools: BytePool[];
  private segmentIds: Uint32Array[];

  constructor(private readonly metricCount: number, hasRbp: boolean, variantCount: number | undefined, weighted = false, segmentCount = 0) {
    const n = this.capacity;
    this.segmentPools = Array.from({ length: segmentCount }, () => new BytePool());
    this.segmentIds = this.segmentPools.map(() => new Uint32Array(n));
    if (weighted) this.weight = new Float64Array(n);
    this.columns = {
      items: new Uint32Array(n), relevant: new Uint32Array(n), unretrieved: new Uint32Array(n),
      values: Array.from({ length: metricCount }, () => new Float64Array(n)),
      inversions: new Float64Array(n), inversionCost: new Float64Array(n), skipped: new Uint8Array(n),
      ...(hasRbp ? { rbpResidual: new Float64Array(n) } : {}),
    };
    this.sensitivity = variantCount === undefined ? undefined
      : { value: Array.from({ length: variantCount }, () => new Float64Array(n)) };
    this.locations = { start: new Float64Array(n), end: new Float64Array(n), line: new Uint32Array(n), rows: new Uint32Array(n) };
  }

  get size(): number {
    return this.count;
  }

  /** A new query's id; a query already seen is the file not being grouped. */
  add(query: string, line: number): number {
    const bytes = encoder.encode(query);
    const id = this.addBytes(bytes, 0, bytes.length, line);
    // Until scored (a query cut by a block boundary is scored at the end), it counts in no partial mean.
    for (const column of this.columns.values) column[id] = NaN;
    return id;
  }

  /** add() of a query given as UTF-8 bytes[start, end), its values left to be written. */
  private addBytes(bytes: Uint8Array, start: number, end: number, line: number): number {
    // One look-up: an id below the count before it is a query met before.
    const before = this.queries.size;
    const id = this.queries.intern(bytes, start, end);
    if (id < before) throw new QueryReappeared(this.queries.get(id), line);
    if (id >= this.capacity) this.grow(Math.max(id + 1, this.capacity * 2));
    this.count = id + 1;
    this.locations.line[id] = line;
    return id;
  }

  /** Room for `queries` queries at once (an estimate from the blocks so far): the columns then grow once, not by doubling. */
  reserve(queries: number): void {
    if (queries > this.capacity) this.grow(Math.ceil(queries));
  }

  /** Adds each scored query of a block as a new query, in order; `lineOffset` turns block lines into file lines. */
  addScored(scored: ScoredRuns, lineOffset: number): void {
    const first = this.count;
    const { bytes, ends } = scored.names;
    // put() writes every value of these queries next.
    for (let i = 0; i < ends.length; i++) this.addBytes(bytes, i === 0 ? 0 : ends[i - 1]!, ends[i]!, scored.line[i]! + lineOffset);
    this.put(scored, 0, ends.length, first, lineOffset);
  }

  /**
   * Writes scored queries [from, to) of `scored` at ids from `at` on (ids already added), with their
   * places in the file unless `lineOffset` is undefined (a query read again keeps the place it has).
   */
  put(scored: ScoredRuns, from: number, to: number, at: number, lineOffset: number | undefined): void {
    const c = this.columns;
    const p = scored.perQuery;
    const copy = (into: Typed, src: Typed) => into.set(src.subarray(from, to) as never, at);
    copy(c.items, p.items);
    copy(c.relevant, p.relevant);
    if (c.unretrieved && p.unretrieved) copy(c.unretrieved, p.unretrieved);
    for (let m = 0; m < this.metricCount; m++) copy(c.values[m]!, p.values[m]!);
    copy(c.inversions, p.inversions);
    copy(c.inversionCost, p.inversionCost);
    copy(c.skipped, p.skipped);
    if (c.rbpResidual && p.rbpResidual) copy(c.rbpResidual, p.rbpResidual);
    if (this.sensitivity && scored.sensitivity) {
      this.sensitivity.value.forEach((v, i) => copy(v, scored.sensitivity!.value[i]!));
    }
    if (this.weight && scored.weight) copy(this.weight, scored.weight);
    if (scored.segments) {
      this.segmentPools.forEach((pool, k) => {
        for (let i = from; i < to; i++) this.segmentIds[k]![at + i - from] = pool.internString(scored.segments![k]![i]!);
      });
    }
    if (lineOffset === undefined) return;
    const l = this.locations;
    copy(l.start, scored.start);
    copy(l.end, scored.end);
    copy(l.rows, scored.rows);
    for (let i = from; i < to; i++) l.line[at + i - from] = scored.line[i]! + lineOffset;
  }

  /** The metric columns and the weights as they stand (regrown as queries come, so asked for each time). */
  current(): { values: readonly Float64Array[]; weight: Float64Array | undefined } {
    return { values: this.columns.values, weight: this.weight };
  }

  /** Sets where a stitched query's rows are before it is scored (its id was added at its first piece). */
  place(id: number, start: number, end: number, rows: number): void {
    this.locations.start[id] = start;
    this.locations.end[id] = end;
    this.locations.rows[id] = rows;
  }

  location(id: number): { start: number; end: number; line: number; rows: number } {
    const l = this.locations;
    return { start: l.start[id]!, end: l.end[id]!, line: l.line[id]!, rows: l.rows[id]! };
  }

  /** Each query's value of segment column `k` (ids into `pool`), trimmed to the queries added. */
  segment(k: number): { pool: BytePool; ofQuery: Uint32Array } {
    return { pool: this.segmentPools[k]!, ofQuery: this.segmentIds[k]!.subarray(0, this.count) };
  }

  /** The columns trimmed to the queries added (views; the builder is done with them). */
  finish(): { perQuery: PerQueryColumns; sensitivity: SensitivityColumns | undefined; locations: QueryLocations; weight: Float64Array | undefined } {
    const n = this.count;
    const c = this.columns;
    const cut = <T extends Typed>(a: T): T => a.subarray(0, n) as T;
    return {
      perQuery: {
        items: cut(c.items), relevant: cut(c.relevant), ...(c.unretrieved ? { unretrieved: cut(c.unretrieved) } : {}),
        values: c.values.map(cut), inversions: cut(c.inversions), inversionCost: cut(c.inversionCost), skipped: cut(c.skipped),
        ...(c.rbpResidual ? { rbpResidual: cut(c.rbpResidual) } : {}),
      },
      sensitivity: this.sensitivity && { value: this.sensitivity.value.map(cut) },
      locations: { start: cut(this.locations.start), end: cut(this.locations.end), line: cut(this.locations.line), rows: cut(this.locations.rows) },
      weight: this.weight && cut(this.weight),
    };
  }

  private grow(capacity: number): void {
    const c = this.columns;
    this.columns = {
      items: grown(c.items, capacity), relevant: grown(c.relevant, capacity), ...(c.unretrieved ? { unretrieved: grown(c.unretrieved, capacity) } : {}),
      values: c.values.map((v) => grown(v, capacity)), inversions: grown(c.inversions, capacity), inversionCost: grown(c.inversionCost, capacity),
      skipped: grown(c.skipped, capacity), ...(c.rbpResidual ? { rbpResidual: grown(c.rbpResidual, capacity) } : {}),
    };
    if (this.sensitivity) {
      this.sensitivity = { value: this.sensitivity.value.map((v) => grown(v, capacity)) };
    }
    if (this.weight) this.weight = grown(this.weight, capacity);
    this.segmentIds = this.segmentIds.map((ids) => grown(ids, capacity));
    const l = this.locations;
    this.locations = { start: grown(l.start, capacity), end: grown(l.end, capacity), line: grown(l.line, capacity), rows: grown(l.rows, capacity) };
    this.capacity = capacity;
  }
}
