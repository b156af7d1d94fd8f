/**
 * Parquet dates and timestamps as text. The decoder's default makes each a JavaScript Date, which prints
 * in the local time zone of the machine and to the millisecond: the same file read on two machines gave
 * two segment values ("Thu Dec 03 2026 05:00:00 GMT-0500 (Eastern Standard Time)" for a naive 10:00), and
 * timestamps a microsecond apart merged into one. Here a timestamp is ISO 8601 (ISO 8601-1:2019, extended
 * format) of the digits the file stores, `2026-12-03T10:00:00`, with the fraction to the column's unit
 * when it is not zero (`.250`, `.000250`, `.000000250`); no zone designator, since a column need not be in
 * UTC (a time-zone-aware column is stored in UTC, so its text is UTC's). A date is `2026-12-03`. A value
 * beyond the years JavaScript can print (±275,760) is its stored integer.
 */
import type { ParquetParsers } from 'hyparquet';

const MS_PER_DAY = 86_400_000;

/** `value` counted in units of 1 / unitsPerSecond s since 1970-01-01T00:00:00, with `digits` fraction digits. */
export function timestampText(value: bigint, unitsPerSecond: bigint, digits: number): string {
  let seconds = value / unitsPerSecond;
  let fraction = value % unitsPerSecond;
  if (fraction < 0n) {
    fraction += unitsPerSecond;
    seconds -= 1n;
  }
  const iso = isoOf(Number(seconds) * 1000);
  if (iso === undefined) return value.toString();
  const whole = iso.slice(0, iso.indexOf('.'));
  return fraction === 0n ? whole : `${whole}.${fraction.toString().padStart(digits, '0')}`;
}

/** `days` since 1970-01-01 as a calendar date. */
export function dateText(days: number): string {
  const iso = isoOf(days * MS_PER_DAY);
  return iso === undefined ? String(days) : iso.slice(0, iso.indexOf('T'));
}

function isoOf(ms: number): string | undefined {
  const date = new Date(ms);
  return Number.isNaN(date.getTime()) ? undefined : date.toISOString();
}

/** Parsers for the decoder (hyparquet), merged over its defaults: dates and timestamps as the text above. */
export const TIME_PARSERS: Partial<ParquetParsers> = {
  timestampFromMilliseconds: (v: bigint) => timestampText(BigInt(v), 1_000n, 3),
  timestampFromMicroseconds: (v: bigint) => timestampText(BigInt(v), 1_000_000n, 6),
  timestampFromNanoseconds: (v: bigint) => timestampText(BigInt(v), 1_000_000_000n, 9),
  dateFromDays: (days: number) => dateText(Number(days)),
};
