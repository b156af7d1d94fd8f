/**
 * Streams a text file (plain or gzip) into a record parser in large chunks. Handles what every text
 * format shares: the binary-junk check, the UTF-8 byte-order mark, records cut at chunk edges,
 * progress, cancellation, and detecting a file rewritten while it was read.
 */
import { createReadStream, promises as fsp } from 'node:fs';
import { createGunzip } from 'node:zlib';
import { engineSettings } from '../config';
import { CancelledError, InputError } from '../errors';
import type { FileStamp } from '../model/dump';
import { assertTextHead, badByteError, firstBadByte, lineAt } from './textCheck';

/** Takes complete records from buf[start, end) and returns where the first unconsumed record starts. */
export interface RecordSink {
  /** `base` is the byte offset of buf[0] in the decompressed text; `final` means no more bytes follow. */
  feed(buf: Buffer, start: number, end: number, base: number, final: boolean): number;
}

export interface PumpOptions {
  signal?: AbortSignal;
  onProgress?: (fraction: number) => void;
  chunkBytes?: number;
}

export async function statStamp(path: string): Promise<FileStamp> {
  try {
    const s = await fsp.stat(path);
    return { size: s.size, mtimeMs: s.mtimeMs };
  } catch (err) {
    throw new InputError('a readable file', path, undefined, (err as Error).message);
  }
}

export async function checkUnchanged(path: string, before: FileStamp): Promise<void> {
  if (await changedSince(path, before)) throw fileChangedError(path);
}

/** True when the file's size or modification time differs from `before`, or it can no longer be read. */
export async function changedSince(path: string, before: FileStamp): Promise<boolean> {
  const after = await statStamp(path).catch(() => undefined);
  return after === undefined || after.size !== before.size || after.mtimeMs !== before.mtimeMs;
}

export function fileChangedError(path: string): InputError {
  return new InputError('the file to stay the same while it is read: the file changed while it was read; read again', path);
}

export function throwIfCancelled(signal: AbortSignal | undefined): void {
  if (signal?.aborted) throw new CancelledError();
}

/** True when the file starts with the gzip magic bytes. */
export async function isGzip(path: string): Promise<boolean> {
  const head = await readHead(path, 2);
  return head.length === 2 && head[0] === 0x1f && head[1] === 0x8b;
}

/**
 * The size of a file's text, to size row columns by: a plain file's size. For gzip, the uncompressed size its
 * trailer records (ISIZE, RFC 1952: the last member's size mod 2^32, so exact for one member under 4 GiB and
 * never more than the text), or the compressed size when that is larger (a wrapped or many-member file).
 * Columns sized by the compressed size grew by half again time after time: 10M rows peaked at 1.23 GB.
 */
export async function textSizeHint(path: string): Promise<number> {
  // A missing file fails here as every read does (statStamp's error).
  const { size } = await statStamp(path);
  if (size < 18) return size;
  const fh = await fsp.open(path, 'r');
  try {
    // The magic bytes and the trailer, in one opening of the file.
    const head = Buffer.alloc(2);
    const trailer = Buffer.alloc(4);
    if ((await fh.read(head, 0, 2, 0)).bytesRead < 2 || head[0] !== 0x1f || head[1] !== 0x8b) return size;
    const { bytesRead } = await fh.read(trailer, 0, 4, size - 4);
    return bytesRead === 4 ? Math.max(size, trailer.readUInt32LE(0)) : size;
  } finally {
    await fh.close();
  }
}

export async function readHead(path: string, bytes: number): Promise<Buffer> {
  const fh = await fsp.open(path, 'r');
  try {
    const buf = Buffer.alloc(bytes);
    const { bytesRead } = await fh.read(buf, 0, bytes, 0);
    return buf.subarray(0, bytesRead);
  } finally {
    await fh.close();
  }
}

export { assertTextHead } from './textCheck';

