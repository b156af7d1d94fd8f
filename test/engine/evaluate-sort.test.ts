/**
 * The per-query index sort, and the WebAssembly sort that replaces it where it runs, against
 * Array.prototype.sort (stable since ES2019) on seeded random keys; the engine's output through both.
 */
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { configureEngine, engineSettings } from '../../extension/engine/config';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { keySortKernel } from '../../extension/engine/evaluate/keySortKernel';
import { insertionOrder, useKernelSorter } from '../../extension/engine/evaluate/ranking';
import { IndexSorter } from '../../extension/engine/evaluate/sortIndex';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
// @ts-expect-error a plain ES module without types
import { compileKeySortKernel } from '../../extension/engine/readers/kernel/compile.mjs';
import { seededRandom } from '../reference/random';
import { TempDir } from './fixtures/readers/tempFiles';
import { buildDump } from './dumpBuilder';

const shapes: Record<string, (r: () => number, i: number) => number> = {
  'uniform with few levels (many ties)': (r) => Math.floor(r() * 5),
  'uniform continuous': (r) => r() * 10 - 5,
  'one far outlier (one crowded bucket)': (r, i) => (i === 0 ? 1e9 : r()),
  'missing scores as -Infinity': (r) => (r() < 0.3 ? -Infinity : Math.floor(r() * 20) / 7),
  'range too wide to bucket': (r) => (r() < 0.5 ? -1.5e308 : 1.5e308 * r()),
  'heavy tail': (r) => Math.exp(r() * 40),
  // Equal to a comparison, so a stable sort keeps their order whatever their sign.
  'signed zeros': (r) => (r() < 0.5 ? 0 : -0),
};

describe('IndexSorter.sortDescending', () => {
  for (const [name, draw] of Object.entries(shapes)) {
    it(name, () => {
      const rand = seededRandom(name.length * 31);
      const sorter = new IndexSorter();
      for (let trial = 0; trial < 300; trial++) {
        const n = 1 + Math.floor(rand() * (trial % 3 === 0 ? 400 : 60));
        const key = Float64Array.from({ length: n }, (_, i) => draw(rand, i));
        const idx = Uint32Array.from({ length: n }, (_, i) => i);
        // Start from a shuffled index order too: stability is relative to the input order.
        if (trial % 2 === 1) for (let i = n - 1; i > 0; i--) { const j = Math.floor(rand() * (i + 1)); [idx[i], idx[j]] = [idx[j]!, idx[i]!]; }
        const expected = Array.from(idx).sort((a, b) => (key[b]! > key[a]! ? 1 : key[b]! < key[a]! ? -1 : 0));
        sorter.sortDescending(idx, key, n);
        expect(Array.from(idx)).toEqual(expected);
      }
    });
  }
});

describe('the WebAssembly sort', () => {
  const tmp = new TempDir();
  const saved = engineSettings();
  beforeAll(async () => {
    await compileKeySortKernel(join(tmp.path, 'keySort.wasm'));
    configureEngine({ bundleDir: tmp.path });
  }, 120_000);
  afterAll(() => {
    configureEngine(saved);
    useKernelSorter(keySortKernel);
    tmp.remove();
  });

  for (const [name, draw] of Object.entries(shapes)) {
    it(`gives Array.prototype.sort's order: ${name}`, () => {
      const rand = seededRandom(name.length * 17);
      const kernel = keySortKernel()!;
      expect(kernel).toBeDefined();
      for (let trial = 0; trial < 300; trial++) {
        const n = 1 + Math.floor(rand() * (trial % 3 === 0 ? 2000 : 60));
        const key = Float64Array.from({ length: n }, (_, i) => draw(rand, i));
        // Now and then already in order, the case the kernel settles in one pass.
        if (trial % 10 === 0) key.sort().reverse();
        kernel.keys.set(key);
        kernel.sort(n);
        const expected = Array.from({ length: n }, (_, i) => i).sort((a, b) => (key[b]! > key[a]! ? 1 : key[b]! < key[a]! ? -1 : 0));
        expect(Array.from(kernel.order.subarray(0, n))).toEqual(expected);
      }
    });
  }

  it('lists of up to 16, which scoring orders by insertion rather than in the kernel, come out in the kernel\'s order', () => {
    const kernel = keySortKernel()!;
    for (const [name, draw] of Object.entries(shapes)) {
      const rand = seededRandom(name.length * 7);
      for (let trial = 0; trial < 400; trial++) {
        const n = 1 + (trial % 16);
        const key = Float64Array.from({ length: n }, (_, i) => draw(rand, i));
        if (trial % 10 === 0) key.sort().reverse();
        kernel.keys.set(key);
        kernel.sort(n);
        const idx = new Uint32Array(n);
        insertionOrder(key, idx, n);
        expect(Array.from(idx), name).toEqual(Array.from(kernel.order.subarray(0, n)));
      }
    }
  });

  it('leaves every metric, tie and duplicate as the JavaScript sort does', () => {
    const rand = seededRandom(91);
    const rows = [];
    for (let q = 0; q < 60; q++) {
      const n = 1 + Math.floor(rand() * 80);
      for (let i = 0; i < n; i++) {
        const score = rand() < 0.1 ? NaN : rand() < 0.3 ? Math.floor(rand() * 4) : rand();
        rows.push({ query: `q${q}`, item: `sku-${Math.floor(rand() * n * 1.2)}`, label: Math.floor(rand() * 4), score });
      }
    }
    const dump = buildDump(rows);
    const metrics = parseMetricList('ndcg@10,err@10,ap,rr,p@5,r@10,rbp,tau');
    const withKernel = evaluate(dump, metrics, DEFAULT_CONVENTIONS, { sensitivity: true });
    useKernelSorter(() => undefined);
    const withoutKernel = evaluate(dump, metrics, DEFAULT_CONVENTIONS, { sensitivity: true });
    useKernelSorter(keySortKernel);
    expect(withKernel).toEqual(withoutKernel);
  });
});
