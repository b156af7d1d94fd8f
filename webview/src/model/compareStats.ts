/**
 * Small derivations for the compare screens from what the host sends: the Benjamini–Hochberg
 * adjustment over the metrics tested and the paired effect size d_z from the paired t statistic.
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