/**
 * Checks every byte of the text before the sink sees it (textCheck.ts): the complete lines of each chunk,
 * then the rest at the end. On a bad byte, finds its line by counting newlines from `lineFrom` again.
 */
class TextGuard {
  /** Text offset up to which every byte was checked. */
  private checkedThrough = 0;

  constructor(private readonly path: string, private readonly gzip: boolean, private readonly lineFrom: number) {
    this.checkedThrough = lineFrom;
  }

  async check(buf: Buffer, start: number, end: number, base: number, final: boolean): Promise<void> {
    const from = Math.max(start, this.checkedThrough - base);
    if (from >= end) return;
    const lastNewline = final ? end - 1 : buf.lastIndexOf(10, end - 1);
    const cut = lastNewline >= from ? lastNewline + 1 : from;
    const bad = firstBadByte(buf, from, cut, true);
    if (bad >= 0) {
      const line = await lineAt(this.path, this.gzip, this.lineFrom, base + bad);
      throw badByteError(buf, bad, this.path, line, start);
    }
    this.checkedThrough = base + cut;
  }
}

/** Streams the decompressed text of `path` through `sink`; returns the stamp taken before reading. */
export async function pumpText(path: string, sink: RecordSink, options: PumpOptions = {}): Promise<FileStamp> {
  const stamp = await statStamp(path);
  const report = (done: number) => {
    if (stamp.size > 0) options.onProgress?.(Math.min(1, done / stamp.size));
  };
  if (await isGzip(path)) {
    const progress = { done: 0 };
    await feedChunks(gunzipChunks(path, progress), sink, path, options.signal, () => report(progress.done));
  } else {
    await feedPlain(path, 0, Infinity, sink, { fileStart: path, signal: options.signal, onBytes: report, chunkBytes: options.chunkBytes,
      expectedBytes: stamp.size, guard: new TextGuard(path, false, 0) });
  }
  await checkUnchanged(path, stamp);
  options.onProgress?.(1);
  return stamp;
}

/**
 * Streams bytes [start, end) of a plain file through `sink`; `start` must be a record start.
 * Used by parse workers, each taking one newline-aligned range of a large file.
 */
export async function pumpRange(path: string, start: number, end: number, sink: RecordSink,
  onBytes: (done: number) => void, chunkBytes = engineSettings().tuning.plainChunkBytes, reuse?: ReadBuffers): Promise<void> {
  // A range from the file's start (JSON Lines have no header line) skips a byte order mark as one thread does:
  // the rows' offsets count from after it.
  await feedPlain(path, start, end, sink, { ...(start === 0 ? { fileStart: path } : {}), onBytes: (at) => onBytes(at - start), chunkBytes,
    guard: new TextGuard(path, false, start), reuse });
}

/**
 * The two read buffers of one read, handed to the next read on the same thread (a parse thread reads
 * several ranges in turn): fresh memory costs a page fault per page on first touch, which on a busy
 * machine took longer than reading the bytes into it.
 */
export interface ReadBuffers {
  pair?: Buffer[];
}

/**
 * The chunk for reading `bytes` (when known): no larger than what is to be read, plus one byte so that
 * a file read in one chunk ends on a short read. Two buffers of the requested size for a small file
 * cost more in fresh memory than reading it (a series reads dozens of small checkpoint files).
 */
function chunkFor(requested: number, bytes: number | undefined): number {
  const sized = bytes === undefined ? requested : Math.min(requested, Math.max(4096, bytes + 1));
  return Math.max(16, sized);
}

/**
 * Reads a plain file through two reused buffers: the next chunk is read into one while the sink parses
 * the other, so the thread never waits for the copy from the page cache. Each buffer keeps room before
 * its chunk for the unfinished record carried over from the previous chunk (the room doubles when a
 * record outgrows it), so reading makes no garbage however large the file.
 */
