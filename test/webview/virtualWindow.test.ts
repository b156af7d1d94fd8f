import { describe, expect, it } from 'vitest';
import { computeWindow, MAX_SCROLL_HEIGHT, pagesCovering, scrollTopToReveal } from '../../webview/src/model/virtualWindow';
import { seededRandom } from '../reference/random';

/** Obviously-correct version: test every row for overlap with the viewport (unscaled tables only). */
function slowVisibleRows(scrollTop: number, viewport: number, rowHeight: number, total: number): number[] {
  const rows: number[] = [];
  for (let i = 0; i < total; i++) {
    const top = i * rowHeight;
    if (top < scrollTop + viewport && top + rowHeight > scrollTop) rows.push(i);
  }
  return rows;
}

describe('computeWindow', () => {
  it('renders the rows crossing the viewport plus overscan (hand case)', () => {
    const w = computeWindow({ scrollTop: 220, viewportHeight: 100, rowHeight: 22, total: 1000, overscan: 2 });
    // Rows 10 (220..242) to 14 (308..330) cross [220, 320).
    expect(w.first).toBe(8);
    expect(w.end).toBe(17);
    expect(w.offsetTop).toBe(8 * 22);
    expect(w.contentHeight).toBe(22000);
  });

  it('covers exactly the rows a brute-force overlap test finds (seeded random)', () => {
    const rand = seededRandom(11);
    for (let t = 0; t < 500; t++) {
      const total = Math.floor(rand() * 300);
      const rowHeight = 10 + Math.floor(rand() * 20);
      const viewport = 50 + Math.floor(rand() * 400);
      const scrollTop = Math.floor(rand() * Math.max(1, total * rowHeight - viewport));
      const w = computeWindow({ scrollTop, viewportHeight: viewport, rowHeight, total, overscan: 0 });
      const expected = slowVisibleRows(scrollTop, viewport, rowHeight, total);
      if (expected.length === 0) continue;
      expect(w.first, `case ${t}`).toBe(expected[0]);
      expect(w.end, `case ${t}`).toBe(expected[expected.length - 1]! + 1);
      expect(w.offsetTop).toBe(w.first * rowHeight);
    }
  });

  it('keeps the DOM small for 100k rows and reaches the last row', () => {
    const total = 100_000;
    const w = computeWindow({ scrollTop: 1_000_000, viewportHeight: 600, rowHeight: 22, total });
    expect(w.end - w.first).toBeLessThan(50);
    const bottom = computeWindow({ scrollTop: total * 22 - 600, viewportHeight: 600, rowHeight: 22, total });
    expect(bottom.end).toBe(total);
  });

  it('scales tables taller than the browser limit and still reaches both ends', () => {
    const total = 2_000_000;
    const rowHeight = 22;
    const viewport = 660;
    const top = computeWindow({ scrollTop: 0, viewportHeight: viewport, rowHeight, total, overscan: 0 });
    expect(top.contentHeight).toBe(MAX_SCROLL_HEIGHT);
    expect(top.first).toBe(0);
    const end = computeWindow({ scrollTop: MAX_SCROLL_HEIGHT - viewport, viewportHeight: viewport, rowHeight, total, overscan: 0 });
    expect(end.end).toBe(total);
    // The last row's bottom edge sits exactly at the viewport's bottom edge.
    const lastBottom = end.offsetTop + (total - end.first) * rowHeight;
    expect(lastBottom).toBeCloseTo(MAX_SCROLL_HEIGHT, 6);
  });
});

describe('scrollTopToReveal', () => {
  it('moves as little as possible to show a row', () => {
    expect(scrollTopToReveal(5, 0, 100, 20, 100)).toBe(20); // row 5 = 100..120, bottom-align
    expect(scrollTopToReveal(2, 200, 100, 20, 100)).toBe(40); // above: top-align
    expect(scrollTopToReveal(11, 200, 100, 20, 100)).toBe(200); // already visible
  });
  it('puts the row inside the window in scaled mode too', () => {
    const total = 3_000_000;
    for (const index of [0, 17, 1_234_567, total - 1]) {
      const st = scrollTopToReveal(index, 0, 440, 22, total);
      const w = computeWindow({ scrollTop: st, viewportHeight: 440, rowHeight: 22, total, overscan: 0 });
      expect(index).toBeGreaterThanOrEqual(w.first);
      expect(index).toBeLessThan(w.end);
    }
  });
});

describe('pagesCovering', () => {
  it('lists each page touched once', () => {
    expect(pagesCovering(0, 0, 100)).toEqual([]);
    expect(pagesCovering(0, 100, 100)).toEqual([0]);
    expect(pagesCovering(95, 205, 100)).toEqual([0, 1, 2]);
  });
});
