/**
 * A string pool keyed by raw UTF-8 bytes. Readers intern ids straight from slices of the file
 * buffer: the bytes are hashed into an open-addressing table and copied once into an arena, and a
 * JS string is only decoded when someone asks for it (`get`). A 10M-row dump with 1M distinct items
 * therefore creates at most 1M strings, and none while reading.
 *
 * Layout, chosen so a lookup touches two cache lines: each table slot holds [record start, hash];
 * each arena record is [id: u32][length: u32][bytes], so the id, the length and the bytes to compare
 * sit together.
 */
import type { StringPool } from './stringPool';

const EMPTY_SLOT = -1;
const HEADER = 8;
const decoder = new TextDecoder('utf-8');
const encoder = new TextEncoder();

/** The internals of a pool, moved between threads without copying or rebuilding the table. */
export interface BytePoolState {
  readonly arena: Uint8Array;
  readonly arenaUsed: number;
  readonly starts: Uint32Array;
  readonly count: number;
  readonly table: Int32Array;
  readonly mask: number;
}

export class BytePool implements StringPool {
  private arena: Uint8Array = new Uint8Array(1 << 16);
  private arenaUsed = 0;
  /** Arena record start of each id. */
  private starts: Uint32Array = new Uint32Array(1024);
  private count = 0;
  /** Linear probing; slot k holds the record start at 2k (-1 when empty) and the hash at 2k + 1. */
  private table: Int32Array = new Int32Array(2 * 2048).fill(EMPTY_SLOT);
  private mask = 2047;
  private decoded: (string | undefined)[] = [];
  /** internString's last value and its id, and its encoding buffer. */
  private lastText: string | undefined;
  private lastId = -1;
  private scratch = new Uint8Array(64);
  /** recordEquals' views, made again only when the arena or the caller's array changes. */
  private arenaViewOf: Uint8Array | undefined;
  private arenaDataView: DataView<ArrayBufferLike> = new DataView(new ArrayBuffer(0));
  private callerViewOf: Uint8Array | undefined;
  private callerDataView: DataView<ArrayBufferLike> = new DataView(new ArrayBuffer(0));

  get size(): number {
    return this.count;
  }

  /** The id of bytes[start, end), adding it when new. */
  intern(bytes: Uint8Array, start: number, end: number): number {
    return this.internHashed(bytes, start, end, hashBytes(bytes, start, end));
  }

  /** `intern` for callers that computed `hashBytes(bytes, start, end)` while scanning the field. */
  internHashed(bytes: Uint8Array, start: number, end: number, hash: number): number {
    const table = this.table;
    const mask = this.mask;
    let slot = hash & mask;
    for (;;) {
      const record = table[2 * slot]!;
      if (record === EMPTY_SLOT) break;
      if (table[2 * slot + 1] === hash && this.recordEquals(record, bytes, start, end)) return this.idAt(record);
      slot = (slot + 1) & mask;
    }
    return this.add(bytes, start, end, hash, slot);
  }

  /**
   * Reads the first table slot and arena record for each hash, in two passes of independent loads,
   * so the processor fetches them in parallel; the following lookups then hit the cache. Returns a
   * value only so the reads cannot be optimised away. The hashes are hashes[from .. from + count).
   */
  warm(hashes: Int32Array, count: number, records: Int32Array, from = 0): number {
    const table = this.table;
    const mask = this.mask;
    for (let b = 0; b < count; b++) records[b] = table[2 * (hashes[from + b]! & mask)]!;
    const arena = this.arena;
    let sum = 0;
    for (let b = 0; b < count; b++) {
      const record = records[b]!;
      if (record !== EMPTY_SLOT) sum += arena[record + HEADER]!;
    }
    return sum;
  }

  /**
   * Interns a JS string (used by formats parsed through JSON or Parquet). Values repeat in runs (one
   * query's rows together), so the last string is checked first; otherwise the UTF-8 bytes go into a
   * reused scratch buffer (plain ASCII copied directly), never a fresh array per value.
   */
  internString(text: string): number {
    if (text === this.lastText) return this.lastId;
    const n = text.length;
    if (this.scratch.length < 3 * n) this.scratch = new Uint8Array(Math.max(64, 3 * n));
    const scratch = this.scratch;
    let length = 0;
    while (length < n) {
      const c = text.charCodeAt(length);
      if (c >= 128) break;
      scratch[length++] = c;
    }
    // Three bytes per UTF-16 unit always suffice, so encodeInto writes the whole string.
    if (length < n) length = encoder.encodeInto(text, scratch).written;
    const id = this.intern(scratch, 0, length);
    this.lastText = text;
    this.lastId = id;
    return id;
  }

  /** The id of bytes[start, end), or -1 when never interned. */
  findBytes(bytes: Uint8Array, start: number, end: number): number {
    return this.findHashed(bytes, start, end, hashBytes(bytes, start, end));
  }

