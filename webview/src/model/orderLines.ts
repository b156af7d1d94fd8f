/**
 * Geometry of the lines joining each item's predicted position (left list) to its ideal position
 * (right list). Rows are equal height, so a line goes from the middle of its left row to the middle
 * of its right row; an item whose other end lies beyond the rows shown is drawn to the bottom edge
 * and flagged, so a relevant item buried deep in the list is still visible as a line leaving the view.
 */

export interface OrderLink {
  /** 1-based position in the predicted order. */
  readonly position: number;
  /** 1-based position in the ideal order. */
  readonly idealPosition: number;
  readonly gain: number;
  /**
   * Gain of the item the ideal order puts at this item's predicted position. When given, a line is
   * judged by gain rather than by position: it matters only when the item's gain differs from the
   * gain that belongs where the model put it (an item among equal gains is in place, wherever the
   * other end lands), and its weight is that gain difference.
   */
  readonly slotGain?: number;
}

export type LinkDirection = 'up' | 'down' | 'same';

export interface LineSegment {
  readonly position: number;
  readonly idealPosition: number;
  readonly x1: number;
  readonly y1: number;
  readonly x2: number;
  readonly y2: number;
  /**
   * 'up': the item belongs higher than the model put it (with `slotGain`: its gain is above the gain
   * that belongs at its predicted position); 'down': lower; 'same': in place.
   */
  readonly direction: LinkDirection;
  /** The other end is beyond the rows shown and was clipped to the bottom edge. */
  readonly clipped: boolean;
  /**
   * 0..1 relative to the largest gain: the item's gain, or with `slotGain` the gain difference it
   * carries, so stronger lines are the ones that cost DCG.
   */
  readonly weight: number;
}

export interface LineLayout {
  readonly rowHeight: number;
  /** Horizontal span of the connector column. */
  readonly width: number;
  /** Rows drawn in each list (both lists show the same count). */
  readonly rowsShown: number;
  /** Vertical offset of the first row (e.g. under a header). */
  readonly top?: number;
}

export function lineSegments(links: readonly OrderLink[], layout: LineLayout): LineSegment[] {
  const { rowHeight, width, rowsShown } = layout;
  const top = layout.top ?? 0;
  const bottom = top + rowsShown * rowHeight;
  let maxGain = 0;
  for (const l of links) if (l.gain > maxGain) maxGain = l.gain;
  const out: LineSegment[] = [];
  for (const l of links) {
    const leftShown = l.position <= rowsShown;
    const rightShown = l.idealPosition <= rowsShown;
    if (!leftShown && !rightShown) continue;
    const y1 = leftShown ? top + (l.position - 0.5) * rowHeight : bottom;
    const y2 = rightShown ? top + (l.idealPosition - 0.5) * rowHeight : bottom;
    const byGain = l.slotGain !== undefined;
    const ahead = byGain ? l.gain - l.slotGain! : l.position - l.idealPosition;
    const direction: LinkDirection = ahead > 0 ? 'up' : ahead < 0 ? 'down' : 'same';
    const carried = byGain ? Math.abs(l.gain - l.slotGain!) : l.gain;
    out.push({
      position: l.position,
      idealPosition: l.idealPosition,
      x1: 0,
      y1,
      x2: width,
      y2,
      direction,
      clipped: !(leftShown && rightShown),
      weight: maxGain > 0 ? Math.min(1, carried / maxGain) : 0,
    });
  }
  return out;
}

/** SVG path data for one segment: a smooth S-curve reads better than a straight line when many cross. */
export function segmentPath(s: LineSegment): string {
  const mid = (s.x1 + s.x2) / 2;
  const r = (v: number): string => String(Math.round(v * 100) / 100);
  return `M${r(s.x1)} ${r(s.y1)} C${r(mid)} ${r(s.y1)} ${r(mid)} ${r(s.y2)} ${r(s.x2)} ${r(s.y2)}`;
}
