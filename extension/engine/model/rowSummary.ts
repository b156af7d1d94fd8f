/**
 * One pass over a dump's label and score columns: unjudged and missing-score rows and the judged
 * grade extremes. Summaries of consecutive ranges add up, so parse workers summarise their own.
 */

export interface RowSummary {
  unjudged: number;
  missing: number;
  /** Over judged rows only; Infinity and -Infinity when none is judged. */
  lowest: number;
  highest: number;
}

export interface GradeRange {
  readonly lowest: number;
  readonly highest: number;
}

export function summariseRows(label: ArrayLike<number>, score: ArrayLike<number>, from: number, to: number): RowSummary {
  let unjudged = 0;
  let missing = 0;
  let lowest = Infinity;
  let highest = -Infinity;
  for (let i = from; i < to; i++) {
    const g = label[i]!;
    if (g !== g) unjudged++;
    else {
      if (g < lowest) lowest = g;
      if (g > highest) highest = g;
    }
    const s = score[i]!;
    if (s !== s) missing++;
  }
  return { unjudged, missing, lowest, highest };
}

export function addSummaries(parts: readonly RowSummary[]): RowSummary {
  const sum: RowSummary = { unjudged: 0, missing: 0, lowest: Infinity, highest: -Infinity };
  for (const p of parts) {
    sum.unjudged += p.unjudged;
    sum.missing += p.missing;
    sum.lowest = Math.min(sum.lowest, p.lowest);
    sum.highest = Math.max(sum.highest, p.highest);
  }
  return sum;
}

/** The grade range metrics use: unjudged rows count as grade 0 (0 and 0 when nothing is judged). */
export function gradeRangeOf(summary: RowSummary): GradeRange {
  const zeroToo = summary.unjudged > 0 || summary.lowest === Infinity;
  return {
    lowest: zeroToo ? Math.min(summary.lowest, 0) : summary.lowest,
    highest: zeroToo ? Math.max(summary.highest, 0) : summary.highest,
  };
}
