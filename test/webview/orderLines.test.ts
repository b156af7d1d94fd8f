import { describe, expect, it } from 'vitest';
import { lineSegments, segmentPath, type LineSegment } from '../../webview/src/model/orderLines';
import { seededRandom } from '../reference/random';

function straightSegmentsCross(a: LineSegment, b: LineSegment): boolean {
  // Both segments span the same x range, so they cross inside it exactly when their vertical order swaps.
  return (a.y1 - b.y1) * (a.y2 - b.y2) < 0;
}

describe('lineSegments', () => {
  it('joins row centres (hand case)', () => {
    const s = lineSegments(
      [
        { position: 1, idealPosition: 2, gain: 0 },
        { position: 2, idealPosition: 1, gain: 3 },
      ],
      { rowHeight: 20, width: 60, rowsShown: 10, top: 4 },
    );
    expect(s[0]).toMatchObject({ x1: 0, y1: 14, x2: 60, y2: 34, direction: 'down', clipped: false, weight: 0 });
    expect(s[1]).toMatchObject({ y1: 34, y2: 14, direction: 'up', weight: 1 });
    expect(segmentPath(s[1]!)).toBe('M0 34 C30 34 30 14 60 14');
  });

  it('clips an end beyond the rows shown to the bottom edge and drops lines entirely out of view', () => {
    const s = lineSegments(
      [
        { position: 2, idealPosition: 40, gain: 1 },
        { position: 50, idealPosition: 1, gain: 7 },
        { position: 60, idealPosition: 70, gain: 1 },
      ],
      { rowHeight: 10, width: 50, rowsShown: 5 },
    );
    expect(s).toHaveLength(2);
    expect(s[0]).toMatchObject({ y1: 15, y2: 50, clipped: true });
    expect(s[1]).toMatchObject({ y1: 50, y2: 5, clipped: true, direction: 'up' });
  });

  it('draws as many crossings as there are pairs the two orders disagree on (seeded permutations)', () => {
    // Invariant: two lines cross exactly when the predicted and ideal orders rank the pair differently,
    // so the number of crossings is the Kendall discordant-pair count of the two orders.
    const rand = seededRandom(99);
    for (let t = 0; t < 50; t++) {
      const n = 2 + Math.floor(rand() * 25);
      const ideal = Array.from({ length: n }, (_, i) => i + 1);
      for (let i = n - 1; i > 0; i--) {
        const j = Math.floor(rand() * (i + 1));
        [ideal[i], ideal[j]] = [ideal[j]!, ideal[i]!];
      }
      const links = ideal.map((q, i) => ({ position: i + 1, idealPosition: q, gain: 1 }));
      const segs = lineSegments(links, { rowHeight: 18, width: 40, rowsShown: n });
      let crossings = 0;
      let discordant = 0;
      for (let i = 0; i < n; i++)
        for (let j = i + 1; j < n; j++) {
          if (straightSegmentsCross(segs[i]!, segs[j]!)) crossings++;
          if (ideal[i]! > ideal[j]!) discordant++;
        }
      expect(crossings).toBe(discordant);
    }
  });
});

describe('lines judged by gain (query detail)', () => {
  it('marks only the items whose gain differs from the gain that belongs at their predicted position (hand case)', () => {
    // Predicted grades 0,3,0,1 (gains 0,7,0,1 under 2^g−1); ideal gains by position 7,1,0,0.
    // Position 1 holds gain 0 where 7 belongs: belongs lower, full weight. Position 2 holds 7 where
    // 1 belongs: belongs higher, weight 6/7. Position 3 holds 0 where 0 belongs: in place though it
    // moves one row down in the ideal list. Position 4 holds 1 where 0 belongs: belongs higher, 1/7.
    const slot = [7, 1, 0, 0];
    const links = [
      { position: 1, idealPosition: 3, gain: 0 },
      { position: 2, idealPosition: 1, gain: 7 },
      { position: 3, idealPosition: 4, gain: 0 },
      { position: 4, idealPosition: 2, gain: 1 },
    ].map((l) => ({ ...l, slotGain: slot[l.position - 1]! }));
    const s = lineSegments(links, { rowHeight: 10, width: 40, rowsShown: 4 });
    expect(s.map((x) => x.direction)).toEqual(['down', 'up', 'same', 'up']);
    expect(s[0]!.weight).toBe(1);
    expect(s[1]!.weight).toBeCloseTo(6 / 7, 12);
    expect(s[2]!.weight).toBe(0);
    expect(s[3]!.weight).toBeCloseTo(1 / 7, 12);
  });
});
