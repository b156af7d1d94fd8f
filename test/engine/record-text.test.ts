/**
 * The WebAssembly record writer (report/kernel/recordText.ts) must write exactly the bytes the object
 * path writes: JSON.stringify's text of each record, UTF-8 encoded. Two layers are checked:
 * - its number printer against V8's Number::toString (ECMA-262 Number::toString: shortest round-trip
 *   digits, nearest, ties to even; JSON.stringify prints finite numbers with it) on every power of two,
 *   their neighbours, a decimal grid over the whole exponent range and seeded random doubles;
 * - whole records against stringifyQueryRecords on random columns (NaN, infinities, -0, subnormals,
 *   huge counts), names that need escaping (quotes, backslashes, control bytes, non-ASCII, malformed
 *   UTF-8, lone surrogates), random metric lists and ranges, including ranges split into batches.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { configureEngine, engineSettings } from '../../extension/engine/config';
import type { PerQueryColumns } from '../../extension/engine/evaluate/types';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { BytePool } from '../../extension/engine/model/bytePool';
import { MapStringPool } from '../../extension/engine/model/stringPool';
import { packNames, renderQueryRecords, stringifyQueryRecords, type QueryRecordsSpec } from '../../extension/engine/report/jsonRecords';
import { RECORD_WRITER_BYTES, recordBytes } from '../../extension/engine/report/recordTextKernel';
import { csvRowsText, renderCsvRows } from '../../extension/engine/report/csv';
// @ts-expect-error a plain ES module without types
import { compileRecordTextKernel } from '../../extension/engine/readers/kernel/compile.mjs';
import { seededRandom } from '../reference/random';
import { TempDir } from './fixtures/readers/tempFiles';

const tmp = new TempDir();
const wasm = join(tmp.path, 'recordText.wasm');
const saved = engineSettings();

beforeAll(async () => {
  await compileRecordTextKernel(wasm);
  // The writer is found in the bundle folder; nothing else here starts threads.
  configureEngine({ bundleDir: tmp.path });
}, 120_000);
afterAll(() => {
  configureEngine(saved);
  tmp.remove();
});

describe('number printer', () => {
  function printer(): (x: number) => string {
    const memory = new WebAssembly.Memory({ initial: 2 });
    const kernel = new WebAssembly.Instance(new WebAssembly.Module(readFileSync(wasm)), { env: { memory, abort: () => { throw new Error('abort'); } } })
      .exports as { dataEnd(): number; writeNumber(x: number, at: number): number };
    const at = (kernel.dataEnd() + 15) & ~15;
    const bytes = new Uint8Array(memory.buffer);
    const decoder = new TextDecoder();
    return (x) => decoder.decode(bytes.subarray(at, kernel.writeNumber(x, at)));
  }

  /** The doubles next to x (one unit in the last place either way). */
  function neighbours(x: number): number[] {
    const view = new DataView(new ArrayBuffer(8));
    view.setFloat64(0, x);
    const bits = view.getBigUint64(0);
    return [bits - 1n, bits + 1n].map((b) => {
      view.setBigUint64(0, BigInt.asUintN(64, b));
      return view.getFloat64(0);
    });
  }

  it('prints what String(x) prints, on edge cases, every power of two and a decimal grid', () => {
    // Reference: V8's Number::toString (ECMA-262), outside this project.
    const print = printer();
    const cases: number[] = [0, -0, 1, 0.1, 0.2, 0.3, 1 / 3, 2 / 3, Math.PI, 5e-324, 2.2250738585072014e-308, 2.225073858507201e-308,
      Number.MAX_VALUE, Number.MAX_SAFE_INTEGER, 2 ** 53 + 2, 1e15, 1e15 - 1, 1e15 + 0.5, 1e21, 1e21 - 65536, 1e-6, 1e-7, 9.5e-7, 123e-20,
      0.5, 1.5, 2.5, 4.35, 9007199254740993, 1.7976931348623157e308, 4.940656458412465e-324];
    for (let e = -1074; e <= 1023; e++) cases.push(2 ** e, 1.5 * 2 ** e, (2 - 2 ** -52) * 2 ** e);
    for (let p = -324; p <= 308; p++) for (const d of [1, 2, 3, 5, 7, 9, 12, 25, 125, 999, 4321, 98765]) cases.push(Number(`${d}e${p}`));
    for (const x of [...cases]) cases.push(...neighbours(x));
    const wrong = cases.filter(Number.isFinite).flatMap((x) => [x, -x]).filter((x) => print(x) !== String(x));
    expect(wrong.map((x) => `${String(x)} printed ${print(x)}`)).toEqual([]);
    expect(cases.length).toBeGreaterThan(20_000);
  });

  it('prints what String(x) prints on seeded random doubles', () => {
    const print = printer();
    const rnd = seededRandom(20261204);
    const words = new Uint32Array(2);
    const asDouble = new Float64Array(words.buffer);
    const wrong: string[] = [];
    for (let i = 0; i < 300_000; i++) {
      words[0] = rnd() * 2 ** 32;
      words[1] = rnd() * 2 ** 32;
      // Any bit pattern; values in [0, 1) as metrics have; short decimals; counts; tiny values.
      for (const x of [asDouble[0]!, rnd(), Math.round(rnd() * 1e6) / 1e6, Math.floor(rnd() * 1e9), rnd() * 1e-9]) {
        if (Number.isFinite(x) && print(x) !== String(x)) wrong.push(`${String(x)} printed ${print(x)}`);
      }
    }
    expect(wrong).toEqual([]);
  });
});