  /** `findBytes` for callers that computed `hashBytes(bytes, start, end)` already. */
  findHashed(bytes: Uint8Array, start: number, end: number, hash: number): number {
    let slot = hash & this.mask;
    for (;;) {
      const record = this.table[2 * slot]!;
      if (record === EMPTY_SLOT) return -1;
      if (this.table[2 * slot + 1] === hash && this.recordEquals(record, bytes, start, end)) return this.idAt(record);
      slot = (slot + 1) & this.mask;
    }
  }

  find(text: string): number {
    const bytes = encoder.encode(text);
    return this.findBytes(bytes, 0, bytes.length);
  }

  get(id: number): string {
    if (!(id >= 0 && id < this.count)) throw new RangeError(`string id ${id} out of range 0..${this.count - 1}`);
    let text = this.decoded[id];
    if (text === undefined) {
      text = decoder.decode(this.bytesOf(id));
      this.decoded[id] = text;
    }
    return text;
  }

  /** The raw bytes of id (a view into the arena; copy before keeping). */
  bytesOf(id: number): Uint8Array {
    const record = this.starts[id]!;
    return this.arena.subarray(record + HEADER, record + HEADER + this.lengthAt(record));
  }

  /**
   * Every id's bytes one after another in id order (id q is bytes[ends[q - 1] (0 for q = 0), ends[q])),
   * in memory from `allocate`. One loop over the arena: a view per id took twice as long.
   */
  packed(allocate: (bytes: number) => ArrayBufferLike): { bytes: Uint8Array; ends: Uint32Array } {
    const count = this.count;
    const starts = this.starts;
    let total = 0;
    for (let id = 0; id < count; id++) total += this.lengthAt(starts[id]!);
    const bytes = new Uint8Array(allocate(total));
    const ends = new Uint32Array(allocate(count * 4));
    const arena = this.arena;
    let at = 0;
    for (let id = 0; id < count; id++) {
      const from = starts[id]! + HEADER;
      const to = from + this.lengthAt(starts[id]!);
      for (let i = from; i < to; i++) bytes[at++] = arena[i]!;
      ends[id] = at;
    }
    return { bytes, ends };
  }

  /** True when id's bytes equal bytes[start, end). */
  matches(id: number, bytes: Uint8Array, start: number, end: number): boolean {
    return this.recordEquals(this.starts[id]!, bytes, start, end);
  }

  /** `pool` itself when it is a BytePool; otherwise a BytePool of its strings with the same ids (interned in id order). */
  static copyOf(pool: StringPool): BytePool {
    if (pool instanceof BytePool) return pool;
    const bytes = new BytePool();
    for (let id = 0; id < pool.size; id++) bytes.internString(pool.get(id));
    return bytes;
  }

  /**
   * Room for `entries` ids in all and `bytes` more bytes of arena (each id's text with its 8-byte header, as
   * another pool's `arenaUsed` counts them), made at once: a merge that knows how much is coming then grows
   * the table and the arena once, not by doubling as it goes.
   */
  reserve(entries: number, bytes: number): void {
    const needBytes = this.arenaUsed + bytes;
    if (needBytes > this.arena.length && needBytes <= 0x7fffffff) {
      const grown = new Uint8Array(needBytes);
      grown.set(this.arena.subarray(0, this.arenaUsed));
      this.arena = grown;
    }
    if (entries > this.starts.length) {
      const grownStarts = new Uint32Array(entries);
      grownStarts.set(this.starts.subarray(0, this.count));
      this.starts = grownStarts;
    }
    // The load factor add() keeps: at most one half.
    let size = this.mask + 1;
    while (entries * 2 > size) size *= 2;
    if (size > this.mask + 1) this.rehash(size);
  }

  /** The pool's internals (shared, not copied: stop using this pool afterwards). */
  exportState(): BytePoolState {
    this.forgetCaller();
    return { arena: this.arena, arenaUsed: this.arenaUsed, starts: this.starts, count: this.count, table: this.table, mask: this.mask };
  }

  static fromState(state: BytePoolState): BytePool {
    const pool = new BytePool();
    pool.arena = state.arena;
    pool.arenaUsed = state.arenaUsed;
    pool.starts = state.starts;
    pool.count = state.count;
    pool.table = state.table;
    pool.mask = state.mask;
    return pool;
  }

  /** Calls `visit` with each id's bytes as arena[start, end), in id order. */
  static forEachInState(state: BytePoolState, visit: (arena: Uint8Array, start: number, end: number) => void): void {
    const a = state.arena;
    for (let id = 0; id < state.count; id++) {
      const record = state.starts[id]!;
      const len = (a[record + 4]! | (a[record + 5]! << 8) | (a[record + 6]! << 16) | (a[record + 7]! << 24)) >>> 0;
      visit(a, record + HEADER, record + HEADER + len);
    }
  }

  private idAt(record: number): number {
    const a = this.arena;
    return (a[record]! | (a[record + 1]! << 8) | (a[record + 2]! << 16) | (a[record + 3]! << 24)) >>> 0;
  }

