/**
 * The hot loop for delimited text: complete records without quoted fields, whose numbers are decimals or missing
 * (empty, NaN, NA, null, ...), parsed in one pass with everything in locals. Any record it is unsure about
 * (quotes, wrong field count, odd control bytes, a number it cannot read, a missing rank) is left to the careful
 * parser, which then
 * either stores it or reports the problem with its line. Stopping early has no visible effect:
 * interning is idempotent and a row is only counted once all of its fields are stored.
 */
import type { RowColumns } from './columns';
import { finishHash, HASH_PRIME, HASH_SEED } from '../model/bytePool';
import { describeNonNumber, parseNumber } from './numbers';

const TWO_53 = 2 ** 53;
/** Exact powers of ten for plain decimals (the WebAssembly kernel is given these same values). */
export const POW10 = Array.from({ length: 23 }, (_, k) => Number(`1e${k}`));

export const ROLE_QUERY = 0;
export const ROLE_ITEM = 1;
export const ROLE_LABEL = 2;
export const ROLE_SCORE = 3;
export const ROLE_RANK = 4;
export const ROLE_SEGMENT = 5;

const LF = 10;
const CR = 13;
const QUOTE = 34;

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
 * Item ids of this many rows are looked up together. With distinct items in the millions almost
 * every lookup misses the CPU caches; a short loop doing only lookups lets the processor overlap
 * the misses of consecutive rows, which the full row parser cannot. Ids are still given in row order.
 */
const ITEM_BATCH = 64;
const batchStart = new Int32Array(ITEM_BATCH);
const batchEnd = new Int32Array(ITEM_BATCH);
const batchHash = new Int32Array(ITEM_BATCH);
const batchRow = new Int32Array(ITEM_BATCH);
const batchRecord = new Int32Array(ITEM_BATCH);
let previousStart = new Int32Array(8);
let previousEnd = new Int32Array(8);
/** Keeps the warming reads observable. */
const warmth = { sum: 0 };

function internBatch(rows: RowColumns, buf: Uint8Array, count: number): void {
  const out = rows.item;
  const texts = rows.itemTexts;
  if (texts !== undefined) {
    // Item bytes kept per row (model/rowTexts.ts): the hash now, keys when the read is done.
    for (let b = 0; b < count; b++) {
      out[batchRow[b]!] = batchHash[b]!;
      texts.add(buf, batchStart[b]!, batchEnd[b]!);
    }
    return;
  }
  const items = rows.items;
  warmth.sum += items.warm(batchHash, count, batchRecord);
  for (let b = 0; b < count; b++) out[batchRow[b]!] = items.internHashed(buf, batchStart[b]!, batchEnd[b]!, batchHash[b]!);
}

/**
 * Stores records from buf[pos, limit), where limit is a line start (or the end of the last buffer),
 * at most `maxRecords` of them. A record with a quoted field ends the run. Returns the start of the first
 * record it did not store.
 */
