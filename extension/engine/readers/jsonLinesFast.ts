/**
 * The hot loop for JSON Lines of one row per line: a line whose keys come in the shape's order (learnt from
 * the first lines; any but the query's and the item's may be absent, and keys the shape lacks may come
 * anywhere, read past and counted for the notes) and whose values are plain is stored
 * from its bytes, with no string decoded and no object built (JSON.parse and a string per value took 2 µs a
 * line: 21 s for 10M rows). Plain means: ids and segments are strings without a backslash (or ids that are
 * integers of up to 15 digits); grades and scores are JSON numbers (or null); fields of no role are any JSON
 * (checked by a strict grammar); whitespace is spaces and tabs. Any other line returns false, before
 * anything is stored, and goes to the JSON parser, which stores it or reports the problem: the same rows
 * either way. The text is valid UTF-8 (source.ts checks every byte), so an id's bytes are the UTF-8 of the
 * string JSON.parse would give.
 */
import type { RowColumns } from './columns';
import { POW10 } from './delimitedFast';
import { skipJsonString, skipJsonValue, skipSpace } from './jsonGrammar';
import { exponentEnd, strictDecimalValue } from './numbers';
import type { ResolvedRoles } from './roles';
import type { UnreadFieldsTally } from './unreadFields';

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
/** A field of no role; below every other kind, since segment k is KIND_SEGMENT + k for any k. */
const KIND_OTHER = -1;
/** A field that would be a segment, in a read that keeps none: read only when it is text without an escape. */
const KIND_CHECKED = -2;
const KIND_SEGMENT = 5;

export class FlatRowScanner {
  /** Per key, in the shape's order: `"key"` as JSON writes it, and its kind (segment k: KIND_SEGMENT + k). */
  private readonly keyBytes: Uint8Array[];
  private readonly kinds: Int32Array;
  private readonly valueStart: Int32Array;
  private readonly valueEnd: Int32Array;
  private readonly numbers: Float64Array;
  /** Each key's bytes as little-endian 32-bit words (the bytes past the last whole word are compared one by one). */
  private readonly keyWords: Int32Array[];
  private lastQuery = -1;
  /** Where the keys the shape lacks lie on the line last scanned (between the quotes), and how many. */
  private readonly extraStart: number[] = [];
  private readonly extraEnd: number[] = [];
  private extraCount = 0;
  /** A view of the buffer last scanned, to read four bytes at once. */
  private view: DataView = new DataView(new ArrayBuffer(0));
  private viewOf: Uint8Array | undefined;

  /** `checkedOnly`: fields that would be segments in a read that keeps none (see KIND_CHECKED). */
  constructor(keys: readonly string[], roles: ResolvedRoles, private readonly rankStandsInForScore: boolean, checkedOnly: readonly number[] = []) {
    const encoder = new TextEncoder();
    this.keyBytes = keys.map((k) => encoder.encode(JSON.stringify(k)));
    this.kinds = Int32Array.from(keys, (_, i) => {
      if (i === roles.query) return KIND_QUERY;
      if (i === roles.item) return KIND_ITEM;
      if (i === roles.label) return KIND_LABEL;
      if (i === roles.score) return KIND_SCORE;
      if (i === roles.rank) return KIND_RANK;
      const segment = roles.segments.indexOf(i);
      if (segment >= 0) return KIND_SEGMENT + segment;
      return checkedOnly.includes(i) ? KIND_CHECKED : KIND_OTHER;
    });
    this.valueStart = new Int32Array(keys.length);
    this.valueEnd = new Int32Array(keys.length);
    this.numbers = new Float64Array(keys.length);
    this.keyWords = this.keyBytes.map((k) => Int32Array.from({ length: k.length >> 2 }, (_, w) => new DataView(k.buffer).getInt32(4 * w, true)));
  }

  /** Stores the row of line buf[start, end) when it is plain (see the module comment); false, storing nothing, otherwise. */
  store(buf: Uint8Array, start: number, end: number, rows: RowColumns, line: number, offset: number): boolean {
    const fields = this.kinds.length;
    if (buf !== this.viewOf) {
      this.view = new DataView(buf.buffer, buf.byteOffset, buf.byteLength);
      this.viewOf = buf;
    }
    const view = this.view;
    let pos = skipSpace(buf, start, end);
    if (pos >= end || buf[pos] !== 123) return false;
    pos = skipSpace(buf, pos + 1, end);
    // Keys come in the shape's order; any but the query's and the item's may be absent (a grade written
    // only on judged rows), and read as JSON.parse's line reads an absent key (see absent). A key the shape
    // lacks may come anywhere: it is read past and listed (see tallyExtraKeys).
    this.extraCount = 0;
    let f = 0;
    for (;;) {
      let g = f;
      while (g < fields && !this.keyAt(buf, pos, end, g, view)) g++;
      if (g === fields) {
        pos = this.skipExtraField(buf, pos, end, view);
        if (pos < 0) return false;
      } else {
        for (let a = f; a < g; a++) if (!this.absent(a)) return false;
        f = g + 1;
        pos = skipSpace(buf, pos + this.keyBytes[g]!.length, end);
        if (pos >= end || buf[pos] !== 58) return false;
        pos = skipSpace(buf, pos + 1, end);
        pos = this.value(buf, pos, end, g, view);
        if (pos < 0) return false;
      }
      pos = skipSpace(buf, pos, end);
      if (pos >= end) return false;
      if (buf[pos] === 125) {
        pos++;
        break;
      }
      if (buf[pos] !== 44) return false;
      pos = skipSpace(buf, pos + 1, end);
    }
    for (let g = f; g < fields; g++) if (!this.absent(g)) return false;
    if (skipSpace(buf, pos, end) !== end) return false;
    this.storeRow(buf, rows, line, offset);
    return true;
  }

