// AssemblyScript, compiled to WebAssembly by build.mjs (not part of the TypeScript program).
//
// The byte loop of delimited text, for the records delimitedFast.ts takes (complete records whose
// numbers are decimals or missing), and also those whose fields are quoted simply (no doubled quote, no
// line end inside). It cuts fields, hashes id fields, compares query and segment fields with the
// previous row's bytes and parses numbers, writing one row of plain values per record; interning stays
// in JavaScript. Any record it is unsure about ends the call and is left to the JavaScript parsers, so
// everything here must give bit-identical results to delimitedFast.ts, and to the careful parser for
// quoted fields (the equivalence tests compare them on random files). A loop in WebAssembly runs without the
// bounds checks and type guards of the same loop in JavaScript, which made it the cheaper one.
//
// Memory layout (byte offsets set by the host with `layout`): the settings block, the input bytes,
// then one column of rows per output.

import { decimalToDouble } from './decimalToDouble';

const LF: u32 = 10;
const CR: u32 = 13;
const MINUS: u32 = 45;
const DOT: u32 = 46;
const QUOTE: u32 = 34;
const HASH_SEED: i32 = 0x811c9dc5;
const HASH_PRIME: i32 = 0x01000193;
const TWO_53: u64 = 9007199254740992;
const LOWER_E: u32 = 101;
const PLUS: u32 = 43;
// Exponents past this many digits are clamped (10^±99999 is far outside the doubles either way).
const EXPONENT_CAP: i32 = 99999;

// Roles, as in delimitedFast.ts; a field of no role (below 0) is skipped unread.
const ROLE_QUERY: i32 = 0;
const ROLE_ITEM: i32 = 1;
const ROLE_LABEL: i32 = 2;
const ROLE_SCORE: i32 = 3;
const ROLE_RANK: i32 = 4;
const ROLE_SEGMENT: i32 = 5;

// Where things are; set once by `layout`.
let rolesAt: usize = 0; // i32 per field
let pow10At: usize = 0; // f64 × 23, written by the host (the very constants the JavaScript path divides by)
let previousAt: usize = 0; // i32 start and end per field: where the previous row's field lay
let fieldCount: i32 = 0;
let idSlotAt: usize = 0; // i32 per field: output slot of an id field (query, item or segment), -1 otherwise
let idStartAt: usize = 0; // per id slot, per row: i32 start (-1: same bytes as the previous row)
let idEndAt: usize = 0;
let idHashAt: usize = 0;
let labelAt: usize = 0; // f64 per row
let scoreAt: usize = 0; // f64 per row
let lineAt: usize = 0; // u32 per row
let startAt: usize = 0; // u32 per row: record start
let itemBytesAt: usize = 0; // the item fields' bytes, one after another (0: not written)
let itemEndAt: usize = 0; // u32 per row: end of the row's item bytes there
let changesAt: usize = 0; // per id slot, per row: i32 rows whose query or segment bytes differ from the row before
let changeCountAt: usize = 0; // i32 per id slot: how many rows are listed there
let summaryAt: usize = 0; // f64 × 4: the last call's unjudged rows, rows without a score, lowest and highest grade
let maxRows: i32 = 0;

/**
 * Where the settings and outputs live; `rows` is the most rows one call may write. With `itemBytes`
 * set, the item field of every row is also copied there, one after another, so the host keeps them
 * with one block copy (the item bytes of a call never exceed its input).
 */
export function layout(roles: usize, pow10: usize, previous: usize, fields: i32, idSlot: usize, idStart: usize, idEnd: usize,
  idHash: usize, label: usize, score: usize, line: usize, start: usize, rows: i32, itemBytes: usize, itemEnd: usize, changes: usize,
  changeCount: usize, summary: usize): void {
  summaryAt = summary;
  changesAt = changes;
  changeCountAt = changeCount;
  itemBytesAt = itemBytes;
  itemEndAt = itemEnd;
  rolesAt = roles;
  pow10At = pow10;
  previousAt = previous;
  fieldCount = fields;
  idSlotAt = idSlot;
  idStartAt = idStart;
  idEndAt = idEnd;
  idHashAt = idHash;
  labelAt = label;
  scoreAt = score;
  lineAt = line;
  startAt = start;
  maxRows = rows;
}

