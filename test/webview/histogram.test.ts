import { describe, expect, it } from 'vitest';
import { binLabel, binValues, suggestedBins, symmetricRange } from '../../webview/src/model/histogram';
import { formatFixed } from '../../webview/src/model/format';
import { pythonJson } from '../reference/python.mjs';
import { seededRandom } from '../reference/random';

describe('binValues', () => {
  it('puts hand-placed values in the expected bins, the upper edge in the last bin', () => {
    const h = binValues([0, 0.1, 0.25, 0.5, 0.75, 1, NaN], { bins: 4, range: [0, 1] });
    expect(Array.from(h.edges)).toEqual([0, 0.25, 0.5, 0.75, 1]);
    expect(Array.from(h.counts)).toEqual([2, 1, 1, 2]);
    expect(h.missing).toBe(1);
    expect(h.outside).toBe(0);
  });

  it('counts values outside an explicit range instead of hiding them', () => {
    const h = binValues([-0.1, 0.5, 1.2], { bins: 2, range: [0, 1] });
    expect(Array.from(h.counts)).toEqual([0, 1]);
    expect(h.outside).toBe(2);
  });

  it('widens a single repeated value', () => {
    const h = binValues([0.3, 0.3], { bins: 2 });
    expect(h.edges[0]).toBeCloseTo(-0.2, 12);
    expect(Array.from(h.counts)).toEqual([0, 2]);
  });

  it('matches numpy.histogram exactly on seeded random data, including values on edges', () => {
    const rand = seededRandom(7);
    const sets: { values: number[]; bins: number; range: [number, number] | null }[] = [];
    for (let s = 0; s < 40; s++) {
      const n = 1 + Math.floor(rand() * 400);
      const bins = 1 + Math.floor(rand() * 30);
      // Mix continuous values with values on a grid, so many land exactly on bin edges.
      const values = Array.from({ length: n }, (_, i) => (i % 3 === 0 ? Math.round(rand() * bins) / bins : rand() * 2 - 0.5));
      sets.push({ values, bins, range: s % 2 === 0 ? [0, 1] : null });
    }
    const numpy = pythonJson<number[][]>(
      [
        'import json,sys',
        'import numpy as np',
        'out=[]',
        'for s in json.load(sys.stdin):',
        '    a=np.array(s["values"],dtype=float)',
        '    r=tuple(s["range"]) if s["range"] else None',
        '    if r: a=a[(a>=r[0])&(a<=r[1])]',
        '    out.append(np.histogram(a,bins=s["bins"],range=r)[0].tolist())',
        'print(json.dumps(out))',
      ].join('\n'),
      sets,
    );
    sets.forEach((s, i) => {
      const h = binValues(s.values, s.range ? { bins: s.bins, range: s.range } : { bins: s.bins });
      expect(Array.from(h.counts), `set ${i}`).toEqual(numpy[i]);
    });
  });

  it('never loses a finite value (invariant)', () => {
    const rand = seededRandom(3);
    const values = Array.from({ length: 1000 }, () => (rand() < 0.1 ? NaN : rand()));
    const h = binValues(values, { bins: 13 });
    const total = Array.from(h.counts).reduce((a, b) => a + b, 0);
    expect(total + h.missing).toBe(values.length);
  });
});

describe('helpers', () => {
  it('suggests Sturges bins within bounds', () => {
    expect(suggestedBins(0)).toBe(5);
    expect(suggestedBins(1000)).toBe(11); // ceil(log2(1000) + 1) = 11 (Sturges 1926)
    expect(suggestedBins(1e9)).toBe(31); // ceil(29.9 + 1)
  });
  it('makes a symmetric range and readable labels', () => {
    expect(symmetricRange([-0.2, 0.5, NaN])).toEqual([-0.5, 0.5]);
    const h = binValues([0, 1], { bins: 2, range: [0, 1] });
    expect(binLabel(h, 0, (x) => formatFixed(x, 2))).toBe('[0.00, 0.50)');
    expect(binLabel(h, 1, (x) => formatFixed(x, 2))).toBe('[0.50, 1.00]');
  });
});
