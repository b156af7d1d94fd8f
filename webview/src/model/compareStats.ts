/**
 * Small derivations for the compare screens from what the host sends: the Benjamini–Hochberg
 * adjustment over the metrics tested, the paired effect size d_z from the paired t statistic, and
 * the pairs a new ranking fixed or introduced for one query.
 */

/**
 * Benjamini–Hochberg adjusted p-values (Benjamini & Hochberg 1995, step-up): for the i-th smallest
 * of m p-values, min over j ≥ i of m·p_(j)/j, capped at 1. Missing p-values stay missing and do not
 * count in m.
 */
export function benjaminiHochberg(pValues: readonly (number | null)[]): (number | null)[] {
  const present = pValues.map((p, i) => ({ p, i })).filter((x): x is { p: number; i: number } => x.p !== null && Number.isFinite(x.p));
  const m = present.length;
  const out: (number | null)[] = pValues.map(() => null);
  present.sort((a, b) => a.p - b.p);
  let running = 1;
  for (let rank = m; rank >= 1; rank--) {
    const { p, i } = present[rank - 1]!;
    running = Math.min(running, (m * p) / rank);
    out[i] = Math.min(1, running);
  }
  return out;
}

/**
 * Cohen's d for paired samples, d_z = mean(Δ) / sd(Δ) (Cohen 1988; Lakens 2013), recovered from the
 * paired t statistic: t = mean(Δ) / (sd(Δ)/√n), hence d_z = t / √n.
 */
export function effectSizeDz(t: number | null, n: number): number | null {
  if (t === null || !Number.isFinite(t) || n < 2) return null;
  return t / Math.sqrt(n);
}

export interface MovementItem {
  readonly item: string;
  readonly label: number | null;
  readonly positionA: number | null;
  readonly positionB: number | null;
}

export interface PairChange {
  /** The better-graded item of the pair. */
  readonly better: string;
  readonly worse: string;
}

export interface PairChanges {
  /** Inverted in A (better-graded item below), in order in B. */
  readonly fixed: PairChange[];
  /** In order in A, inverted in B. */
  readonly introduced: PairChange[];
  readonly invertedA: number;
  readonly invertedB: number;
  /** Pairs left out because an item is missing from one run or unjudged. */
  readonly notComparable: number;
}

/**
 * Pairs of differently graded items whose relative order changed between A and B. Unjudged labels
 * count as grade 0, as the metrics do. Quadratic in the items of one query; capped by `maxItems`
 * (the rest counted as not comparable) to keep the view responsive.
 */
export function pairChanges(items: readonly MovementItem[], maxItems = 2000): PairChanges {
  const fixed: PairChange[] = [];
  const introduced: PairChange[] = [];
  let invertedA = 0;
  let invertedB = 0;
  let notComparable = 0;
  const usable = items.filter((x) => x.positionA !== null && x.positionB !== null);
  const considered = usable.slice(0, maxItems);
  const leftOut = items.length - considered.length;
  notComparable += (leftOut * (leftOut - 1)) / 2 + leftOut * considered.length;
  for (let i = 0; i < considered.length; i++) {
    const x = considered[i]!;
    for (let j = i + 1; j < considered.length; j++) {
      const y = considered[j]!;
      const gx = x.label ?? 0;
      const gy = y.label ?? 0;
      if (gx === gy) continue;
      const [better, worse] = gx > gy ? [x, y] : [y, x];
      const wrongA = better.positionA! > worse.positionA!;
      const wrongB = better.positionB! > worse.positionB!;
      if (wrongA) invertedA++;
      if (wrongB) invertedB++;
      if (wrongA && !wrongB) fixed.push({ better: better.item, worse: worse.item });
      else if (!wrongA && wrongB) introduced.push({ better: better.item, worse: worse.item });
    }
  }
  return { fixed, introduced, invertedA, invertedB, notComparable };
}
