/**
 * Grade → gain under a GainConvention, with the checks that make a convention unusable on some data.
 */
import { InputError } from '../errors';
import type { GainConvention } from './conventions';

export type GainFunction = (grade: number) => number;

/** exponential 2^g − 1 (Burges et al. 2005, common practice); linear g; map: the listed gain. */
export function gainFunction(gain: GainConvention): GainFunction {
  switch (gain.kind) {
    case 'exponential':
      return withSmallGrades((g) => Math.pow(2, g) - 1);
    case 'linear':
      return (g) => g;
    case 'map': {
      const gains = gain.gains;
      return (g) => {
        const v = gains.get(g);
        // evaluate/gainLimits.ts checks every grade of the data against the map first, naming the row.
        if (v === undefined) throw new InputError(`a gain for grade ${g} in the gain map (unjudged rows count as grade 0)`, '--gain');
        return v;
      };
    }
  }
}

/** Integer grades below this are looked up: every query asks for the gain of each of its grades. */
const SMALL_GRADES = 64;

/**
 * `f` with its values for the grades 0..SMALL_GRADES-1 computed once: the same bits (the same call made
 * them), without a Math.pow per grade per query, which cost a tenth of scoring a million small queries.
 */
export function withSmallGrades(f: (grade: number) => number): (grade: number) => number {
  const table = Float64Array.from({ length: SMALL_GRADES }, (_, g) => f(g));
  return (g) => ((g | 0) === g && g >= 0 && g < SMALL_GRADES ? table[g]! : f(g));
}

/** True when a higher grade never has a lower gain, so the ideal order is simply grade-descending. */
export function isMonotone(gain: GainConvention): boolean {
  if (gain.kind !== 'map') return true;
  const pairs = [...gain.gains].sort((a, b) => a[0] - b[0]);
  for (let i = 1; i < pairs.length; i++) if (pairs[i]![1] < pairs[i - 1]![1]) return false;
  return true;
}
