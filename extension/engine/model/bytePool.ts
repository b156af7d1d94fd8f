/**
 * A string pool keyed by raw UTF-8 bytes. Readers intern ids straight from slices of the file
 * buffer: the bytes are hashed into an open-addressing table and copied once into an arena, and a
 * JS string is only decoded when someone asks for it (`get`). A 10M-row dump with 1M distinct items
 * therefore creates at most 1M strings, and none while reading.
 */
import type { StringPool } from './stringPool';

const EMPTY_SLOT = -1;
const decoder = new TextDecoder('utf-8');
const encoder = new TextEncoder();

export class BytePool implements StringPool {
  private arena = new Uint8Array(1 << 16);
  private arenaUsed = 0;
  /** start of id i's bytes in `arena` is starts[i], end is starts[i + 1]. */
  private starts = new Uint32Array(1025);
  private hashes = new Int32Array(1024);
  private count = 0;
  /** Open addressing with linear probing; slot k holds [id, hash] at 2k, 2k+1 so one probe is one cache line. */
  private table = new Int32Array(2 * 2048).fill(EMPTY_SLOT);
  private mask = 2047;
  private decoded: (string | undefined)[] = [];

  get size(): number {
    return this.count;
  }

  /** The id of bytes[start, end), adding it when new. */
  intern(bytes: Uint8Array, start: number, end: number): number {
    const hash = hashBytes(bytes, start, end);
    const len = end - start;
    const table = this.table;
    const mask = this.mask;
    let slot = hash & mask;
    for (;;) {
      const id = table[2 * slot]!;
      if (id === EMPTY_SLOT) break;
      if (table[2 * slot + 1] === hash && this.sameBytes(id, bytes, start, len)) return id;
      slot = (slot + 1) & mask;
    }
    return this.add(bytes, start, end, hash, slot);
  }

  /** Interns a JS string (used by formats parsed through JSON or Parquet). */
  internString(text: string): number {
    const bytes = encoder.encode(text);
    return this.intern(bytes, 0, bytes.length);
  }

  /** The id of bytes[start, end), or -1 when never interned. */
  findBytes(bytes: Uint8Array, start: number, end: number): number {
    const hash = hashBytes(bytes, start, end);
    const len = end - start;
    let slot = hash & this.mask;
    for (;;) {
      const id = this.table[2 * slot]!;
      if (id === EMPTY_SLOT) return -1;
      if (this.table[2 * slot + 1] === hash && this.sameBytes(id, bytes, start, len)) return id;
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
      text = decoder.decode(this.arena.subarray(this.starts[id]!, this.starts[id + 1]!));
      this.decoded[id] = text;
    }
    return text;
  }

  /** The raw bytes of id (a view into the arena; copy before keeping). */
  bytesOf(id: number): Uint8Array {
    return this.arena.subarray(this.starts[id]!, this.starts[id + 1]!);
  }

  /** All distinct values as one byte block plus boundaries, for sending across threads. */
  exportPacked(): { bytes: Uint8Array; starts: Uint32Array } {
    return { bytes: this.arena.slice(0, this.arenaUsed), starts: this.starts.slice(0, this.count + 1) };
  }

  /** True when id's bytes equal bytes[start, end). */
  matches(id: number, bytes: Uint8Array, start: number, end: number): boolean {
    return this.sameBytes(id, bytes, start, end - start);
  }

  private sameBytes(id: number, bytes: Uint8Array, start: number, len: number): boolean {
    const s = this.starts[id]!;
    if (this.starts[id + 1]! - s !== len) return false;
    const arena = this.arena;
    for (let i = 0; i < len; i++) if (arena[s + i] !== bytes[start + i]) return false;
    return true;
  }

  private add(bytes: Uint8Array, start: number, end: number, hash: number, slot: number): number {
    const len = end - start;
    if (this.arenaUsed + len > this.arena.length) {
      const grown = new Uint8Array(Math.max(this.arena.length * 2, this.arenaUsed + len));
      grown.set(this.arena.subarray(0, this.arenaUsed));
      this.arena = grown;
    }
    const arena = this.arena;
    for (let i = 0, at = this.arenaUsed; i < len; i++) arena[at + i] = bytes[start + i]!;
    const id = this.count;
    if (id + 2 > this.starts.length) this.starts = growTo(this.starts, this.starts.length * 2);
    if (id + 1 > this.hashes.length) this.hashes = growTo(this.hashes, this.hashes.length * 2);
    this.starts[id] = this.arenaUsed;
    this.arenaUsed += len;
    this.starts[id + 1] = this.arenaUsed;
    this.hashes[id] = hash;
    this.table[2 * slot] = id;
    this.table[2 * slot + 1] = hash;
    this.count = id + 1;
    // Keep the load factor at or below 1/2 so probe chains stay short.
    if (this.count * 2 > this.mask + 1) this.rehash();
    return id;
  }

  private rehash(): void {
    const size = (this.mask + 1) * 2;
    const table = new Int32Array(2 * size).fill(EMPTY_SLOT);
    const mask = size - 1;
    for (let id = 0; id < this.count; id++) {
      const hash = this.hashes[id]!;
      let slot = hash & mask;
      while (table[2 * slot] !== EMPTY_SLOT) slot = (slot + 1) & mask;
      table[2 * slot] = id;
      table[2 * slot + 1] = hash;
    }
    this.table = table;
    this.mask = mask;
  }
}

/** FNV-1a over the bytes, with a final avalanche so low bits (used for slots) mix well. */
export function hashBytes(bytes: Uint8Array, start: number, end: number): number {
  let h = 0x811c9dc5 | 0;
  for (let i = start; i < end; i++) h = Math.imul(h ^ bytes[i]!, 0x01000193);
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  return h;
}

function growTo<T extends Uint32Array | Int32Array>(old: T, length: number): T {
  const fresh = new (old.constructor as new (n: number) => T)(length);
  fresh.set(old as never);
  return fresh;
}
