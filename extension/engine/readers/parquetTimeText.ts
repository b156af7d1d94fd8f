/**
 * Dates and timestamps of a Parquet column (INT32 DATE; INT64 TIMESTAMP in milliseconds, microseconds or
 * nanoseconds) printed as the ISO 8601 text parquetTimes.ts gives, byte for byte, for a whole page at once,
 * so the typed pages (parquetTypedPages.ts) read them as text ranges like a string column. Through the
 * decoder a value cost about 2 µs (a bigint, a Date, its text, its bytes); 1M rows with a timestamp column
 * read in 3.8 s against 1.5 s without one. Years 0 to 9999 are printed here; any other (JavaScript's
 * expanded years, or a value past them) goes to parquetTimes.ts's own functions.
 */
import type { ColumnMetaData, SchemaElement } from 'hyparquet';
import { dateText, timestampText } from './parquetTimes';

/** What a column's integers count: days (DATE) or fractions of a second. */
export type TimeUnit = 'days' | 'ms' | 'us' | 'ns';

/**
 * What a column of dates or timestamps counts, under the decoder's own rules (hyparquet's convert: the
 * converted type first, then the logical type); undefined for any other column (INT96 timestamps too).
 */
export function timeUnitOf(element: SchemaElement, meta: Pick<ColumnMetaData, 'type'>): TimeUnit | undefined {
  const converted = element.converted_type;
  if (meta.type === 'INT32') return converted === 'DATE' ? 'days' : undefined;
  if (meta.type !== 'INT64') return undefined;
  if (converted === 'TIMESTAMP_MILLIS') return 'ms';
  if (converted === 'TIMESTAMP_MICROS') return 'us';
  const logical = element.logical_type;
  if (converted !== undefined || logical?.type !== 'TIMESTAMP') return undefined;
  return logical.unit === 'MILLIS' ? 'ms' : logical.unit === 'MICROS' ? 'us' : 'ns';
}

const PER_SECOND: Record<Exclude<TimeUnit, 'days'>, number> = { ms: 1e3, us: 1e6, ns: 1e9 };
const DIGITS: Record<Exclude<TimeUnit, 'days'>, number> = { ms: 3, us: 6, ns: 9 };
/** The most bytes one value prints as here: `9999-12-31T23:59:59.999999999`; a fallback may need more (checked). */
const MOST_BYTES = 29;
const SECONDS_PER_DAY = 86_400;
const TWO_32 = 4294967296;

/**
 * PLAIN values from bytes[at..] (INT32 for days, INT64 otherwise), `count` of them, printed one after another
 * into a new array; value v is out[starts[v], ends[v]). Throws when the page ends first.
 */
export function timeTexts(bytes: Uint8Array, at: number, count: number, unit: TimeUnit, starts: Int32Array, ends: Int32Array): Uint8Array {
  const width = unit === 'days' ? 4 : 8;
  if (at + count * width > bytes.length) throw new Error('a page ends inside its values');
  const view = new DataView(bytes.buffer, bytes.byteOffset + at, count * width);
  let out: Uint8Array = new Uint8Array(count * MOST_BYTES);
  let p = 0;
  for (let v = 0; v < count; v++) {
    starts[v] = p;
    let end = -1;
    if (unit === 'days') end = printDate(view.getInt32(4 * v, true), out, p);
    else {
      const n = view.getInt32(8 * v + 4, true) * TWO_32 + view.getUint32(8 * v, true);
      end = Number.isSafeInteger(n) ? printSafeTimestamp(n, unit, out, p) : printBigTimestamp(view.getBigInt64(8 * v, true), unit, out, p);
    }
    if (end < 0) {
      const text = unit === 'days' ? dateText(view.getInt32(4 * v, true)) : timestampText(view.getBigInt64(8 * v, true), BigInt(PER_SECOND[unit]), DIGITS[unit]);
      if (p + text.length > out.length) out = grown(out, p + text.length + (count - v) * MOST_BYTES);
      for (let i = 0; i < text.length; i++) out[p + i] = text.charCodeAt(i);
      end = p + text.length;
    }
    ends[v] = p = end;
  }
  return out;
}

