/**
 * The distribution functions the tests need, taken from jStat (a maintained statistics library)
 * rather than hand-written special functions.
 */
// @ts-expect-error -- jstat ships no type declarations; the subset used is typed below.
import { jStat as untypedJStat } from 'jstat';

interface JStatSubset {
  studentt: { cdf(x: number, dof: number): number };
  normal: { cdf(x: number, mean: number, std: number): number };
}

const jStat = untypedJStat as JStatSubset;

/** Two-sided p-value of a Student t statistic: 2·P(T ≤ −|t|), computed in the lower tail to keep precision. */
export function studentTwoSidedP(t: number, dof: number): number {
  if (Number.isNaN(t) || !(dof > 0)) return Number.NaN;
  if (!Number.isFinite(t)) return 0;
  return Math.min(1, 2 * jStat.studentt.cdf(-Math.abs(t), dof));
}

/** Two-sided p-value of a standard normal statistic: 2·Φ(−|z|). */
export function normalTwoSidedP(z: number): number {
  if (Number.isNaN(z)) return Number.NaN;
  if (!Number.isFinite(z)) return 0;
  return Math.min(1, 2 * jStat.normal.cdf(-Math.abs(z), 0, 1));
}
