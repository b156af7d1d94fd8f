/**
 * Checks that a gain convention gives finite numbers on the data before any query is scored.
 *
 * Doubles stop at about 1.8e308: the exponential gain 2^g − 1 of grade 1024 is already Infinity, and a
 * finite gain can still overflow once summed over a query's items (DCG, its ideal, the pair pass's sums).
 * A metric that silently became NaN would drop its query from the mean, so such data is an input error
 * naming the row, and an alternative convention that cannot score the data is marked unavailable with
 * the reason.
 */
import { InputError } from '../errors';
import type { Conventions, GainConvention } from '../metrics/conventions';
import { anyNeeds, type MetricSpec } from '../metrics/registry';
import { formatGain } from '../metrics/parse';
import type { RankedDump } from '../model/dump';
import type { GradeRange } from '../model/rowSummary';

/**
 * Largest |gain| a query of n items may carry. The pair pass adds products of a gain and a sum of up to n
 * discounts (each ≤ 1) over up to n items, and the swap cost adds four such terms: 4·n²·|gain| bounds every
 * intermediate sum, and DCG (≤ n·|gain|) and its ideal stay far below it.
 */
export function largestSafeGain(largestQuery: number): number {
  const n = Math.max(1, largestQuery);
  return Number.MAX_VALUE / (4 * n * n);
}

export interface GainProblem {
  /** The grade whose gain is out of range. */
  readonly grade: number;
  /** Why, in words. */
  readonly why: string;
}

/**
 * Why `gain` cannot score grades in `range` for queries of up to `largestQuery` items; undefined when it can.
 * A gain map is judged by the grades it lists (checkGainsAndGrades looks only at grades present in the data).
 */
export function gainProblem(gain: GainConvention, range: GradeRange, largestQuery: number): GainProblem | undefined {
  const limit = largestSafeGain(largestQuery);
  const too = (grade: number, value: number): GainProblem => ({
    grade,
    why: `grade ${grade} gives gain ${formatNumber(value)} under ${formatGain(gain)} gain, ` +
      (Number.isFinite(value) ? `too large to sum over a query of ${largestQuery} items` : 'beyond the largest double'),
  });
  switch (gain.kind) {
    case 'exponential': {
      if (range.lowest < 0) return { grade: range.lowest, why: `grade ${range.lowest} is negative, and exponential gain needs grades >= 0` };
      const top = Math.pow(2, range.highest) - 1;
      return top <= limit ? undefined : too(range.highest, top);
    }
    case 'linear': {
      const g = Math.abs(range.lowest) > Math.abs(range.highest) ? range.lowest : range.highest;
      return Math.abs(g) <= limit ? undefined : too(g, g);
    }
    case 'map':
      for (const [grade, value] of gain.gains) if (!(Math.abs(value) <= limit)) return too(grade, value);
      return undefined;
  }
}

const GAIN_HINT = 'use --gain linear, or a gain map such as map:0=0,1=1,2=3';

/**
 * Refuses conventions that cannot score this dump, naming the first row at fault: a grade missing from
 * the gain map, a negative grade under exponential gain, a gain too large to sum, and ERR's grade range.
 * Returns ERR's g_max.
 */
