/**
 * Parquet dates and timestamps read as ISO 8601 text (readers/parquetTimes.ts), whatever the machine's time
 * zone, to the column's unit. Outside reference: numpy's datetime64, whose text is ISO 8601 to the unit
 * (Debian python3-numpy, through /usr/bin/python3). The typed pages' printer (parquetTimeText.ts) must give
 * the very bytes of that text, checked on seeded values over the whole 64-bit range, and the same rows as
 * the decoder on files written by DuckDB (@duckdb/node-api) with every timestamp unit, dates, a
 * time-zone-aware column, nulls, plain and dictionary pages, and JSON as segments.
 */
import { join } from 'node:path';
import { afterAll, afterEach, describe, expect, it } from 'vitest';
import { readDump } from '../../extension/engine/readers/index';
import { timeTexts, type TimeUnit } from '../../extension/engine/readers/parquetTimeText';
import { dateText, timestampText } from '../../extension/engine/readers/parquetTimes';
import { runPython } from '../reference/python.mjs';
import { seededRandom } from '../reference/random';
import { duckdb, expectThreeSame } from './fixtures/parquetThreeWays';
import { TempDir } from './fixtures/readers/tempFiles';

const tmp = new TempDir();
const zone = process.env.TZ;
afterEach(() => {
  if (zone === undefined) delete process.env.TZ;
  else process.env.TZ = zone;
});
afterAll(() => tmp.remove());

const UNITS = [['ms', 1_000n, 3], ['us', 1_000_000n, 6], ['ns', 1_000_000_000n, 9]] as const;

describe('timestamps and dates as text', () => {
  it('worked cases: the epoch, a unit before it, fractions to the unit, dates, and years JavaScript cannot print', () => {
    expect(timestampText(0n, 1_000n, 3)).toBe('1970-01-01T00:00:00');
    expect(timestampText(-1n, 1_000n, 3)).toBe('1969-12-31T23:59:59.999');
    expect(timestampText(1_764_756_000_000_250n, 1_000_000n, 6)).toBe('2025-12-03T10:00:00.000250');
    expect(timestampText(1_764_756_000_000_000_250n, 1_000_000_000n, 9)).toBe('2025-12-03T10:00:00.000000250');
    expect(dateText(0)).toBe('1970-01-01');
    expect(dateText(-1)).toBe('1969-12-31');
    expect(dateText(20_425)).toBe('2025-12-03');
    // ISO 8601's expanded years, as JavaScript writes them; past ±275,760 years, the stored integer.
    expect(dateText(2_932_897)).toBe('+010000-01-01');
    expect(timestampText(9_000_000_000_000_000_000n, 1_000_000n, 6)).toBe('9000000000000000000');
  });

  it('matches numpy datetime64 on 3,000 seeded values of each unit, years 1 to 9999, and days', () => {
    const rnd = seededRandom(2026);
    // Seconds from 0001-01-01 to 9999-12-31, and a fraction of a second in the unit, sometimes none.
    // Nanoseconds in 64 bits span 1677 to 2262 only.
    const cases = UNITS.map(([unit, perSecond]) => ({
      unit,
      values: Array.from({ length: 3_000 }, () => {
        const [low, high] = unit === 'ns' ? [-9_200_000_000, 9_200_000_000] : [-62_135_596_800, 253_402_300_799];
        const seconds = BigInt(Math.floor(low + rnd() * (high - low)));
        const fraction = rnd() < 0.2 ? 0n : BigInt(Math.floor(rnd() * Number(perSecond)));
        return (seconds * perSecond + fraction).toString();
      }),
    }));
    const days = Array.from({ length: 3_000 }, () => Math.floor(-719_162 + rnd() * 3_652_059));
    const script = ['import json, sys', 'import numpy as np', 'cases, days = json.loads(sys.stdin.read())',
      "print(json.dumps([[str(np.datetime64(int(v), c['unit'])) for v in c['values']] for c in cases] + [[str(np.datetime64(d, 'D')) for d in days]]))"].join('\n');
    const reference = JSON.parse(runPython(['-c', script], { what: 'the numpy reference', input: JSON.stringify([cases, days]) })) as string[][];
    UNITS.forEach(([, perSecond, digits], k) => {
      // numpy writes the fraction always; ours only when it is not zero.
      const ours = cases[k]!.values.map((v) => timestampText(BigInt(v), perSecond, digits)).map((t) => (t.includes('.') ? t : `${t}.${'0'.repeat(digits)}`));
      expect(ours).toEqual(reference[k]);
    });
    expect(days.map(dateText)).toEqual(reference[3]);
  });
});

