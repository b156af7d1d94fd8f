/**
 * Tails of the t and normal distributions for the paired tests, from stdlib-js's double-precision special
 * functions (ports of Boost.Math's regularized incomplete beta and of the FreeBSD/Sun erfc), not from
 * hand-written approximations. Tails are computed directly with the complementary functions, never as
 * 1 − cdf, so a small p-value keeps its relative precision down to where a double underflows.
 */
import betainc from '@stdlib/math-base-special-betainc';
import erfc from '@stdlib/math-base-special-erfc';

/**
 * P(T ≥ t) for Student's t with `dof` degrees of freedom (dof > 0).
 * With x = dof / (dof + t²): P(|T| ≥ |t|) = I_x(dof/2, 1/2), the regularized incomplete beta
 * (Abramowitz & Stegun 26.7.1 with 26.5.2). When x > 1/2, that is t² < dof, the same value is taken as
 * the upper tail of I_{1−x}(1/2, dof/2), evaluated by betainc itself with 1 − x = t²/(dof + t²) formed
 * directly, so neither x nor 1 − x comes from a cancelling subtraction.
 * One exception: for dof = 1 and |t| < 1 the closed form of the Cauchy distribution, 1 − (2/π)·atan|t|
 * (common practice), is used instead, because betainc's upper tail at a = b = 1/2 (its arcsine special
 * case) forms 1 − x itself and is off by up to 3e-9 for small x (stdlib 0.2.3). That p is at least 1/2,
 * so the subtraction there costs nothing.
 */
export function studentUpperTail(t: number, dof: number): number {
  if (Number.isNaN(t) || !(dof > 0)) return Number.NaN;
  if (t === Number.POSITIVE_INFINITY) return 0;
  if (t === Number.NEGATIVE_INFINITY) return 1;
  const twoSided = studentTwoSidedTail(Math.abs(t), dof);
  return t >= 0 ? twoSided / 2 : 1 - twoSided / 2;
}

/** Two-sided p-value of a Student t statistic: P(|T| ≥ |t|) = 2·P(T ≥ |t|). */
export function studentTwoSidedP(t: number, dof: number): number {
  if (Number.isNaN(t) || !(dof > 0)) return Number.NaN;
  if (!Number.isFinite(t)) return 0;
  return Math.min(1, studentTwoSidedTail(Math.abs(t), dof));
}

/** P(|T| ≥ a) for a ≥ 0 finite. */
function studentTwoSidedTail(a: number, dof: number): number {
  if (a * a < dof) {
    if (dof === 1) return 1 - (2 / Math.PI) * Math.atan(a);
    // x > 1/2: the upper tail of I_{1−x}(1/2, dof/2), with 1 − x = a² / (dof + a²).
    const y = (a * a) / (dof + a * a);
    return betainc(y, 0.5, dof / 2, true, true);
  }
  // x ≤ 1/2: x = r² / (1 + r²) with r = √dof / a, which stays finite where a² would overflow.
  const r = Math.sqrt(dof) / a;
  const x = (r * r) / (1 + r * r);
  return betainc(x, dof / 2, 0.5, true, false);
}

/**
 * P(Z ≥ z) for a standard normal Z: erfc(z/√2)/2. The argument is formed as z·(1/√2), as scipy's ndtr
 * forms it, so both round it the same way.
 */
export function normalUpperTail(z: number): number {
  if (Number.isNaN(z)) return Number.NaN;
  return erfc(z * Math.SQRT1_2) / 2;
}

/** Two-sided p-value of a standard normal statistic: P(|Z| ≥ |z|) = erfc(|z|/√2). */
export function normalTwoSidedP(z: number): number {
  if (Number.isNaN(z)) return Number.NaN;
  if (!Number.isFinite(z)) return 0;
  return Math.min(1, 2 * normalUpperTail(Math.abs(z)));
}
