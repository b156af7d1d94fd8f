/**
 * The hot loop for delimited text: complete, quote-free records with plain numbers, parsed in one
 * pass with everything in locals. Any record it is unsure about (quotes, wrong field count, odd
 * control bytes, a number that is not a plain decimal) is left to the careful parser, which then
 * either stores it or reports the problem with its line. Stopping early has no visible effect:
 * interning is idempotent and a row is only counted once all of its fields are stored.
 */
import type { RowColumns } from './columns';
import { parseNumber } from './numbers';

export const ROLE_QUERY = 0;
export const ROLE_ITEM = 1;
export const ROLE_LABEL = 2;
export const ROLE_SCORE = 3;
export const ROLE_RANK = 4;
export const ROLE_SEGMENT = 5;

const LF = 10;
const CR = 13;

export interface FastState {
  readonly delimiter: number;
  readonly roleOf: Int32Array;
  readonly rankStandsInForScore: boolean;
  readonly rows: RowColumns | undefined;
  lastQuery: number;
  readonly lastSegment: Int32Array;
  /** 1-based line of the byte at the current position. */
  line: number;
}

/**
 * Stores records from buf[pos, limit), where limit is a line start (or the end of the last buffer),
 * and no quote byte lies before it. Returns the start of the first record it did not store.
 */
export function parseSimpleRecords(state: FastState, buf: Buffer, pos: number, limit: number, base: number): number {
  const rows = state.rows!;
  const roleOf = state.roleOf;
  const fields = roleOf.length;
  const delimiter = state.delimiter;
  const queries = rows.queries;
  const items = rows.items;
  let line = state.line;
  let lastQuery = state.lastQuery;
  while (pos < limit) {
    let c = buf[pos]!;
    if (c === LF) {
      pos++;
      line++;
      continue;
    }
    if (c === CR) break;
    const recordStart = pos;
    if (rows.count === rows.capacity) rows.reserve(rows.capacity * 1.5 + 1024);
    const row = rows.count;
    let label = NaN;
    let score = NaN;
    let ok = true;
    for (let f = 0; f < fields; f++) {
      const s = pos;
      c = 0;
      while (pos < limit) {
        c = buf[pos]!;
        if (c < 14 || c === delimiter) break;
        pos++;
      }
      const e = pos;
      if (f < fields - 1) {
        if (pos >= limit || c !== delimiter) {
          ok = false;
          break;
        }
        pos++;
      } else if (pos < limit) {
        if (c === CR && pos + 1 < limit && buf[pos + 1] === LF) pos++;
        else if (c !== LF) {
          ok = false;
          break;
        }
        pos++;
      }
      const role = roleOf[f]!;
      if (role === ROLE_ITEM) {
        rows.item[row] = items.intern(buf, s, e);
      } else if (role === ROLE_QUERY) {
        if (lastQuery < 0 || !queries.matches(lastQuery, buf, s, e)) lastQuery = queries.intern(buf, s, e);
        rows.query[row] = lastQuery;
      } else if (role === ROLE_LABEL) {
        label = parseNumber(buf, s, e);
        if (label - label !== 0) {
          ok = false;
          break;
        }
      } else if (role === ROLE_SCORE || (role === ROLE_RANK && state.rankStandsInForScore)) {
        score = parseNumber(buf, s, e);
        if (score - score !== 0) {
          ok = false;
          break;
        }
        if (role === ROLE_RANK) score = -score;
      } else if (role >= ROLE_SEGMENT) {
        const k = role - ROLE_SEGMENT;
        const pool = rows.segmentPools[k]!;
        let id = state.lastSegment[k]!;
        if (id < 0 || !pool.matches(id, buf, s, e)) {
          id = pool.intern(buf, s, e);
          state.lastSegment[k] = id;
        }
        rows.segmentIds[k]![row] = id;
      }
    }
    if (!ok) {
      pos = recordStart;
      break;
    }
    rows.label[row] = label;
    rows.score[row] = score;
    rows.line[row] = line;
    rows.offset[row] = base + recordStart;
    rows.count = row + 1;
    line++;
  }
  state.line = line;
  state.lastQuery = lastQuery;
  return pos;
}