describe('Parquet segments of dates, timestamps and JSON', () => {
  it('reads them as the same text in any time zone, to the unit, never as a local Date', async () => {
    const file = join(tmp.path, 'times.parquet');
    await duckdb(`COPY (SELECT 'q' || (i // 5) AS query, 'i' || i AS item, i % 3 AS grade, i / 100.0 AS score,
      TIMESTAMP '2026-12-03 10:00:00' + INTERVAL (i) MINUTE AS asked_at,
      make_timestamp_ns(1796292000000000000 + i) AS asked_ns, epoch_ms(1796292000000 + 250 * i)::TIMESTAMP_MS AS asked_ms,
      TIMESTAMPTZ '2026-12-03 10:00:00+00' + INTERVAL (i) SECOND AS asked_tz, DATE '2026-12-03' + (i // 10)::INTEGER AS day,
      ('{"aisle": ' || (i % 4) || '}')::JSON AS place, {'aisle': i % 4} AS nested FROM range(20) t(i)) TO '${file}' (FORMAT PARQUET)`);
    const read = async (tz: string) => {
      process.env.TZ = tz;
      const dump = await readDump(file);
      return Object.fromEntries(dump.segments.map((s) => [s.name, Array.from(s.ofRow, (id) => s.values.get(id))]));
    };
    const far = await read('Pacific/Kiritimati');
    expect(await read('America/New_York')).toEqual(far);
    expect(far.asked_at!.slice(0, 2)).toEqual(['2026-12-03T10:00:00', '2026-12-03T10:01:00']);
    expect(far.asked_ns!.slice(0, 2)).toEqual(['2026-12-03T10:00:00', '2026-12-03T10:00:00.000000001']);
    expect(far.asked_ms!.slice(0, 2)).toEqual(['2026-12-03T10:00:00', '2026-12-03T10:00:00.250']);
    expect(far.asked_tz![3]).toBe('2026-12-03T10:00:03');
    expect(far.day!.slice(9, 11)).toEqual(['2026-12-03', '2026-12-04']);
    // JSON as the text the file holds; a struct is not a column of its own (read past, as JSON Lines' nested fields).
    expect(far.place![5]).toBe('{"aisle": 1}');
    expect(Object.keys(far)).toEqual(['asked_at', 'asked_ns', 'asked_ms', 'asked_tz', 'day', 'place']);
  });
});

/** The first few values printed otherwise than expected (a diff of 20,000 strings is slow and unreadable). */
function differences(got: readonly string[], want: readonly string[], values: readonly bigint[]): string[] {
  return got.flatMap((g, i) => (g === want[i] ? [] : [`${values[i]}: ${g} against ${want[i]}`])).slice(0, 5);
}

/** timeTexts over INT64 (or INT32 for days) values, each as a string. */
function printed(values: readonly bigint[], unit: TimeUnit): string[] {
  const width = unit === 'days' ? 4 : 8;
  const bytes = new Uint8Array(values.length * width);
  const view = new DataView(bytes.buffer);
  values.forEach((v, i) => (width === 4 ? view.setInt32(4 * i, Number(v), true) : view.setBigInt64(8 * i, v, true)));
  const starts = new Int32Array(values.length);
  const ends = new Int32Array(values.length);
  const out = timeTexts(bytes, 0, values.length, unit, starts, ends);
  return values.map((_, i) => Buffer.from(out.subarray(starts[i]!, ends[i]!)).toString('latin1'));
}