function grown(out: Uint8Array, size: number): Uint8Array {
  const next = new Uint8Array(size);
  next.set(out);
  return next;
}

/** A count of units below 2^53 in size: whole seconds and the fraction, by exact integer arithmetic in doubles. */
function printSafeTimestamp(n: number, unit: Exclude<TimeUnit, 'days'>, out: Uint8Array, p: number): number {
  const per = PER_SECOND[unit];
  // The floor of the rounded quotient is the true one: its whole part k (below 2^53 / per) is exact in a
  // double, and a remainder of at least one unit (1 / per) is more than half the spacing of doubles near k,
  // so rounding never reaches k + 1. The remainder n - k × per is then exact too (both below 2^53).
  const seconds = Math.floor(n / per);
  return printSeconds(seconds, n - seconds * per, DIGITS[unit], out, p);
}

function printBigTimestamp(n: bigint, unit: Exclude<TimeUnit, 'days'>, out: Uint8Array, p: number): number {
  const per = BigInt(PER_SECOND[unit]);
  let seconds = n / per;
  let fraction = n - seconds * per;
  if (fraction < 0n) {
    fraction += per;
    seconds -= 1n;
  }
  return printSeconds(Number(seconds), Number(fraction), DIGITS[unit], out, p);
}

/** `seconds` since 1970 and a fraction of `digits` digits: -1 when the year is outside 0 to 9999. */
function printSeconds(seconds: number, fraction: number, digits: number, out: Uint8Array, p: number): number {
  const days = Math.floor(seconds / SECONDS_PER_DAY);
  let inDay = seconds - days * SECONDS_PER_DAY;
  p = printDate(days, out, p);
  if (p < 0) return -1;
  out[p++] = 84; // T
  const hours = Math.floor(inDay / 3600);
  inDay -= hours * 3600;
  const minutes = Math.floor(inDay / 60);
  p = two(hours, out, p);
  out[p++] = 58;
  p = two(minutes, out, p);
  out[p++] = 58;
  p = two(inDay - minutes * 60, out, p);
  if (fraction === 0) return p;
  out[p++] = 46;
  for (let d = digits - 1; d >= 0; d--) {
    const next = Math.floor(fraction / 10);
    out[p + d] = 48 + (fraction - next * 10);
    fraction = next;
  }
  return p + digits;
}

/**
 * `days` since 1970-01-01 as YYYY-MM-DD in the proleptic Gregorian calendar, by Hinnant's civil_from_days
 * ("chrono-Compatible Low-Level Date Algorithms"); -1 when the year is outside 0 to 9999.
 */
function printDate(days: number, out: Uint8Array, p: number): number {
  const z = days + 719_468;
  const era = Math.floor(z / 146_097);
  const doe = z - era * 146_097;
  const yoe = Math.floor((doe - Math.floor(doe / 1460) + Math.floor(doe / 36_524) - Math.floor(doe / 146_096)) / 365);
  const doy = doe - (365 * yoe + Math.floor(yoe / 4) - Math.floor(yoe / 100));
  const mp = Math.floor((5 * doy + 2) / 153);
  const day = doy - Math.floor((153 * mp + 2) / 5) + 1;
  const month = mp < 10 ? mp + 3 : mp - 9;
  const year = yoe + era * 400 + (month <= 2 ? 1 : 0);
  if (year < 0 || year > 9999) return -1;
  out[p] = 48 + Math.floor(year / 1000);
  out[p + 1] = 48 + (Math.floor(year / 100) % 10);
  out[p + 2] = 48 + (Math.floor(year / 10) % 10);
  out[p + 3] = 48 + (year % 10);
  out[p + 4] = 45;
  p = two(month, out, p + 5);
  out[p++] = 45;
  return two(day, out, p);
}

function two(n: number, out: Uint8Array, p: number): number {
  out[p] = 48 + Math.floor(n / 10);
  out[p + 1] = 48 + (n % 10);
  return p + 2;
}
