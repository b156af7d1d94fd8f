import { describe, expect, it } from 'vitest';
import { InputError } from '../../extension/engine/errors';
import { DEFAULT_METRICS } from '../../extension/engine/metrics/registry';
import { formatGain, parseGain, parseMetricList, parseNoRelevant, parseTies } from '../../extension/engine/metrics/parse';
import { groupByQuery, rowOf, rowsOfGroup } from '../../extension/engine/model/groups';
import { buildDump } from './dumpBuilder';
import type { MapStringPool } from '../../extension/engine/model/stringPool';

describe('parseMetricList', () => {
  it('reads the default list in order, with cut-offs', () => {
    expect(parseMetricList(DEFAULT_METRICS)).toEqual([
      { name: 'ndcg', k: 10, key: 'ndcg@10' },
      { name: 'err', k: 10, key: 'err@10' },
      { name: 'ap', key: 'ap' },
      { name: 'rr', key: 'rr' },
      { name: 'p', k: 5, key: 'p@5' },
      { name: 'r', k: 10, key: 'r@10' },
      { name: 'rbp', key: 'rbp' },
      { name: 'tau', key: 'tau' },
    ]);
  });
  it('accepts spaces and upper case, keys are lower case', () => {
    expect(parseMetricList(' NDCG@5 , dcg').map((m) => m.key)).toEqual(['ndcg@5', 'dcg']);
  });
  it.each(['ndcg@0', 'mrr', 'ndcg@x', 'tau@5', 'hit@0', '', 'ndcg@10,ndcg@10', 'p@-1'])('rejects %j', (text) => {
    expect(() => parseMetricList(text)).toThrow(InputError);
  });
});

describe('parseGain and friends', () => {
  it('reads exponential, linear and maps, and writes them back', () => {
    expect(parseGain('exponential')).toEqual({ kind: 'exponential' });
    expect(parseGain('Linear')).toEqual({ kind: 'linear' });
    const map = parseGain('map:0=0,1=1,2=3,3=7');
    expect(map.kind === 'map' && [...map.gains]).toEqual([[0, 0], [1, 1], [2, 3], [3, 7]]);
    expect(formatGain(map)).toBe('map:0=0,1=1,2=3,3=7');
  });
  it.each(['exp', 'map:', 'map:1', 'map:1=a', 'map:1=1,1=2'])('rejects %j', (text) => {
    expect(() => parseGain(text)).toThrow(InputError);
  });
  it('reads tie conventions and no-relevant policies', () => {
    expect(parseTies('file-order')).toBe('file-order');
    expect(parseNoRelevant('ZERO')).toBe('zero');
    expect(() => parseTies('random')).toThrow(InputError);
    expect(() => parseNoRelevant('drop')).toThrow(InputError);
  });
});

describe('groupByQuery', () => {
  it('lists each query’s rows in file order', () => {
    const dump = buildDump([
      { query: 'b', item: '1', label: 0, score: 0 },
      { query: 'a', item: '1', label: 0, score: 0 },
      { query: 'b', item: '2', label: 0, score: 0 },
      { query: 'c', item: '1', label: 0, score: 0 },
      { query: 'a', item: '2', label: 0, score: 0 },
    ]);
    const g = groupByQuery(dump);
    expect([...g.start]).toEqual([0, 2, 4, 5]);
    expect([...g.rowsOfQuery!]).toEqual([0, 2, 1, 4, 3]);
  });

  it('matches a slow reference on seeded dumps with queries kept together, interleaved, or without rows', () => {
    let seed = 99;
    const rand = () => ((seed = (Math.imul(seed, 1103515245) + 12345) >>> 0) / 2 ** 32);
    for (let trial = 0; trial < 60; trial++) {
      const queries = 1 + Math.floor(rand() * 12);
      const names: string[] = [];
      for (let q = 0; q < queries; q++) for (let n = Math.floor(rand() * 5); n > 0; n--) names.push(`q${q}`);
      // A third of the dumps keep each query's rows together (the one-pass case); the rest move one row or shuffle.
      const shape = trial % 3;
      if (shape === 1 && names.length > 2) names.push(names.splice(Math.floor(rand() * names.length), 1)[0]!);
      if (shape === 2) names.sort(() => rand() - 0.5);
      const dump = buildDump(names.map((query, i) => ({ query, item: String(i), label: 0, score: 0 })));
      // A query id with no rows at all (a pool can hold one when rows were dropped).
      if (trial % 4 === 0) (dump.queries as MapStringPool).intern('no rows');
      const g = groupByQuery(dump);
      // Slow and obvious: each query's rows, found by scanning the whole column.
      const expected: number[] = [];
      const start = [0];
      for (let q = 0; q < dump.queries.size; q++) {
        for (let r = 0; r < dump.rowCount; r++) if (dump.query[r] === q) expected.push(r);
        start.push(expected.length);
      }
      // A grouped dump's order is the file's: no row column is made.
      const rows = Array.from({ length: dump.rowCount }, (_, p) => rowOf(g, p));
      if (shape === 0 && trial % 4 !== 0) expect(g.rowsOfQuery).toBeUndefined();
      expect(rows).toEqual(expected);
      for (let q = 0; q < dump.queries.size; q++) expect([...rowsOfGroup(g, q)]).toEqual(expected.slice(start[q], start[q + 1]));
      expect([...g.start]).toEqual(start);
    }
  });
});
