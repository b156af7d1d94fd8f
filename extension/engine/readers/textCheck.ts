/**
 * The one text policy of every reader: a text dump is UTF-8 (an optional UTF-8 byte-order mark is
 * skipped). Bytes that are not UTF-8 and NUL bytes are refused with the file and line, never replaced:
 * replacing them with U+FFFD would merge distinct ids ("q\xE9" and "q\xE8" would both become "q\uFFFD").
 * UTF-16 files are recognised and refused with a message saying so.
 */
import { isUtf8 } from 'node:buffer';
import { createReadStream } from 'node:fs';
import { createGunzip } from 'node:zlib';
import { InputError } from '../errors';
import { indexOfByte } from './byteSearch';

/** Refuses a head that is UTF-16 or binary, or holds bytes that are not UTF-8 (the last, cut sequence excepted). */
export function assertTextHead(head: Uint8Array, file: string): void {
  const probe = head.subarray(0, 1024);
  if ((probe[0] === 0xff && probe[1] === 0xfe) || (probe[0] === 0xfe && probe[1] === 0xff) || looksUtf16(probe)) {
    throw new InputError('UTF-8 text, but the file is UTF-16: save it as UTF-8', file, 1);
  }
  const nul = probe.indexOf(0);
  if (nul >= 0 && looksBinary(probe)) throw new InputError('a text dump, but the first KB holds NUL bytes: binary data, not a text dump', file);
  const bad = firstBadByte(probe, 0, probe.length, false);
  if (bad >= 0) {
    if (looksBinary(probe)) throw new InputError('a text dump, but the first KB is not valid UTF-8: binary data, not a text dump', file);
    throw badByteError(probe, bad, file, 1 + countNewlines(probe, 0, bad));
  }
}

/**
 * Index of the first NUL byte or byte that is not UTF-8 in buf[start, end), or -1. With `complete` false a
 * sequence cut by `end` is not an error (the next chunk completes it).
 */
export function firstBadByte(buf: Uint8Array, start: number, end: number, complete: boolean): number {
  const nulAt = indexOfByte(buf, 0, start, end);
  const limit = nulAt >= 0 ? nulAt : end;
  if (isUtf8(buf.subarray(start, limit))) return nulAt;
  // Slow path, only on bad input: walk the sequences.
  let i = start;
  while (i < limit) {
    const b = buf[i]!;
    if (b < 0x80) {
      i++;
      continue;
    }
    const length = b >= 0xc2 && b <= 0xdf ? 2 : b >= 0xe0 && b <= 0xef ? 3 : b >= 0xf0 && b <= 0xf4 ? 4 : 0;
    if (length === 0) return i;
    if (i + length > limit) return !complete && limit === end && isUtf8Prefix(buf, i, end) ? -1 : i;
    if (!isUtf8(buf.subarray(i, i + length))) return i;
    i += length;
  }
  return nulAt;
}

/** True when buf[i, end) can begin a valid sequence (its continuation bytes are still to come). */
function isUtf8Prefix(buf: Uint8Array, i: number, end: number): boolean {
  const b = buf[i]!;
  const length = b >= 0xf0 ? 4 : b >= 0xe0 ? 3 : 2;
  const probe = new Uint8Array(length);
  // Some continuation byte completes any valid prefix: E0 needs A0..BF, ED 80..9F, F0 90..BF, F4 80..8F.
  return [0x80, 0x90, 0xbf].some((fill) => {
    probe.fill(fill);
    probe.set(buf.subarray(i, end));
    return isUtf8(probe);
  });
}

export function countNewlines(buf: Uint8Array, start: number, end: number): number {
  let n = 0;
  for (let i = indexOfByte(buf, 10, start, end); i >= 0; i = indexOfByte(buf, 10, i + 1, end)) n++;
  return n;
}

/** The error for a bad byte at buf[at], on the given line. */
export function badByteError(buf: Uint8Array, at: number, file: string, line: number, lowest = 0): InputError {
  let lineStart = at;
  while (lineStart > lowest && buf[lineStart - 1] !== 10 && at - lineStart < 200) lineStart--;
  const column = at - lineStart + 1;
  const b = buf[at]!;
  const place = buf[lineStart - 1] === 10 || lineStart === lowest ? ` at byte ${column} of the line` : '';
  const what = b === 0
    ? `a NUL byte${place}: NUL is not text`
    : `byte 0x${b.toString(16).toUpperCase().padStart(2, '0')}${place} is not UTF-8; ids are compared as text, so save the file as UTF-8`;
  return new InputError(`UTF-8 text without NUL bytes (${what})`,
    file, line, escapeBytes(buf.subarray(lineStart, Math.min(buf.length, at + 20))));
}

/**
 * Printable ASCII as is, every other byte (and '<') as <NN> in hex: a visible, lossless form of bytes for
 * messages, which stays readable inside the JSON quoting of InputError's "found" (a \xNN would double).
 */
export function escapeBytes(bytes: Uint8Array): string {
  let out = '';
  for (const b of bytes) {
    if (b === 10 || b === 13) break;
    out += b >= 0x20 && b < 0x7f && b !== 0x3c ? String.fromCharCode(b) : `<${b.toString(16).toUpperCase().padStart(2, '0')}>`;
  }
  return out;
}

/** 1-based line of the text byte at `offset`, counting from text byte `from` (a line start), re-reading the file. */
export async function lineAt(path: string, gzip: boolean, from: number, offset: number): Promise<number> {
  const raw = createReadStream(path, gzip ? {} : { start: from, end: Math.max(from, offset - 1) });
  const stream = gzip ? raw.pipe(createGunzip()) : raw;
  let position = gzip ? 0 : from;
  let lines = 1;
  try {
    for await (const chunk of stream as AsyncIterable<Buffer>) {
      const lo = Math.max(0, from - position);
      const hi = Math.min(chunk.length, offset - position);
      if (hi > lo) lines += countNewlines(chunk, lo, hi);
      position += chunk.length;
      if (position >= offset) break;
    }
  } finally {
    raw.destroy();
  }
  return lines;
}

/** UTF-16 text without a byte-order mark: mostly ASCII with a NUL beside every character. */
function looksUtf16(probe: Uint8Array): boolean {
  if (probe.length < 8) return false;
  let evenNul = 0;
  let oddNul = 0;
  for (let i = 0; i + 1 < probe.length; i += 2) {
    if (probe[i] === 0 && probe[i + 1] !== 0) evenNul++;
    if (probe[i + 1] === 0 && probe[i] !== 0) oddNul++;
  }
  const pairs = Math.floor(probe.length / 2);
  return evenNul > pairs * 0.4 || oddNul > pairs * 0.4;
}

/** More than a tenth control bytes (other than tab, CR, LF): not a text file with a stray bad byte. */
function looksBinary(probe: Uint8Array): boolean {
  let control = 0;
  for (const b of probe) if (b < 32 && b !== 9 && b !== 10 && b !== 13) control++;
  return control > probe.length / 10;
}

/** JavaScript strings with a lone surrogate (JSON "\ud800") cannot be UTF-8: encoding them would merge ids. */
export function isWellFormedText(text: string): boolean {
  const s = text as unknown as { isWellFormed?: () => boolean };
  if (typeof s.isWellFormed === 'function') return s.isWellFormed();
  return !/[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/.test(text);
}
