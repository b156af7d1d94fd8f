/**
 * The hot loop for JSON Lines of one row per line: a line whose keys come in the first line's order and
 * whose values are plain is stored from its bytes, with no string decoded and no object built (JSON.parse
 * and a string per value took 2 µs a line: 21 s for 10M rows). Plain means: ids and segments are strings
 * without a backslash; grades and scores are JSON numbers (or null); whitespace is spaces
 * and tabs. Any other line returns false, before anything is stored, and goes to the JSON parser, which
 * stores it or reports the problem: the same rows either way. The text is valid UTF-8 (source.ts checks
 * every byte), so an id's bytes are the UTF-8 of the string JSON.parse would give.
 */
import type { RowColumns } from './columns';
import { POW10 } from './delimitedFast';
import { exponentEnd, strictDecimalValue } from './numbers';
import type { ResolvedRoles } from './roles';

const QUOTE = 34;
const BACKSLASH = 92;
const MINUS = 45;
const DOT = 46;
const TWO_53 = 2 ** 53;

/** What each key of the line is for. */
const KIND_QUERY = 0;
const KIND_ITEM = 1;
const KIND_LABEL = 2;
const KIND_SCORE = 3;
const KIND_RANK = 4;
const KIND_SEGMENT = 5;
const KIND_OTHER = 6;

export class FlatRowScanner {
  /** Per key, in the first line's order: `"key"` as JSON writes it, and its kind (segment k: KIND_SEGMENT + k). */
  private readonly keyBytes: Uint8Array[];
  private readonly kinds: Int32Array;
  private readonly valueStart: Int32Array;
  private readonly valueEnd: Int32Array;
  private readonly numbers: Float64Array;
  /** Each key's bytes as little-endian 32-bit words (the bytes past the last whole word are compared one by one). */
  private readonly keyWords: Int32Array[];
  private lastQuery = -1;
  /** A view of the buffer last scanned, to read four bytes at once. */
  private view: DataView = new DataView(new ArrayBuffer(0));
  private viewOf: Uint8Array | undefined;

  constructor(keys: readonly string[], roles: ResolvedRoles, private readonly rankStandsInForScore: boolean) {
    const encoder = new TextEncoder();
    this.keyBytes = keys.map((k) => encoder.encode(JSON.stringify(k)));
    this.kinds = Int32Array.from(keys, (_, i) => {
      if (i === roles.query) return KIND_QUERY;
      if (i === roles.item) return KIND_ITEM;
      if (i === roles.label) return KIND_LABEL;
      if (i === roles.score) return KIND_SCORE;
      if (i === roles.rank) return KIND_RANK;
      const segment = roles.segments.indexOf(i);
      return segment >= 0 ? KIND_SEGMENT + segment : KIND_OTHER;
    });
    this.valueStart = new Int32Array(keys.length);
    this.valueEnd = new Int32Array(keys.length);
    this.numbers = new Float64Array(keys.length);
    this.keyWords = this.keyBytes.map((k) => Int32Array.from({ length: k.length >> 2 }, (_, w) => new DataView(k.buffer).getInt32(4 * w, true)));
  }

  /** Stores the row of line buf[start, end) when it is plain (see the module comment); false, storing nothing, otherwise. */
  store(buf: Uint8Array, start: number, end: number, rows: RowColumns, line: number, offset: number): boolean {
    const kinds = this.kinds;
    const fields = kinds.length;
    if (buf !== this.viewOf) {
      this.view = new DataView(buf.buffer, buf.byteOffset, buf.byteLength);
      this.viewOf = buf;
    }
    const view = this.view;
    let pos = skipSpace(buf, start, end);
    if (pos >= end || buf[pos] !== 123) return false;
    pos++;
    for (let f = 0; f < fields; f++) {
      pos = skipSpace(buf, pos, end);
      const key = this.keyBytes[f]!;
      if (pos + key.length > end) return false;
      // Four bytes at a time, then the rest.
      const words = this.keyWords[f]!;
      for (let w = 0; w < words.length; w++) if (view.getInt32(pos + 4 * w, true) !== words[w]) return false;
      for (let i = 4 * words.length; i < key.length; i++) if (buf[pos + i] !== key[i]) return false;
      pos = skipSpace(buf, pos + key.length, end);
      if (pos >= end || buf[pos] !== 58) return false;
      pos = skipSpace(buf, pos + 1, end);
      if (pos >= end) return false;
      const kind = kinds[f]!;
      const c = buf[pos]!;
      if (kind === KIND_LABEL || kind === KIND_SCORE || kind === KIND_RANK) {
        if (c === 110 && pos + 4 <= end && buf[pos + 1] === 117 && buf[pos + 2] === 108 && buf[pos + 3] === 108) {
          this.numbers[f] = NaN;
          pos += 4;
        } else {
          const after = this.plainNumber(buf, pos, end, f);
          if (after < 0) return false;
          pos = after;
        }
      } else if (c === QUOTE) {
        // A string: up to the closing quote, with no escape and no control byte (JSON allows none raw).
        let q = pos + 1;
        // Four bytes at a time while none is a quote, a backslash or below 32 (a zero-byte test on the word
        // xor the byte, and a less-than-32 test: each exact as a yes or no); the bytes then find which.
        while (q + 4 <= end) {
          const w = view.getInt32(q, true);
          const quote = w ^ 0x22222222;
          const slash = w ^ 0x5c5c5c5c;
          if (((((quote - 0x01010101) & ~quote) | ((slash - 0x01010101) & ~slash) | ((w - 0x20202020) & ~w)) & 0x80808080) !== 0) break;
          q += 4;
        }
        while (q < end) {
          const b = buf[q]!;
          if (b === QUOTE || b === BACKSLASH || b < 32) break;
          q++;
        }
        if (q >= end || buf[q] !== QUOTE) return false;
        this.valueStart[f] = pos + 1;
        this.valueEnd[f] = q;
        pos = q + 1;
      } else if (kind === KIND_OTHER) {
        // A field of no role: only numbers, true, false and null are skipped here (nothing nested).
        const from = pos;
        while (pos < end && ((buf[pos]! >= 97 && buf[pos]! <= 122) || (buf[pos]! >= 48 && buf[pos]! <= 57) || buf[pos] === MINUS || buf[pos] === DOT
          || buf[pos] === 43 || buf[pos] === 69)) pos++;
        if (pos === from || !isLiteralOrNumber(buf, from, pos)) return false;
      } else {
        return false;
      }
      pos = skipSpace(buf, pos, end);
      if (pos >= end) return false;
      if (f < fields - 1) {
        if (buf[pos] !== 44) return false;
        pos++;
      } else if (buf[pos] !== 125) {
        return false;
      } else {
        pos++;
      }
    }
    if (skipSpace(buf, pos, end) !== end) return false;
    this.storeRow(buf, rows, line, offset);
    return true;
  }