async function feedPlain(path: string, from: number, to: number, sink: RecordSink,
  options: { fileStart?: string; signal?: AbortSignal; onBytes: (position: number) => void; chunkBytes?: number | undefined;
    expectedBytes?: number; guard: TextGuard; reuse?: ReadBuffers | undefined }): Promise<void> {
  const fh = await fsp.open(path, 'r');
  const chunk = chunkFor(options.chunkBytes ?? engineSettings().tuning.plainChunkBytes, Number.isFinite(to) ? to - from : options.expectedBytes);
  const earlier = options.reuse?.pair;
  // The buffers of an earlier read come with their room (grown for a long record, perhaps) when large enough.
  const reused = earlier !== undefined && earlier[0]!.length === earlier[1]!.length && earlier[0]!.length >= 2 * chunk;
  let room = reused ? earlier[0]!.length - chunk : chunk;
  let buffers: Buffer[] = reused ? earlier : [Buffer.allocUnsafe(room + chunk), Buffer.allocUnsafe(room + chunk)];
  let position = from;
  let wanted = 0;
  let pending: Promise<{ bytesRead: number }> = Promise.resolve({ bytesRead: 0 });
  /** Starts reading the next chunk into `buf` after its room; a failure surfaces when it is awaited. */
  const readAhead = (buf: Buffer) => {
    wanted = Math.max(0, Math.min(chunk, to - position));
    pending = wanted > 0 ? fh.read(buf, room, wanted, position) : Promise.resolve({ bytesRead: 0 });
    pending.catch(() => undefined);
    position += wanted;
  };
  try {
    let cur = 0;
    let kept = 0;
    /** File offset of the first byte carried over (of the chunk when none is). */
    let base = from;
    let first = true;
    readAhead(buffers[0]!);
    for (;;) {
      throwIfCancelled(options.signal);
      const { bytesRead } = await pending;
      if (bytesRead === 0) break;
      const ended = bytesRead < wanted;
      const buf = buffers[cur]!;
      const next = buffers[1 - cur]!;
      if (ended) {
        position -= wanted - bytesRead;
        wanted = 0;
        pending = Promise.resolve({ bytesRead: 0 });
      } else readAhead(next);
      let start = room - kept;
      const end = room + bytesRead;
      if (first && options.fileStart !== undefined) {
        assertTextHead(buf.subarray(start, end), options.fileStart);
        if (buf[start] === 0xef && buf[start + 1] === 0xbb && buf[start + 2] === 0xbf) start += 3;
      }
      first = false;
      const bufBase = base - (room - kept);
      await options.guard.check(buf, start, end, bufBase, false);
      const consumed = sink.feed(buf, start, end, bufBase, false);
      const tail = end - consumed;
      base = bufBase + consumed;
      options.onBytes(position - wanted);
      if (tail > room) {
        // A record longer than the room: wait for the chunk in flight and move both into larger buffers.
        const { bytesRead: ahead } = await pending;
        const grownRoom = Math.max(room * 2, tail);
        const grown = Buffer.allocUnsafe(grownRoom + chunk);
        buf.copy(grown, grownRoom - tail, consumed, end);
        next.copy(grown, grownRoom, room, room + ahead);
        const spare = Buffer.allocUnsafe(grownRoom + chunk);
        buffers = cur === 0 ? [spare, grown] : [grown, spare];
        room = grownRoom;
        pending = Promise.resolve({ bytesRead: ahead });
      } else {
        buf.copy(next, room - tail, consumed, end);
      }
      kept = tail;
      cur = 1 - cur;
    }
    throwIfCancelled(options.signal);
    await options.guard.check(buffers[cur]!, room - kept, room, base - (room - kept), true);
    sink.feed(buffers[cur]!, room - kept, room, base - (room - kept), true);
  } finally {
    await pending.catch(() => undefined);
    await fh.close();
    if (options.reuse !== undefined) options.reuse.pair = buffers;
  }
}

