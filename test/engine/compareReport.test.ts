/** The comparison reports rendered in-process from a small comparison with hand-derived deltas. */
import { describe, expect, it } from 'vitest';
import { compareRuns } from '../../extension/engine/compare/compare';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { formatComparison } from '../../extension/engine/report/compareReport';
import { formatDelta, formatInterval, formatP } from '../../extension/engine/report/compareShared';
import { buildDump, queryRows } from './dumpBuilder';

// P@1 per query, A → B: drill 1 → 0 (−1), screws 0 → 1 (+1), hex 1 → 1 (0), level 0 → 1 (+1).
const runA = buildDump([
  ...queryRows('cordless drill 18v', [1, 0], [0.9, 0.1]),
  ...queryRows('wood screws 4x40', [1, 0], [0.1, 0.9]),
  ...queryRows('hex key set', [1, 0], [0.9, 0.1]),
  ...queryRows('spirit level 60cm', [0, 1], [0.9, 0.1]),
]);
const runB = buildDump([
  ...queryRows('cordless drill 18v', [1, 0], [0.1, 0.9]),
  ...queryRows('wood screws 4x40', [1, 0], [0.9, 0.1]),
  ...queryRows('hex key set', [1, 0], [0.9, 0.1]),
  ...queryRows('spirit level 60cm', [0, 1], [0.1, 0.9]),
]);

async function input() {
  const comparison = await compareRuns(runA, runB, parseMetricList('p@1,rr'), DEFAULT_CONVENTIONS, { bootstrap: 100 });
  return { comparison, queryNamesA: runA.queries, sourceA: 'runs/a.csv', sourceB: 'runs/b.csv' };
}

describe('comparison reports', () => {
  it('number formats', () => {
    expect(formatDelta(0.01234)).toBe('+0.0123');
    expect(formatDelta(-0.5)).toBe('-0.5000');
    // A tiny difference keeps its sign; exactly zero has none (the shared presentation rule).
    expect(formatDelta(1e-7)).toBe('+0.0000');
    expect(formatDelta(0)).toBe('0.0000');
    expect(formatInterval(-0.25, 0.5)).toBe('[-0.2500, +0.5000]');
    expect(formatP(0.00001)).toBe('<0.0001');
    expect(formatP(Number.NaN)).toBe('—');
  });

  it('table: summary per metric and the biggest drops and gains on the headline', async () => {
    const text = formatComparison('table', await input(), { top: 5 });
    // mean P@1: A = 2/4, B = 3/4, Δ = +0.25; 2 wins, 1 tie, 1 loss.
    expect(text).toMatch(/^ {2}p@1 +0\.5000 +0\.7500 +\+0\.2500 .* 2 \/ 1 \/ 1 +4$/m);
    expect(text).toMatch(/Largest drops in p@1\n.*\n +1 +cordless drill 18v +1\.0000 +0\.0000 +-1\.0000/);
    expect(text).toMatch(/Largest gains in p@1\n.*\n +1 +wood screws 4x40 .*\n +2 +spirit level 60cm/);
  });

  it('markdown and JSON carry the same figures', async () => {
    const md = formatComparison('markdown', await input(), { top: 1 });
    expect(md).toMatch(/^\| p@1 \| 0\.5000 \| 0\.7500 \| \+0\.2500 \|/m);
    expect(md).toMatch(/#### Biggest regressions in p@1\n\n(.*\n){2}\| 1 \| cordless drill 18v \|/);
    const json = JSON.parse(formatComparison('json', await input(), { top: 1 }));
    expect(json.metrics[0]).toMatchObject({ key: 'p@1', meanA: 0.5, meanB: 0.75, meanDelta: 0.25, wins: 2, ties: 1, losses: 1 });
    expect(json.biggestDrops).toEqual([{ query: 'cordless drill 18v', a: 1, b: 0, delta: -1 }]);
    expect(json.perQuery.query).toEqual(['cordless drill 18v', 'wood screws 4x40', 'hex key set', 'spirit level 60cm']);
    expect(json.perQuery.b['p@1']).toEqual([0, 1, 1, 1]);
  });
});