// Results of the last call, read by the host.
let endPosition: u32 = 0;
let endLine: u32 = 0;
// Over the rows of the last call, as model/rowSummary.ts counts them: rows without a grade, rows without a
// score, and the judged grades' extremes (Infinity and -Infinity when none is judged), written at the
// end of a call as four doubles at summaryAt.
let unjudged: i32 = 0;
let missing: i32 = 0;
let lowest: f64 = Infinity;
let highest: f64 = -Infinity;

/** Where the static data (the powers of five) ends: the host lays out its blocks after it. */
export function dataEnd(): usize {
  return __heap_base;
}

export function stoppedAt(): u32 {
  return endPosition;
}

export function lineAfter(): u32 {
  return endLine;
}

@inline function finishHash(h: i32): i32 {
  h ^= <i32>(<u32>h >>> 16);
  h = h * 0x85ebca6b;
  h ^= <i32>(<u32>h >>> 13);
  return h;
}

/** The first byte from `at` on that equals a byte of `these` or is below a byte of `below`, 16 bytes at a time. */
@inline function firstOf(at: usize, these: v128, below: v128): usize {
  while (true) {
    const v = v128.load(at);
    const found = i8x16.bitmask(v128.or(i8x16.eq(v, these), i8x16.lt_u(v, below)));
    if (found != 0) return at + ctz(found);
    at += 16;
  }
}

let lastExponent: i32 = 0;

/** The byte at `p`, as lower case when it is a letter of A to Z. */
@inline function lower(p: usize): u32 {
  const b = <u32>load<u8>(p);
  return b - 65 < 26 ? b | 0x20 : b;
}

/** Whether [s, e) is empty or one of the missing-value words, in any case and without spaces: nan, na, n/a, null, none, ?. */
function isMissingWord(s: usize, e: usize): bool {
  const length = e - s;
  if (length == 0) return true;
  if (length > 4) return false;
  const first = lower(s);
  if (length == 1) return first == 63; // ?
  if (first != 110) return false; // n
  const second = lower(s + 1);
  if (length == 2) return second == 97; // na
  const third = lower(s + 2);
  if (length == 3) return (second == 97 && third == 110) || (second == 47 && third == 97); // nan, n/a
  const fourth = lower(s + 3);
  return (second == 117 && third == 108 && fourth == 108) || (second == 111 && third == 110 && fourth == 101); // null, none
}

/**
 * The exponent's sign and digits from `p` (just past the e), up to `e`: into lastExponent (clamped to
 * ±EXPONENT_CAP). Returns where the digits stopped; `e` when the field ends there with at least one digit.
 */
function parseExponent(p: usize, e: usize): usize {
  let sign: i32 = 1;
  if (p < e) {
    const b = <u32>load<u8>(p);
    if (b == MINUS || b == PLUS) {
      if (b == MINUS) sign = -1;
      p++;
    }
  }
  const first = p;
  let value: i32 = 0;
  for (; p < e; p++) {
    const d = <u32>load<u8>(p) - 48;
    if (d > 9) break;
    if (value < EXPONENT_CAP) value = value * 10 + <i32>d;
  }
  lastExponent = sign * min(value, EXPONENT_CAP);
  return p > first ? p : first - 1;
}

/**
 * Parses records from [pos, limit) (limit is a line start or the end of the input; the byte at limit
 * must be 0, and 16 bytes past it readable), starting at line
 * `line`; `rankIsScore` says a rank column stands in for the missing score (score = -rank). Returns
 * the rows written; `stoppedAt` is the first byte not consumed and `lineAfter` its line.
 */
