/**
 * Parquet dates and timestamps read as ISO 8601 text (readers/parquetTimes.ts), whatever the machine's time
 * zone, to the column's unit. Outside reference: numpy's datetime64, whose text is ISO 8601 to the unit
 * (Debian python3-numpy, through /usr/bin/python3). Files written by DuckDB (@duckdb/node-api) with every
 * timestamp unit, dates, a time-zone-aware column and JSON as segments.
 */
import { join } from 'node:path';
import { afterAll, afterEach, describe, expect, it } from 'vitest';
import { readDump } from '../../extension/engine/readers/index';
import { dateText, timestampText } from '../../extension/engine/readers/parquetTimes';
import { runPython } from '../reference/python.mjs';
import { seededRandom } from '../reference/random';
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

async function duckdb(sql: string): Promise<void> {
  const { DuckDBInstance } = await import('@duckdb/node-api');
  const instance = await DuckDBInstance.create(':memory:');
  const connection = await instance.connect();
  try {
    await connection.run(sql);
  } finally {
    connection.closeSync();
    instance.closeSync();
  }
}
