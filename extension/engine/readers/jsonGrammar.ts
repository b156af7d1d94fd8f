/**
 * The JSON grammar the byte loop (jsonLinesFast.ts) reads past without building anything: a value of no
 * role, and a key the file's shape lacks. Strict RFC 8259, so a line it accepts is one JSON.parse accepts.
 */
import { exponentEnd } from './numbers';

const QUOTE = 34;
const BACKSLASH = 92;
const MINUS = 45;
const DOT = 46;

export function skipSpace(buf: Uint8Array, pos: number, end: number): number {
  while (pos < end && (buf[pos] === 32 || buf[pos] === 9)) pos++;
  return pos;
}

/** Arrays and objects nested deeper than this are handed over (JSON.parse reads any depth). */
const MAX_DEPTH = 64;

/**
 * Where the JSON value starting at `pos` ends, or -1 when it is not one JSON.parse accepts or this reader
 * does not follow (a carriage return as space, nesting past MAX_DEPTH). Strict RFC 8259 grammar: strings
 * without raw control bytes and with only the escapes JSON defines, numbers without leading zeros, the three
 * literals, and arrays and objects of those; whitespace is spaces and tabs.
 */
export function skipJsonValue(buf: Uint8Array, pos: number, end: number, depth: number): number {
  if (pos >= end) return -1;
  const c = buf[pos]!;
  if (c === QUOTE) return skipJsonString(buf, pos, end);
  if (c === 91 || c === 123) {
    if (depth >= MAX_DEPTH) return -1;
    const object = c === 123;
    const close = object ? 125 : 93;
    pos = skipSpace(buf, pos + 1, end);
    if (pos < end && buf[pos] === close) return pos + 1;
    for (;;) {
      if (object) {
        if (pos >= end || buf[pos] !== QUOTE) return -1;
        pos = skipSpace(buf, skipJsonString(buf, pos, end), end);
        if (pos < 0 || pos >= end || buf[pos] !== 58) return -1;
        pos = skipSpace(buf, pos + 1, end);
      }
      pos = skipJsonValue(buf, pos, end, depth + 1);
      if (pos < 0) return -1;
      pos = skipSpace(buf, pos, end);
      if (pos >= end) return -1;
      if (buf[pos] === close) return pos + 1;
      if (buf[pos] !== 44) return -1;
      pos = skipSpace(buf, pos + 1, end);
    }
  }
  if (c === 116) return matches(buf, pos, end, LITERAL_TRUE);
  if (c === 102) return matches(buf, pos, end, LITERAL_FALSE);
  if (c === 110) return matches(buf, pos, end, LITERAL_NULL);
  return skipJsonNumber(buf, pos, end);
}

const LITERAL_TRUE = [116, 114, 117, 101];
const LITERAL_FALSE = [102, 97, 108, 115, 101];
const LITERAL_NULL = [110, 117, 108, 108];

function matches(buf: Uint8Array, pos: number, end: number, literal: readonly number[]): number {
  if (pos + literal.length > end) return -1;
  for (let i = 0; i < literal.length; i++) if (buf[pos + i] !== literal[i]) return -1;
  return pos + literal.length;
}

/** -?(0|[1-9][0-9]*)(.[0-9]+)?([eE][+-]?[0-9]+)? */
function skipJsonNumber(buf: Uint8Array, pos: number, end: number): number {
  if (pos < end && buf[pos] === MINUS) pos++;
  const first = pos;
  while (pos < end && buf[pos]! >= 48 && buf[pos]! <= 57) pos++;
  if (pos === first || (buf[first] === 48 && pos - first > 1)) return -1;
  if (pos < end && buf[pos] === DOT) {
    const from = ++pos;
    while (pos < end && buf[pos]! >= 48 && buf[pos]! <= 57) pos++;
    if (pos === from) return -1;
  }
  if (pos < end && (buf[pos] === 101 || buf[pos] === 69)) return exponentEnd(buf, pos, end);
  return pos;
}

/** Past the closing quote of the string at `pos`; -1 for a raw control byte or an escape JSON does not define. */
export function skipJsonString(buf: Uint8Array, pos: number, end: number): number {
  for (let i = pos + 1; i < end; ) {
    const b = buf[i]!;
    if (b === QUOTE) return i + 1;
    if (b < 32) return -1;
    if (b !== BACKSLASH) {
      i++;
      continue;
    }
    const e = i + 1 < end ? buf[i + 1]! : 0;
    if (e === QUOTE || e === BACKSLASH || e === 47 || e === 98 || e === 102 || e === 110 || e === 114 || e === 116) i += 2;
    else if (e === 117 && i + 6 <= end && isHex(buf[i + 2]!) && isHex(buf[i + 3]!) && isHex(buf[i + 4]!) && isHex(buf[i + 5]!)) i += 6;
    else return -1;
  }
  return -1;
}

function isHex(b: number): boolean {
  return (b >= 48 && b <= 57) || (b >= 97 && b <= 102) || (b >= 65 && b <= 70);
}