describe('the typed pages\' printer of dates and timestamps', () => {
  it('gives the bytes of timestampText and dateText on 20,000 seeded values of each unit, over all of 64 bits', () => {
    const rnd = seededRandom(77);
    const bits64 = () => BigInt.asIntN(64, (BigInt(Math.floor(rnd() * 2 ** 32)) << 32n) | BigInt(Math.floor(rnd() * 2 ** 32)));
    for (const [unit, perSecond, digits] of UNITS) {
      const values = Array.from({ length: 20_000 }, (_, i): bigint => {
        // Every fourth across all 64 bits; the rest within a few thousand years of 1970, where dumps are, whole seconds now and then.
        if (i % 4 === 0) return bits64();
        const seconds = BigInt(Math.floor((rnd() - 0.5) * 2 * (unit === 'ns' ? 9.2e9 : 8e10)));
        return seconds * perSecond + (i % 5 === 0 ? 0n : BigInt(Math.floor(rnd() * Number(perSecond))));
      });
      // The ends of years 0 to 9999 (within 64 bits for milli- and microseconds).
      values.push(0n, -1n, 1n, -(2n ** 63n), 2n ** 63n - 1n);
      if (unit !== 'ns') values.push(-62_167_219_200n * perSecond, -62_167_219_200n * perSecond - 1n, 253_402_300_799n * perSecond + perSecond - 1n, 253_402_300_800n * perSecond);
      expect(differences(printed(values, unit), values.map((v) => timestampText(v, perSecond, digits)), values)).toEqual([]);
    }
    const days = Array.from({ length: 20_000 }, (_, i) => BigInt(i % 4 === 0 ? Math.floor((rnd() - 0.5) * 2 ** 32) : Math.floor((rnd() - 0.5) * 6e6)));
    days.push(0n, -1n, -719_528n, -719_529n, 2_932_896n, 2_932_897n, -(2n ** 31n), 2n ** 31n - 1n);
    expect(differences(printed(days, 'days'), days.map((d) => dateText(Number(d))), days)).toEqual([]);
  });

  it.each([['1'], ['2']])('reads DuckDB dates and timestamps of every unit, version %s pages, as the decoder does', async (version) => {
    const file = join(tmp.path, `duckdb-times-${version}.parquet`);
    await duckdb(`COPY (SELECT 'q' || (i // 10) AS query, 'i' || i AS item, i % 4 AS grade, (i % 89) / 7.0 AS score,
      CASE WHEN i % 13 = 0 THEN NULL ELSE DATE '2026-12-03' + (i // 500)::INTEGER END AS day,
      epoch_ms(1796292000000 + 250 * i)::TIMESTAMP_MS AS asked_ms, TIMESTAMP '2026-12-03 10:00:00' + INTERVAL (i * 7) MICROSECOND AS asked_us,
      make_timestamp_ns(1796292000000000000 + i * 1000000001) AS asked_ns, TIMESTAMPTZ '1969-12-31 23:59:00+00' + INTERVAL (i % 100) SECOND AS asked_tz
      FROM range(0, 20000) t(i)) TO '${file}' (FORMAT parquet, ROW_GROUP_SIZE 8192, PARQUET_VERSION V${version})`);
    const read = await expectThreeSame(file, 3_000);
    expect(read.dump?.rowCount).toBe(20_000);
    expect(read.typedPages).toBeGreaterThan(0);
    const dump = read.dump!;
    const text = (name: string, row: number) => {
      const segment = dump.segments.find((s) => s.name === name)!;
      return segment.values.get(segment.ofRow[row]!);
    };
    expect([text('day', 0), text('day', 1), text('day', 19_999)]).toEqual(['', '2026-12-03', '2027-01-11']);
    expect(text('asked_ns', 1)).toBe('2026-12-03T10:00:01.000000001');
    expect(text('asked_tz', 61)).toBe('1970-01-01T00:00:01');
  });
});

describe('Parquet columns that hold no text, when no view asks for segments', () => {
  it('are skipped unread, text columns still read and checked, the rows the same as a full read', async () => {
    const file = join(tmp.path, 'textless.parquet');
    await duckdb(`COPY (SELECT 'q' || (i // 10) AS query, 'i' || i AS item, i % 4 AS grade, (i % 89) / 7.0 AS score,
      TIMESTAMP '2026-12-03 10:00:00' + INTERVAL (i) SECOND AS asked_at, DATE '2026-12-03' AS day, i * 3 AS position, i / 3.0 AS price,
      i % 2 = 0 AS promoted, 'shelf ' || (i % 7) AS shelf FROM range(0, 5000) t(i)) TO '${file}' (FORMAT parquet)`);
    const full = await readDump(file);
    const lean = await readDump(file, { columns: { others: 'skipped' } });
    expect(full.segments.map((s) => s.name)).toEqual(['asked_at', 'day', 'position', 'price', 'promoted', 'shelf']);
    expect(lean.segments.map((s) => s.name)).toEqual(['shelf']);
    for (const key of ['query', 'item', 'label', 'score', 'line'] as const) expect(Array.from(lean[key]), key).toEqual(Array.from(full[key]));
    expect(lean.notes).toEqual(full.notes);
  });
});