describe('records', () => {
  const encoder = new TextEncoder();
  const NAMES = ['cordless drill 18v', 'say "hi"', 'back\\slash', 'tab\there', 'line\nbreak', 'bell\u0007', 'größe 10', '电钻', 'del\u007f', '', 'emoji 🔧',
    'bolts, 10 mm', 'cr\rlf', '"quoted"'];

  function randomValue(rnd: () => number): number {
    const x = rnd();
    if (x < 0.6) return rnd();
    const special = [NaN, Infinity, -Infinity, -0, 0, 1, 5e-324, 1e21, 1e-7, -2.5, 123456789012, 1 / 3, 2 ** 60];
    return special[Math.floor(rnd() * special.length)]!;
  }

  function randomCase(seed: number, n: number) {
    const rnd = seededRandom(seed);
    const metricSets = ['ndcg@10,err@10,ap,rr,p@5,r@10,rbp,tau', 'ndcg', 'tau,ndcg@3', 'rbp@20,ap@5', 'p@1,r,rr@3'];
    const metrics = parseMetricList(metricSets[Math.floor(rnd() * metricSets.length)]!);
    const column = () => Float64Array.from({ length: n }, () => randomValue(rnd));
    const count = () => Uint32Array.from({ length: n }, () => (rnd() < 0.05 ? 4294967295 : Math.floor(rnd() * 500)));
    const perQuery: PerQueryColumns = {
      items: count(), relevant: count(), values: metrics.map(() => column()), inversions: column(), inversionCost: column(),
      skipped: Uint8Array.from({ length: n }, () => (rnd() < 0.2 ? 1 : 0)), rbpResidual: column(),
      ...(rnd() < 0.5 ? { unretrieved: count() } : {}),
    };
    // Names as bytes (as read from a file, malformed UTF-8 included) or as strings (lone surrogates included).
    const asBytes = rnd() < 0.7;
    const pool = asBytes ? new BytePool() : new MapStringPool();
    for (let q = 0; q < n; q++) {
      const plain = rnd() < 0.8;
      const name = `${plain ? 'drill bit' : NAMES[Math.floor(rnd() * NAMES.length)]} ${q}`;
      if (pool instanceof BytePool) {
        const bytes = rnd() < 0.03 ? Uint8Array.of(0x61, 0xff, 0xc3, q & 0x7f, q >> 7) : encoder.encode(name);
        pool.intern(bytes, 0, bytes.length);
      } else pool.intern(rnd() < 0.05 ? `half \ud800 ${q}` : name);
    }
    const spec: QueryRecordsSpec = { metrics, names: packNames(pool), notRetrieved: rnd() < 0.5 };
    return { spec, perQuery, rnd };
  }

  // The CSV report's rows come from the same writer in its CSV style: the same bytes as the cell-by-cell text
  // (RFC 4180 quoting of names with commas, quotes and line breaks; empty cells for values not finite).
  type Render = (spec: QueryRecordsSpec, perQuery: PerQueryColumns, from: number, to: number) => string | Uint8Array;
  it.each([
    ['the JSON records are the bytes of the stringified objects', renderQueryRecords, stringifyQueryRecords],
    ['the CSV rows are the bytes of the rows written cell by cell', renderCsvRows, csvRowsText],
  ] as [string, Render, Render][])('%s, for random columns, names and ranges', (_, render, text) => {
    for (let seed = 1; seed <= 40; seed++) {
      const n = 1 + Math.floor(seededRandom(seed)() * 300);
      const { spec, perQuery, rnd } = randomCase(seed, n);
      for (let k = 0; k < 4; k++) {
        const from = Math.floor(rnd() * n);
        const to = from + 1 + Math.floor(rnd() * (n - from));
        const written = render(spec, perQuery, from, to);
        expect(written, `seed ${seed}: the writer ran`).toBeInstanceOf(Uint8Array);
        expect(Buffer.from(written as Uint8Array).equals(Buffer.from(encoder.encode(text(spec, perQuery, from, to) as string))), `seed ${seed} [${from}, ${to})`)
          .toBe(true);
      }
    }
  });

  it('in the CSV style, split into batches when a range does not fit the writer at once', () => {
    const n = 150_000;
    const { spec, perQuery } = randomCase(9, n);
    const written = renderCsvRows(spec, perQuery, 0, n) as Uint8Array;
    // More bytes than the writer's memory holds: several batches.
    expect(written.length).toBeGreaterThan(RECORD_WRITER_BYTES);
    expect(Buffer.from(written).equals(Buffer.from(encoder.encode(csvRowsText(spec, perQuery, 0, n))))).toBe(true);
  });

  it('split into batches when a range does not fit the writer at once, and joined in order', () => {
    const n = 60_000;
    const { spec, perQuery } = randomCase(7, n);
    const written = renderQueryRecords(spec, perQuery, 0, n) as Uint8Array;
    expect(written).toBeInstanceOf(Uint8Array);
    // More bytes than the writer's memory holds: several batches.
    expect(written.length).toBeGreaterThan(RECORD_WRITER_BYTES);
    expect(Buffer.from(written).equals(Buffer.from(encoder.encode(stringifyQueryRecords(spec, perQuery, 0, n))))).toBe(true);
  });

  it('sizes its batches for the widest numbers there are: 25 bytes', () => {
    // "-0.0000012345678901234567" is as long as a double's text gets; a batch sized for less would overrun.
    const { spec, perQuery } = randomCase(11, 20_000);
    // Every value as wide as it gets: the batch must still fit.
    for (const column of [...perQuery.values, perQuery.inversions, perQuery.rbpResidual!]) column.fill(-1.2345678901234567e-6);
    for (const column of [perQuery.items, perQuery.relevant, perQuery.unretrieved].filter((c) => c !== undefined)) column.fill(4294967295);
    perQuery.skipped.fill(0);
    const written = renderQueryRecords(spec, perQuery, 0, 20_000) as Uint8Array;
    expect(written).toBeInstanceOf(Uint8Array);
    expect(Buffer.from(written).equals(Buffer.from(encoder.encode(stringifyQueryRecords(spec, perQuery, 0, 20_000))))).toBe(true);
  });

  it('leaves to the object path what it cannot write: a record larger than its memory, keys an object would reorder', () => {
    const { spec, perQuery } = randomCase(3, 3);
    const huge = new BytePool();
    for (const name of ['a', 'b'.repeat(RECORD_WRITER_BYTES), 'c']) huge.intern(encoder.encode(name), 0, name.length);
    const hugeSpec = { ...spec, names: packNames(huge) };
    const text = renderQueryRecords(hugeSpec, perQuery, 0, 3);
    expect(typeof text).toBe('string');
    expect(text).toBe(stringifyQueryRecords(hugeSpec, perQuery, 0, 3));
    const values = new Float64Array([1, 2]);
    expect(recordBytes([{ key: 'x', kind: 'number', values }, { key: 'x', kind: 'number', values }], 0, 2)).toBeUndefined();
    expect(recordBytes([{ key: 'x', kind: 'number', values }, { key: '7', kind: 'number', values }], 0, 2)).toBeUndefined();
    expect(new TextDecoder().decode(recordBytes([{ key: 'x', kind: 'number', values }, { key: 'y', kind: 'flag', values: Uint8Array.of(1, 0) }], 0, 2)))
      .toBe('  {\n   "x": 1,\n   "y": true\n  },\n  {\n   "x": 2,\n   "y": false\n  }');
  });
});
