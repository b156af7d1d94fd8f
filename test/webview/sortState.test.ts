import { describe, expect, it } from 'vitest';
import { ariaSort, compareCells, normalizeFilter, sortRows, toggleSort } from '../../webview/src/model/sortState';

describe('sort state', () => {
  it('starts each key in the direction that shows the worst rows first, and flips on a second click', () => {
    const start = { key: 'ndcg@10', descending: false };
    expect(toggleSort(start, 'ndcg@10')).toEqual({ key: 'ndcg@10', descending: true });
    expect(toggleSort(start, 'lossShare')).toEqual({ key: 'lossShare', descending: true });
    expect(toggleSort(start, 'inversionCost')).toEqual({ key: 'inversionCost', descending: true });
    expect(toggleSort({ key: 'lossShare', descending: true }, 'err@10')).toEqual({ key: 'err@10', descending: false });
    expect(ariaSort(start, 'ndcg@10')).toBe('ascending');
    expect(ariaSort(start, 'ap')).toBe('none');
  });

  it('normalises the filter', () => {
    expect(normalizeFilter('  drill ')).toBe('drill');
    expect(normalizeFilter('   ')).toBeUndefined();
  });

  it('keeps missing values last in both directions', () => {
    const rows = [{ v: 0.5 }, { v: null }, { v: 0.1 }, { v: NaN }, { v: 0.9 }];
    expect(sortRows(rows, (r) => r.v, false).map((r) => r.v)).toEqual([0.1, 0.5, 0.9, null, NaN]);
    expect(sortRows(rows, (r) => r.v, true).map((r) => r.v)).toEqual([0.9, 0.5, 0.1, null, NaN]);
  });

  it('sorts ids naturally and stably', () => {
    const rows = ['q10', 'q2', 'Q1', 'q2'].map((id, i) => ({ id, i }));
    expect(sortRows(rows, (r) => r.id, false).map((r) => r.i)).toEqual([2, 1, 3, 0]);
    expect(compareCells('wood screws 4x40', 'wood screws 4x8', false)).toBeGreaterThan(0);
  });

  it('agrees with a plain sort on random numbers (seeded, numbers only)', () => {
    let seed = 42;
    const next = () => ((seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31);
    const values = Array.from({ length: 500 }, () => Math.round(next() * 1000) / 1000);
    const ours = sortRows(values, (v) => v, false);
    expect(ours).toEqual([...values].sort((a, b) => a - b));
  });
});
