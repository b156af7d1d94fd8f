/**
 * The checks the local engine makes before scoring (evaluate/gainLimits.ts), made from what a database
 * reports about the table (grade range, row count, a grade missing from the gain map) rather than from
 * rows in memory. Same refusals, same words; the table stands where a file's line would.
 */
import { InputError } from '../errors';
import { gainProblem } from '../evaluate/gainLimits';
import type { Conventions } from '../metrics/conventions';
import type { MetricSpec } from '../metrics/registry';
import { formatGain } from '../metrics/parse';
import type { GradeRange } from '../model/rowSummary';

export interface TableFacts {
  readonly range: GradeRange;
  /** Rows of the table: a bound on the largest query, for the gain-size check. */
  readonly rows: number;
  /** A grade present in the table but not in the gain map, if any. */
  readonly unmappedGrade?: number;
}

/** Refuses conventions that cannot score the table; returns ERR's g_max. */
export function checkTable(facts: TableFacts, metrics: readonly MetricSpec[], c: Conventions, source: string): number {
  const { range } = facts;
  if (c.gain.kind === 'map' && facts.unmappedGrade !== undefined) {
    throw new InputError(`a gain for grade ${facts.unmappedGrade} in the gain map --gain ${formatGain(c.gain)} (unjudged rows count as grade 0)`,
      source, undefined, String(facts.unmappedGrade));
  }
  const problem = gainProblem(c.gain, range, facts.rows);
  if (problem !== undefined) {
    throw new InputError(`a grade whose gain is finite and summable: ${problem.why} (use --gain linear, or a gain map such as map:0=0,1=1,2=3)`,
      source, undefined, String(problem.grade));
  }
  if (!(c.rbpPersistence > 0 && c.rbpPersistence < 1)) {
    throw new InputError('an RBP persistence strictly between 0 and 1', '--rbp-persistence', undefined, String(c.rbpPersistence));
  }
  const gmax = c.maxGrade ?? range.highest;
  if (metrics.some((m) => m.name === 'err')) {
    if (range.lowest < 0) throw new InputError('grades >= 0 for ERR', source, undefined, String(range.lowest));
    if (range.highest > gmax) throw new InputError(`grades <= the maximum grade ${gmax} for ERR (--max-grade)`, source, undefined, String(range.highest));
  }
  return gmax;
}