export function parse(pos: u32, limit: u32, delimiter: u32, line: u32, rankIsScore: bool): i32 {
  const fields = fieldCount;
  for (let f = 0; f < fields; f++) {
    store<i32>(previousAt + (<usize>f << 3), -1);
    store<i32>(changeCountAt + (<usize>f << 2), 0);
  }
  unjudged = 0;
  missing = 0;
  lowest = Infinity;
  highest = -Infinity;
  let row: i32 = 0;
  let itemUsed: usize = 0;
  const delimiterBytes = i8x16.splat(<i8>delimiter);
  const quoteBytes = i8x16.splat(<i8>QUOTE);
  const controlBytes = i8x16.splat(14);
  while (pos < limit && row < maxRows) {
    let c: u32 = load<u8>(pos);
    if (c == LF) {
      pos++;
      line++;
      continue;
    }
    if (c == CR) break;
    const recordStart = pos;
    const itemUsedBefore = itemUsed;
    let label: f64 = NaN;
    let score: f64 = NaN;
    let ok = true;
    for (let f = 0; f < fields; f++) {
      let s = pos;
      const role = load<i32>(rolesAt + (<usize>f << 2));
      const isId = role == ROLE_QUERY || role == ROLE_ITEM || role >= ROLE_SEGMENT;
      // The field ends at its first delimiter or control byte, found 16 bytes at a time, so the loops below
      // know their length instead of testing every byte for the end. The host puts a 0 byte at the limit,
      // which ends the last field there; loads may read up to 15 bytes past it, room the host leaves.
      let e = pos;
      // Where the field's text ends: `e`, or after the closing quote of a quoted field.
      let after = pos;
      if (pos < limit && <u32>load<u8>(pos) == QUOTE) {
        // A quoted field (RFC 4180) is an id's text, or a number's, when it holds no quote and no control byte
        // (no doubled quote, no line end) and its closing quote ends the field; anything else is the careful
        // parser's. A quote inside an unquoted field is text, as the careful parser takes it.
        const q = firstOf(pos + 1, quoteBytes, controlBytes);
        if (q >= limit || <u32>load<u8>(q) != QUOTE) {
          ok = false;
          break;
        }
        s = pos + 1;
        e = q;
        after = q + 1;
      } else {
        e = firstOf(pos, delimiterBytes, controlBytes);
        if (e > limit) e = limit; // only without the 0 byte at the limit
        after = e;
      }
      c = after < limit ? <u32>load<u8>(after) : 0;
      let repeated = false;
      let hash: i32 = 0;
      let value: f64 = 0;
      if (isId) {
        if (role != ROLE_ITEM) {
          // Same bytes as the previous row's field (same length, same bytes): the host reuses that row's id.
          const from = load<i32>(previousAt + (<usize>f << 3));
          const length = e - s;
          if (from >= 0 && <u32>(load<i32>(previousAt + (<usize>f << 3), 4) - from) == length) {
            // 16 bytes at a time, the bytes past the field masked off (both fields lie in the input, which has
            // room after it): 3 ns a record less than 8 bytes at a time and a byte loop for the rest.
            let i: u32 = 0;
            while (i + 16 <= length && i8x16.all_true(i8x16.eq(v128.load(s + i), v128.load(<usize>from + i)))) i += 16;
            if (i + 16 > length) {
              const differ = ~i8x16.bitmask(i8x16.eq(v128.load(s + i), v128.load(<usize>from + i)));
              repeated = (differ & ((1 << <i32>(length - i)) - 1)) == 0;
            }
          }
        }
        if (!repeated) {
          let h = HASH_SEED;
          for (let p = s; p < e; p++) h = (h ^ <i32>load<u8>(p)) * HASH_PRIME;
          hash = finishHash(h);
        }
      } else if (role >= 0 && role != ROLE_RANK && isMissingWord(s, e)) {
        // An empty field, or NaN, NA, N/A, null, None or ? in any case: a grade or score that is missing, as the
        // careful parser reads it (numbers.ts, describeNonNumber). A rank stays the JavaScript parsers' (its
        // negation would have to give their NaN's bits).
        value = NaN;
      } else if (role >= 0) {
        // A decimal: an optional minus, digits with at most one dot, an optional exponent. The significant
        // digits are summed as an integer, exact up to 19 of them. Without an exponent and up to 2^53 it is
        // divided once by the power of ten, as the JavaScript parsers do (exact: see numbers.ts); otherwise
        // (the 17 digits printers give a double, an exponent) decimalToDouble rounds it, or leaves it to them.
        let p = s;
        const negative = p < e && <u32>load<u8>(p) == MINUS;
        if (negative) p++;
        let mantissa: u64 = 0;
        let digits: i32 = 0;
        let significant: i32 = 0;
        let fraction: i32 = -1;
        let plain = true;
        let exponent: i32 = 0;
        let hasExponent = false;
        for (; p < e; p++) {
          const b = <u32>load<u8>(p);
          const d = b - 48;
          if (d <= 9) {
            mantissa = mantissa * 10 + <u64>d;
            digits++;
            if (mantissa != 0) significant++;
          } else if (b == DOT && fraction < 0) {
            fraction = digits;
          } else if ((b | 0x20) == LOWER_E && digits > 0) {
            p = parseExponent(p + 1, e);
            hasExponent = p == e;
            plain = hasExponent;
            exponent = lastExponent;
            break;
          } else {
            plain = false;
            break;
          }
        }
        const fractionDigits = fraction < 0 ? 0 : digits - fraction;
        if (plain && digits > 0 && significant <= 19) {
          if (!hasExponent && mantissa <= TWO_53 && fractionDigits <= 22) {
            const m = <f64>mantissa;
            value = fractionDigits == 0 ? m : m / load<f64>(pow10At + (<usize>fractionDigits << 3));
            if (negative) value = -value;
          } else {
            value = decimalToDouble(mantissa, exponent - fractionDigits, negative);
            if (isNaN(value)) {
              ok = false;
              break;
            }
          }
        } else {
          // Not a decimal this loop reads (empty, NaN, more than 19 significant digits, ...): the JavaScript
          // parsers take this record.
          ok = false;
          break;
        }
      }
      pos = after;
      if (f < fields - 1) {
        if (pos >= limit || c != delimiter) {
          ok = false;
          break;
        }
        pos++;
      } else if (pos < limit) {
        if (c == CR && pos + 1 < limit && <u32>load<u8>(pos + 1) == LF) pos++;
        else if (c != LF) {
          ok = false;
          break;
        }
        pos++;
      }
      if (isId) {
        const slot = load<i32>(idSlotAt + (<usize>f << 2));
        const at = (<usize>slot * <usize>maxRows + <usize>row) << 2;
        store<i32>(idStartAt + at, repeated ? -1 : <i32>s);
        store<i32>(idEndAt + at, <i32>e);
        store<i32>(idHashAt + at, hash);
        if (role != ROLE_ITEM) {
          store<i32>(previousAt + (<usize>f << 3), <i32>s);
          store<i32>(previousAt + (<usize>f << 3), <i32>e, 4);
          if (!repeated) {
            // Listed, so the host handles a run of repeats with one fill instead of a look at every row.
            const counted = changeCountAt + (<usize>slot << 2);
            const k = load<i32>(counted);
            store<i32>(changesAt + ((<usize>slot * <usize>maxRows + <usize>k) << 2), row);
            store<i32>(counted, k + 1);
          }
        } else if (itemBytesAt != 0) {
          // 16 bytes at a time (memory.copy cost 6 ns a row here); the host leaves room for the overshoot.
          const to = itemBytesAt + itemUsed;
          for (let p: usize = 0; p < <usize>(e - s); p += 16) v128.store(to + p, v128.load(<usize>s + p));
          itemUsed += e - s;
        }
      } else if (role == ROLE_LABEL) {
        label = value;
      } else if (role == ROLE_SCORE) {
        score = value;
      } else if (role == ROLE_RANK) {
        if (rankIsScore) score = -value;
      }
    }
    if (!ok) {
      pos = recordStart;
      itemUsed = itemUsedBefore;
      break;
    }
    if (itemBytesAt != 0) store<u32>(itemEndAt + (<usize>row << 2), <u32>itemUsed);
    if (label != label) unjudged++;
    else {
      if (label < lowest) lowest = label;
      if (label > highest) highest = label;
    }
    if (score != score) missing++;
    store<f64>(labelAt + (<usize>row << 3), label);
    store<f64>(scoreAt + (<usize>row << 3), score);
    store<u32>(lineAt + (<usize>row << 2), line);
    store<u32>(startAt + (<usize>row << 2), recordStart);
    row++;
    line++;
  }
  endPosition = pos;
  endLine = line;
  store<f64>(summaryAt, <f64>unjudged);
  store<f64>(summaryAt, <f64>missing, 8);
  store<f64>(summaryAt, lowest, 16);
  store<f64>(summaryAt, highest, 24);
  return row;
}
