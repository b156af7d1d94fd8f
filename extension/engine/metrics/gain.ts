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
      return (g) => Math.pow(2, g) - 1;
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

/** True when a higher grade never has a lower gain, so the ideal order is simply grade-descending. */
export function isMonotone(gain: GainConvention): boolean {
  if (gain.kind !== 'map') return true;
  const pairs = [...gain.gains].sort((a, b) => a[0] - b[0]);
  for (let i = 1; i < pairs.length; i++) if (pairs[i]![1] < pairs[i - 1]![1]) return false;
  return true;
}