  /**
   * Counts the line last stored, `line`, in `tally` with the keys the shape lacks on it, in the line's order
   * (JSON.parse's object lists them so; a key written twice is one key). `buf`: the buffer it was stored from.
   */
  tallyExtraKeys(tally: UnreadFieldsTally, line: number, buf: Uint8Array): void {
    tally.addLine(line);
    for (let k = 0; k < this.extraCount && tally.wantsKeys; k++) tally.addKeyBytes(buf, this.extraStart[k]!, this.extraEnd[k]!);
  }

  /** Keys the shape lacks on the line last stored (repeats counted). */
  get extraFields(): number {
    return this.extraCount;
  }

  /**
   * Past a field whose key is none of the shape's keys (first written after the lines the shape is learnt
   * from), its key listed; -1 hands the line over. Handed over too: a key written with an escape (it may
   * spell one of the shape's keys), a key starting with a digit (an array index, which JSON.parse's object
   * lists before every other key, so the note's key order would differ), and a shape key out of order or
   * written twice (JSON.parse keeps its last value).
   */
  private skipExtraField(buf: Uint8Array, pos: number, end: number, view: DataView): number {
    if (pos >= end || buf[pos] !== QUOTE) return -1;
    const keyEnd = skipJsonString(buf, pos, end);
    if (keyEnd < 0 || (buf[pos + 1]! >= 48 && buf[pos + 1]! <= 57)) return -1;
    for (let i = pos + 1; i < keyEnd - 1; i++) if (buf[i] === BACKSLASH) return -1;
    for (let g = 0; g < this.kinds.length; g++) if (this.keyAt(buf, pos, end, g, view)) return -1;
    this.extraStart[this.extraCount] = pos + 1;
    this.extraEnd[this.extraCount++] = keyEnd - 1;
    pos = skipSpace(buf, keyEnd, end);
    if (pos >= end || buf[pos] !== 58) return -1;
    return skipJsonValue(buf, skipSpace(buf, pos + 1, end), end, 0);
  }

  /** True when key g (as JSON writes it) starts at pos: four bytes at a time, then the rest. */
  private keyAt(buf: Uint8Array, pos: number, end: number, g: number, view: DataView): boolean {
    const key = this.keyBytes[g]!;
    if (pos + key.length > end) return false;
    const words = this.keyWords[g]!;
    for (let w = 0; w < words.length; w++) if (view.getInt32(pos + 4 * w, true) !== words[w]) return false;
    for (let i = 4 * words.length; i < key.length; i++) if (buf[pos + i] !== key[i]) return false;
    return true;
  }

  /**
   * Field f absent from the line: false for the query's and the item's (the JSON parser's line reports
   * it); otherwise what JSON.parse's line makes of an absent key: a missing grade or score, an empty
   * segment value.
   */
  private absent(f: number): boolean {
    const kind = this.kinds[f]!;
    if (kind === KIND_QUERY || kind === KIND_ITEM) return false;
    this.numbers[f] = NaN;
    this.valueStart[f] = 0;
    this.valueEnd[f] = 0;
    return true;
  }

  /** Reads field f's value at pos; the position after it, or -1 when the line is not plain. */
  private value(buf: Uint8Array, pos: number, end: number, f: number, view: DataView): number {
    if (pos >= end) return -1;
    const kind = this.kinds[f]!;
    const c = buf[pos]!;
    if (kind === KIND_LABEL || kind === KIND_SCORE || kind === KIND_RANK) {
      if (c === 110 && pos + 4 <= end && buf[pos + 1] === 117 && buf[pos + 2] === 108 && buf[pos + 3] === 108) {
        this.numbers[f] = NaN;
        return pos + 4;
      }
      return this.plainNumber(buf, pos, end, f);
    }
    if (kind === KIND_OTHER) {
      // A field of no role (text, a number, a literal, an array or object such as a feature vector): read
      // past when it is JSON as JSON.parse would accept it, otherwise the line is handed over.
      return skipJsonValue(buf, pos, end, 0);
    }
    if ((kind === KIND_QUERY || kind === KIND_ITEM) && (c === MINUS || (c >= 48 && c <= 57))) {
      // An integer id (item ids are often numbers) of at most 15 digits: JSON.parse's number prints back as
      // these very digits (String(Number(text)) === text below 10^15, -0 apart), the id the parser's line gives.
      const after = integerId(buf, pos, end);
      if (after < 0) return -1;
      this.valueStart[f] = pos;
      this.valueEnd[f] = after;
      return after;
    }
    if (c !== QUOTE) return -1;
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
    if (q >= end || buf[q] !== QUOTE) return -1;
    this.valueStart[f] = pos + 1;
    this.valueEnd[f] = q;
    return q + 1;
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
      } else if (kind >= KIND_SEGMENT) {
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

/** Past an integer of at most 15 digits without a leading zero (nor -0) and not followed by a fraction or exponent; else -1. */
function integerId(buf: Uint8Array, pos: number, end: number): number {
  const negative = buf[pos] === MINUS;
  const first = negative ? pos + 1 : pos;
  let p = first;
  while (p < end && buf[p]! >= 48 && buf[p]! <= 57) p++;
  const digits = p - first;
  if (digits === 0 || digits > 15 || (buf[first] === 48 && (digits > 1 || negative))) return -1;
  if (p < end && (buf[p] === DOT || buf[p] === 101 || buf[p] === 69)) return -1;
  return p;
}
