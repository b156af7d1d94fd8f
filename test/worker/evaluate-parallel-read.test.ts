/**
 * The reader's repeat shortcut (a query or segment equal to the previous row's bytes keeps its id) against
 * a plain split-and-Map reference, on values that are prefixes of one another, empty, or cut by chunk
 * edges; then read + score on several threads against read + score on one.
 */
import { describe, expect, it } from 'vitest';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { evaluateInParallel } from '../../extension/engine/threads/parallelEvaluate';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { readDump } from '../../extension/engine/readers/index';
import { configureEngine } from '../../extension/engine/config';
import { TempDir } from '../engine/fixtures/readers/tempFiles';
import { seededRandom } from '../reference/random';
import { useBundledWorkers } from './support/workers';

const tmp = new TempDir();

useBundledWorkers(tmp, ['scoreWorker', 'parseWorker']);

/** Runs of rows whose query and device are often prefixes of the previous row's ("drill 1" then "drill 10"). */
function prefixCsv(seed: number, rows: number): string {
  const rnd = seededRandom(seed);
  const queries = ['drill 1', 'drill 10', 'drill 1', 'drill', 'drill 100', 'wood screws 4x40', 'wood screws 4x4', 'd'];
  const devices = ['', 'mobile', 'mob', 'mobile2', 'm', 'desktop'];
  let out = 'query,product_id,grade,score,device\n';
  let query = queries[0]!;
  let device = devices[0]!;
  for (let r = 0; r < rows; r++) {
    if (rnd() < 0.15) query = `${queries[Math.floor(rnd() * queries.length)]!}${rnd() < 0.3 ? ` ${Math.floor(r / 50)}` : ''}`;
    if (rnd() < 0.3) device = devices[Math.floor(rnd() * devices.length)]!;
    out += `${query},sku-${Math.floor(rnd() * 300)},${Math.floor(rnd() * 4)},${(rnd() * 4 - 2).toFixed(2)},${device}${rnd() < 0.2 ? '\r\n' : '\n'}`;
  }
  return out;
}

/** Ids in first-seen order, from a plain split of the text. */
function referenceIds(text: string, column: number): { ids: number[]; names: string[] } {
  const pool = new Map<string, number>();
  const ids: number[] = [];
  for (const line of text.split('\n').slice(1)) {
    if (line === '') continue;
    const value = line.replace(/\r$/, '').split(',')[column]!;
    if (!pool.has(value)) pool.set(value, pool.size);
    ids.push(pool.get(value)!);
  }
  return { ids, names: [...pool.keys()] };
}

describe('reading repeated queries and segments', () => {
  it.each([[1, 97], [2, 4096], [3, 1 << 16]])('seed %i with %i-byte chunks matches a plain split', async (seed, chunk) => {
    const text = prefixCsv(seed, 6000);
    const path = tmp.file(`prefix-${seed}.csv`, text);
    const saved = configureEngine({ tuning: { plainChunkBytes: chunk } });
    try {
      for (const threads of [1, 3]) {
        const dump = await readDump(path, { threads });
        const query = referenceIds(text, 0);
        const device = referenceIds(text, 4);
        expect(Array.from(dump.query), `query ids, ${threads} threads`).toEqual(query.ids);
        expect(Array.from({ length: dump.queries.size }, (_, i) => dump.queries.get(i))).toEqual(query.names);
        const segment = dump.segments.find((s) => s.name === 'device')!;
        expect(Array.from(segment.ofRow), `device ids, ${threads} threads`).toEqual(device.ids);
        expect(Array.from({ length: segment.values.size }, (_, i) => segment.values.get(i))).toEqual(device.names);
      }
    } finally {
      configureEngine(saved);
    }
  });

  it('read on three threads and scored on two gives what one thread gives', async () => {
    const path = tmp.file('prefix-score.csv', prefixCsv(7, 20_000));
    const metrics = parseMetricList('ndcg@10,err@10,ap,rr,p@5,r@10,rbp,tau');
    const one = evaluate(await readDump(path, { threads: 1 }), metrics, DEFAULT_CONVENTIONS);
    const many = await evaluateInParallel(await readDump(path, { threads: 3 }), metrics, DEFAULT_CONVENTIONS, { threads: 2 });
    expect(many.summary).toEqual(one.summary);
    expect(many.sensitivity).toEqual(one.sensitivity);
    expect(many.degenerate).toEqual(one.degenerate);
    one.perQuery.values.forEach((v, m) => expect(Array.from(many.perQuery.values[m]!)).toEqual(Array.from(v)));
  });
});
