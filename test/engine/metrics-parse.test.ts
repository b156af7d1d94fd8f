import { describe, expect, it } from 'vitest';
import { InputError } from '../../extension/engine/errors';
import { DEFAULT_METRICS } from '../../extension/engine/metrics/conventions';
import { formatGain, parseGain, parseMetricList, parseNoRelevant, parseTies } from '../../extension/engine/metrics/parse';
import { groupByQuery } from '../../extension/engine/model/groups';
import { buildDump } from './dumpBuilder';

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
  it.each(['ndcg@0', 'mrr', 'ndcg@x', 'tau@5', 'ap@10', '', 'ndcg@10,ndcg@10', 'p@-1'])('rejects %j', (text) => {
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
    expect([...g.rowsOfQuery]).toEqual([0, 2, 1, 4, 3]);
  });
});