export function checkGainsAndGrades(dump: RankedDump, metrics: readonly MetricSpec[], c: Conventions, range: GradeRange,
  largestQuery: number): number {
  const gain = c.gain;
  if (gain.kind === 'map') {
    const gains = gain.gains;
    const limit = largestSafeGain(largestQuery);
    const missing = firstRow(dump, (g) => !gains.has(g));
    if (missing >= 0) {
      const grade = gradeAt(dump, missing);
      throw rowError(dump, missing, `a gain for grade ${grade} in the gain map --gain ${formatGain(gain)} (unjudged rows count as grade 0)`,
        String(grade));
    }
    const unmapped = firstUnretrieved(dump, (g) => !gains.has(g));
    if (unmapped >= 0) {
      const grade = dump.unretrieved!.grade[unmapped]!;
      throw unretrievedError(dump, unmapped, `a gain for grade ${grade} in the gain map --gain ${formatGain(gain)}`, String(grade));
    }
    const hugeUnretrieved = firstUnretrieved(dump, (g) => !(Math.abs(gains.get(g)!) <= limit));
    if (hugeUnretrieved >= 0) {
      const grade = dump.unretrieved!.grade[hugeUnretrieved]!;
      const why = `grade ${grade} gives gain ${formatNumber(gains.get(grade)!)} in the gain map, too large to sum over a query of ${largestQuery} items`;
      throw unretrievedError(dump, hugeUnretrieved, `a grade whose gain is finite and summable: ${why} (${GAIN_HINT})`, String(grade));
    }
    const huge = firstRow(dump, (g) => !(Math.abs(gains.get(g)!) <= limit));
    if (huge >= 0) {
      const grade = gradeAt(dump, huge);
      const why = `grade ${grade} gives gain ${formatNumber(gains.get(grade)!)} in the gain map, too large to sum over a query of ${largestQuery} items`;
      throw rowError(dump, huge, `a grade whose gain is finite and summable: ${why} (${GAIN_HINT})`, String(grade));
    }
  } else {
    const problem = gainProblem(gain, range, largestQuery);
    if (problem !== undefined) {
      const row = firstRow(dump, (g) => g === problem.grade);
      const entry = row < 0 ? firstUnretrieved(dump, (g) => g === problem.grade) : -1;
      if (entry >= 0) throw unretrievedError(dump, entry, `a grade whose gain is finite and summable: ${problem.why} (${GAIN_HINT})`, String(problem.grade));
      throw rowError(dump, row, `a grade whose gain is finite and summable: ${problem.why} (${GAIN_HINT})`, String(problem.grade));
    }
  }
  if (!(c.rbpPersistence > 0 && c.rbpPersistence < 1)) {
    throw new InputError('an RBP persistence strictly between 0 and 1', '--rbp-persistence', undefined, String(c.rbpPersistence));
  }
  const gmax = c.maxGrade ?? range.highest;
  if (anyNeeds(metrics, 'maxGrade')) {
    if (range.lowest < 0) {
      const row = firstRow(dump, (g) => g < 0);
      const entry = row < 0 ? firstUnretrieved(dump, (g) => g < 0) : -1;
      if (entry >= 0) throw unretrievedError(dump, entry, 'grades >= 0 for ERR', String(range.lowest));
      throw rowError(dump, row, 'grades >= 0 for ERR', String(range.lowest));
    }
    if (range.highest > gmax) {
      const row = firstRow(dump, (g) => g > gmax);
      const entry = row < 0 ? firstUnretrieved(dump, (g) => g > gmax) : -1;
      if (entry >= 0) throw unretrievedError(dump, entry, `grades <= the maximum grade ${gmax} for ERR (--max-grade)`, String(range.highest));
      throw rowError(dump, row, `grades <= the maximum grade ${gmax} for ERR (--max-grade)`, String(range.highest));
    }
  }
  return gmax;
}

/** Grade of a row as metrics see it: unjudged counts as 0. */
function gradeAt(dump: RankedDump, row: number): number {
  const g = dump.label[row]!;
  return g !== g ? 0 : g;
}

function firstRow(dump: RankedDump, bad: (grade: number) => boolean): number {
  for (let r = 0; r < dump.rowCount; r++) if (bad(gradeAt(dump, r))) return r;
  return -1;
}

/** The first judged-but-unretrieved grade (labels from a judgments file) that is `bad`, or -1. */
function firstUnretrieved(dump: RankedDump, bad: (grade: number) => boolean): number {
  const grades = dump.unretrieved?.grade;
  if (grades === undefined) return -1;
  for (let e = 0; e < grades.length; e++) if (bad(grades[e]!)) return e;
  return -1;
}

/** An InputError at the judgments file's line of a judged item the run never retrieved. */
function unretrievedError(dump: RankedDump, entry: number, expected: string, found: string): InputError {
  const line = dump.unretrieved!.line[entry]!;
  const file = dump.notes.judgments?.path;
  return new InputError(`${expected} (a judged item the run never retrieved; it counts in the ideal ranking)`, file, line || undefined, found);
}

/** An InputError at the row's line, or naming the row when the format has no lines (Parquet). */
function rowError(dump: RankedDump, row: number, expected: string, found: string): InputError {
  const line = row >= 0 ? dump.line[row] ?? 0 : 0;
  const unjudged = row >= 0 && Number.isNaN(dump.label[row]!);
  const judged = dump.notes.judgments === undefined ? '' : unjudged ? ' (an unjudged item counts as grade 0)' : ' (its grade comes from the judgments file)';
  if (line > 0) return new InputError(`${expected}${judged}`, dump.path, line, found);
  const where = row >= 0 ? ` in row ${row + 1}` : '';
  return new InputError(`${expected}${where}`, dump.path, undefined, found);
}

function formatNumber(v: number): string {
  return Number.isFinite(v) ? v.toPrecision(3) : 'Infinity';
}