/** Feeds chunks to the sink, carrying an unfinished record over to the next chunk. */
async function feedChunks(chunks: AsyncIterable<Buffer>, sink: RecordSink, fileStart: string,
  signal: AbortSignal | undefined, afterChunk: () => void): Promise<void> {
  let carry: Buffer | undefined;
  let carryBase = 0;
  let nextBase = 0;
  let first = true;
  const guard = new TextGuard(fileStart, true, 0);
  for await (const chunk of chunks) {
    throwIfCancelled(signal);
    let buf = chunk;
    let base = nextBase;
    if (carry !== undefined && carry.length > 0) {
      buf = Buffer.concat([carry, chunk]);
      base = carryBase;
    }
    nextBase = base + buf.length;
    let start = 0;
    if (first) {
      assertTextHead(buf, fileStart);
      if (buf[0] === 0xef && buf[1] === 0xbb && buf[2] === 0xbf) start = 3;
    }
    first = false;
    await guard.check(buf, start, buf.length, base, false);
    const consumed = sink.feed(buf, start, buf.length, base, false);
    carry = buf.subarray(consumed);
    carryBase = base + consumed;
    afterChunk();
  }
  throwIfCancelled(signal);
  const rest = carry ?? Buffer.alloc(0);
  await guard.check(rest, 0, rest.length, carryBase, true);
  sink.feed(rest, 0, rest.length, carryBase, true);
}

async function* gunzipChunks(path: string, progress: { done: number }): AsyncGenerator<Buffer> {
  const chunkSize = Math.max(64, engineSettings().tuning.gzipChunkBytes);
  const raw = createReadStream(path, { highWaterMark: chunkSize });
  const gunzip = createGunzip({ chunkSize });
  raw.on('data', (d) => {
    progress.done += d.length;
  });
  raw.on('error', (err) => gunzip.destroy(err));
  raw.pipe(gunzip);
  try {
    for await (const chunk of gunzip) yield chunk as Buffer;
  } catch (err) {
    throw new InputError('a complete gzip stream: the file is truncated or corrupt gzip', path, undefined, (err as Error).message);
  } finally {
    raw.destroy();
  }
}

/**
 * Calls `onLine` for each line (without its line end; a trailing CR is dropped), with the line's
 * 1-based number and the byte offset of its first byte.
 */
export class LineSink implements RecordSink {
  private line = 1;

  constructor(private readonly onLine: (buf: Buffer, start: number, end: number, line: number, offset: number) => void) {}

  /** Lines ended so far (by a newline, or by the end of the input). */
  get linesRead(): number {
    return this.line - 1;
  }

  feed(buf: Buffer, start: number, end: number, base: number, final: boolean): number {
    let pos = start;
    while (pos < end) {
      // The native search, without a view per line: it stops at the line's end; only a chunk's last,
      // cut line may search past `end`, once per chunk.
      let lineEnd = buf.indexOf(10, pos);
      if (lineEnd < 0 || lineEnd >= end) {
        if (!final) break;
        lineEnd = end;
      }
      const contentEnd = lineEnd > pos && buf[lineEnd - 1] === 13 ? lineEnd - 1 : lineEnd;
      this.onLine(buf, pos, contentEnd, this.line, base + pos);
      pos = lineEnd + 1;
      this.line++;
    }
    return Math.min(pos, end);
  }
}

/** Splits buf[start, end) at runs of spaces and tabs; fills bounds and returns the field count (at most `max`+1). */
export function splitWhitespace(buf: Buffer, start: number, end: number, starts: Int32Array, ends: Int32Array): number {
  let n = 0;
  let pos = start;
  const max = starts.length;
  while (pos < end) {
    while (pos < end && (buf[pos] === 32 || buf[pos] === 9)) pos++;
    if (pos >= end) break;
    if (n === max) return n + 1;
    starts[n] = pos;
    while (pos < end && buf[pos] !== 32 && buf[pos] !== 9) pos++;
    ends[n++] = pos;
  }
  return n;
}