  private storeRow(buf: Uint8Array, rows: RowColumns, line: number, offset: number): void {
    const row = rows.next();
    const kinds = this.kinds;
    let label = NaN;
    let score = NaN;
    for (let f = 0; f < kinds.length; f++) {
      const kind = kinds[f]!;
      const s = this.valueStart[f]!;
      const e = this.valueEnd[f]!;
      if (kind === KIND_QUERY) {
        const last = this.lastQuery;
        this.lastQuery = last >= 0 && rows.queries.matches(last, buf, s, e) ? last : rows.queries.intern(buf, s, e);
        rows.query[row] = this.lastQuery;
      } else if (kind === KIND_ITEM) {
        rows.setItemBytes(row, buf, s, e);
      } else if (kind === KIND_LABEL) {
        label = this.numbers[f]!;
      } else if (kind === KIND_SCORE) {
        score = this.numbers[f]!;
      } else if (kind === KIND_RANK) {
        if (this.rankStandsInForScore) score = -this.numbers[f]!;
      } else if (kind >= KIND_SEGMENT && kind < KIND_OTHER) {
        const k = kind - KIND_SEGMENT;
        rows.segmentIds[k]![row] = rows.segmentPools[k]!.intern(buf, s, e);
      }
    }
    rows.label[row] = label;
    rows.score[row] = score;
    rows.line[row] = line;
    rows.offset[row] = offset;
  }

  /**
   * A JSON number: without an exponent, below 2^53 as an integer and at most 22 digits after the point, its
   * value is the integer divided by an exact power of ten, rounded once, as JSON.parse rounds it; any other
   * (an exponent, the 17 digits printers give a double) is Number() of its text, which is what JSON.parse
   * gives for it. Returns the position after it, or -1 for text that is not a JSON number.
   */
  private plainNumber(buf: Uint8Array, pos: number, end: number, f: number): number {
    const start = pos;
    const negative = buf[pos] === MINUS;
    if (negative) pos++;
    const first = pos;
    let mantissa = 0;
    let digits = 0;
    while (pos < end && buf[pos]! >= 48 && buf[pos]! <= 57) {
      mantissa = mantissa * 10 + (buf[pos]! - 48);
      digits++;
      pos++;
    }
    // JSON: at least one digit, and no leading zero before another digit.
    if (digits === 0 || (buf[first] === 48 && digits > 1)) return -1;
    let fractionDigits = 0;
    if (pos < end && buf[pos] === DOT) {
      pos++;
      while (pos < end && buf[pos]! >= 48 && buf[pos]! <= 57) {
        mantissa = mantissa * 10 + (buf[pos]! - 48);
        fractionDigits++;
        pos++;
      }
      if (fractionDigits === 0) return -1;
    }
    if (pos < end && (buf[pos] === 101 || buf[pos] === 69)) {
      pos = exponentEnd(buf, pos, end);
      return pos < 0 ? -1 : this.numberFromText(buf, start, pos, f);
    }
    // Below 2^53 every partial sum was exact; at or above it one may have rounded.
    if (mantissa >= TWO_53 || fractionDigits > 22) return this.numberFromText(buf, start, pos, f);
    const value = fractionDigits === 0 ? mantissa : mantissa / POW10[fractionDigits]!;
    this.numbers[f] = negative ? -value : value;
    return pos;
  }

  /** A number past the double range (1e400) is left to the JSON parser's line, which says what it does with it. */
  private numberFromText(buf: Uint8Array, start: number, end: number, f: number): number {
    const value = strictDecimalValue(buf, start, end);
    if (value - value !== 0) return -1;
    this.numbers[f] = value;
    return end;
  }
}

function skipSpace(buf: Uint8Array, pos: number, end: number): number {
  while (pos < end && (buf[pos] === 32 || buf[pos] === 9)) pos++;
  return pos;
}

/** True for true, false, null or a number as JSON writes it (checked by JSON itself: rare enough). */
function isLiteralOrNumber(buf: Uint8Array, from: number, to: number): boolean {
  const text = String.fromCharCode(...buf.subarray(from, to));
  if (text === 'true' || text === 'false' || text === 'null') return true;
  return /^-?(0|[1-9]\d*)(\.\d+)?([eE][+-]?\d+)?$/.test(text);
}