export function parseSimpleRecords(state: FastState, buf: Buffer, pos: number, limit: number, base: number, maxRecords = Infinity): number {
  const rows = state.rows!;
  const roleOf = state.roleOf;
  const fields = roleOf.length;
  const delimiter = state.delimiter;
  const queries = rows.queries;
  let line = state.line;
  let lastQuery = state.lastQuery;
  let batched = 0;
  // Where the previous stored row's query and segment fields lie in `buf` (-1: not in this buffer).
  if (previousStart.length < fields) {
    previousStart = new Int32Array(fields);
    previousEnd = new Int32Array(fields);
  }
  previousStart.fill(-1);
  let repeated = false;
  const words = new DataView(buf.buffer, buf.byteOffset, buf.byteLength);
  const lastRow = rows.count + maxRecords;
  while (pos < limit && rows.count < lastRow) {
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
      // A quoted field is the careful parser's (a quote inside an unquoted field is text, there as here).
      if (pos < limit && buf[pos] === QUOTE) {
        ok = false;
        break;
      }
      const role = roleOf[f]!;
      let value = 0;
      c = 0;
      repeated = false;
      if ((role === ROLE_QUERY || role >= ROLE_SEGMENT) && previousStart[f]! >= 0) {
        // Queries and segments mostly repeat the previous row's bytes (still in this buffer): compare them
        // directly, which needs neither the hash nor a look at the pool.
        const from = previousStart[f]!;
        const length = previousEnd[f]! - from;
        // Four bytes at a time, then the rest one by one, up to the shorter of the field and the buffer.
        const stop = length < limit - pos ? length : limit - pos;
        let i = 0;
        while (i + 4 <= stop && words.getInt32(pos + i) === words.getInt32(from + i)) i += 4;
        while (i < stop && buf[pos + i] === buf[from + i]) i++;
        if (i === length) {
          const after = pos + length;
          c = after < limit ? buf[after]! : 0;
          if (after >= limit || c < 14 || c === delimiter) {
            pos = after;
            repeated = true;
          }
        }
        if (!repeated) c = 0;
      }
      if (repeated) {
        // Same id as the previous row (set below).
      } else if (role < 0) {
        // A column of no role (ColumnRoles.others 'skipped'): only its end is looked for.
        while (pos < limit) {
          c = buf[pos]!;
          if (c < 14 || c === delimiter) break;
          pos++;
        }
      } else if (role === ROLE_ITEM || role === ROLE_QUERY || role >= ROLE_SEGMENT) {
        // Scan and hash in one pass; the hash is only used when the id is looked up.
        let h = HASH_SEED;
        while (pos < limit) {
          c = buf[pos]!;
          if (c < 14 || c === delimiter) break;
          h = Math.imul(h ^ c, HASH_PRIME);
          pos++;
        }
        value = h;
      } else {
        // Plain decimals are parsed during the scan (see numbers.ts for why m / 10^k is exact).
        let mantissa = 0;
        let digits = 0;
        let fraction = -1;
        const negative = pos < limit && buf[pos] === 45;
        if (negative) pos++;
        while (pos < limit) {
          c = buf[pos]!;
          const d = c - 48;
          if (d >= 0 && d <= 9) {
            mantissa = mantissa * 10 + d;
            digits++;
          } else if (c === 46 && fraction < 0) {
            fraction = digits;
          } else break;
          pos++;
        }
        const fractionDigits = fraction < 0 ? 0 : digits - fraction;
        // Below 2^53 the digit sum is exact; one that reached 2^53 may have rounded there (see numbers.ts).
        if ((pos >= limit || c < 14 || c === delimiter) && digits > 0 && mantissa < TWO_53 && fractionDigits <= 22) {
          value = fractionDigits === 0 ? mantissa : mantissa / POW10[fractionDigits]!;
          if (negative) value = -value;
        } else {
          while (pos < limit) {
            c = buf[pos]!;
            if (c < 14 || c === delimiter) break;
            pos++;
          }
          value = parseNumber(buf, s, pos);
          if (value - value !== 0) {
            // A missing grade or score (empty, NaN, NA, null, ...) and an infinite score are NaN, as the careful
            // parser reads them (delimited.ts); anything else, and any rank, is that parser's to report.
            if (role === ROLE_RANK || (value === value ? role !== ROLE_SCORE : describeNonNumber(buf, s, pos) !== 'missing')) {
              ok = false;
              break;
            }
            value = NaN;
          }
        }
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
      if (role === ROLE_ITEM) {
        // Items are looked up in batches (see ITEM_BATCH) rather than here.
        batchStart[batched] = s;
        batchEnd[batched] = e;
        batchHash[batched] = finishHash(value);
        batchRow[batched] = row;
        batched++;
      } else if (role === ROLE_QUERY) {
        if (!repeated && (lastQuery < 0 || !queries.matches(lastQuery, buf, s, e))) lastQuery = queries.internHashed(buf, s, e, finishHash(value));
        rows.query[row] = lastQuery;
        previousStart[f] = s;
        previousEnd[f] = e;
      } else if (role === ROLE_LABEL) {
        label = value;
      } else if (role === ROLE_SCORE) {
        score = value;
      } else if (role === ROLE_RANK) {
        if (state.rankStandsInForScore) score = -value;
      } else if (role >= ROLE_SEGMENT) {
        const k = role - ROLE_SEGMENT;
        const pool = rows.segmentPools[k]!;
        let id = state.lastSegment[k]!;
        if (!repeated && (id < 0 || !pool.matches(id, buf, s, e))) {
          id = pool.internHashed(buf, s, e, finishHash(value));
          state.lastSegment[k] = id;
        }
        rows.segmentIds[k]![row] = id;
        previousStart[f] = s;
        previousEnd[f] = e;
      }
    }
    if (!ok) {
      if (batched > 0 && batchRow[batched - 1] === row) batched--;
      pos = recordStart;
      break;
    }
    rows.label[row] = label;
    rows.score[row] = score;
    rows.line[row] = line;
    rows.offset[row] = base + recordStart;
    rows.count = row + 1;
    line++;
    if (batched === ITEM_BATCH) {
      internBatch(rows, buf, batched);
      batched = 0;
    }
  }
  internBatch(rows, buf, batched);
  state.line = line;
  state.lastQuery = lastQuery;
  return pos;
}