  private lengthAt(record: number): number {
    const a = this.arena;
    return (a[record + 4]! | (a[record + 5]! << 8) | (a[record + 6]! << 16) | (a[record + 7]! << 24)) >>> 0;
  }

  private recordEquals(record: number, bytes: Uint8Array, start: number, end: number): boolean {
    const len = end - start;
    if (this.lengthAt(record) !== len) return false;
    const arena = this.arena;
    const from = record + HEADER;
    let i = 0;
    if (len >= 8) {
      // Four bytes at a time through DataViews: a lookup that finds its value compares every byte, and a byte
      // loop took 78 against 36 ns for 26 bytes (a file not grouped by query looks up every row's query).
      const mine = this.arenaView(arena);
      const theirs = this.viewOf(bytes);
      const at = bytes.byteOffset + start;
      for (; i + 4 <= len; i += 4) if (mine.getInt32(from + i) !== theirs.getInt32(at + i)) return false;
    }
    for (; i < len; i++) if (arena[from + i] !== bytes[start + i]) return false;
    return true;
  }

  /** A DataView of the arena as it is now (it is replaced when it grows). */
  private arenaView(arena: Uint8Array): DataView<ArrayBufferLike> {
    if (this.arenaViewOf !== arena) {
      this.arenaViewOf = arena;
      this.arenaDataView = new DataView(arena.buffer, arena.byteOffset, arena.byteLength);
    }
    return this.arenaDataView;
  }

  /**
   * Lets go of the last caller's array (kept by recordEquals for its next call): a pool that outlives a read
   * (a dump's) must not hold the read's last chunk. Called when a reader finishes.
   */
  forgetCaller(): void {
    this.callerViewOf = undefined;
    this.callerDataView = new DataView(new ArrayBuffer(0));
  }

  /** A DataView of the whole buffer under `bytes` (offsets then count from the buffer's start), kept for the next call with the same array. */
  private viewOf(bytes: Uint8Array): DataView<ArrayBufferLike> {
    if (this.callerViewOf !== bytes) {
      this.callerViewOf = bytes;
      this.callerDataView = new DataView(bytes.buffer);
    }
    return this.callerDataView;
  }

  private add(bytes: Uint8Array, start: number, end: number, hash: number, slot: number): number {
    const len = end - start;
    const need = this.arenaUsed + HEADER + len;
    if (need > 0x7fffffff) throw new RangeError('string pool larger than 2 GB');
    if (need > this.arena.length) {
      const grown = new Uint8Array(Math.min(0x7fffffff, Math.max(this.arena.length * 2, need)));
      grown.set(this.arena.subarray(0, this.arenaUsed));
      this.arena = grown;
    }
    const id = this.count;
    const record = this.arenaUsed;
    const arena = this.arena;
    arena[record] = id & 255;
    arena[record + 1] = (id >>> 8) & 255;
    arena[record + 2] = (id >>> 16) & 255;
    arena[record + 3] = id >>> 24;
    arena[record + 4] = len & 255;
    arena[record + 5] = (len >>> 8) & 255;
    arena[record + 6] = (len >>> 16) & 255;
    arena[record + 7] = len >>> 24;
    for (let i = 0, at = record + HEADER; i < len; i++) arena[at + i] = bytes[start + i]!;
    this.arenaUsed = need;
    if (id + 1 > this.starts.length) {
      const grownStarts = new Uint32Array(this.starts.length * 2);
      grownStarts.set(this.starts);
      this.starts = grownStarts;
    }
    this.starts[id] = record;
    this.table[2 * slot] = record;
    this.table[2 * slot + 1] = hash;
    this.count = id + 1;
    // Keep the load factor at or below 1/2 so probe chains stay short.
    if (this.count * 2 > this.mask + 1) this.rehash();
    return id;
  }

  private rehash(size = (this.mask + 1) * 2): void {
    const table = new Int32Array(2 * size).fill(EMPTY_SLOT);
    const mask = size - 1;
    const old = this.table;
    for (let s = 0; s < old.length; s += 2) {
      const record = old[s]!;
      if (record === EMPTY_SLOT) continue;
      const hash = old[s + 1]!;
      let slot = hash & mask;
      while (table[2 * slot] !== EMPTY_SLOT) slot = (slot + 1) & mask;
      table[2 * slot] = record;
      table[2 * slot + 1] = hash;
    }
    this.table = table;
    this.mask = mask;
  }
}

export const HASH_SEED = 0x811c9dc5 | 0;
export const HASH_PRIME = 0x01000193;

/** FNV-1a over the bytes, with a final avalanche so low bits (used for slots) mix well. */
export function hashBytes(bytes: Uint8Array, start: number, end: number): number {
  let h = HASH_SEED;
  for (let i = start; i < end; i++) h = Math.imul(h ^ bytes[i]!, HASH_PRIME);
  return finishHash(h);
}

/** The avalanche step of `hashBytes`, for callers that ran the FNV loop themselves. */
export function finishHash(h: number): number {
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  return h;
}
