/**
 * Evaluates every query of a dump: per-query metric columns, means, degenerate-data counts, convention
 * sensitivity and plain-sentence warnings. One pass over the queries with reused scratch arrays.
 */
import { CancelledError, InputError } from '../errors';
import type { RankedDump } from '../model/dump';
import { groupByQuery, type QueryGroups } from '../model/groups';
import type { Conventions, MetricSpec } from '../metrics/conventions';
import { checkGainApplies } from '../metrics/gain';
import { QueryRanking, SeenItems } from './ranking';
import { QueryScorer } from './scorer';
import { SensitivityPass } from './sensitivity';
import type { DegenerateCounts, Evaluation, MetricSummary, PerQueryColumns } from './types';
import { describeDegenerate } from './warnings';

export interface EvaluateOptions {
  groups?: QueryGroups;
  signal?: AbortSignal;
  onProgress?: (fraction: number) => void;
  /** Compute the convention sensitivity rows (default true). */
  sensitivity?: boolean;
}

/** Highest and lowest judged grade of the whole dump (0 and 0 when nothing is judged). */
export function gradeRange(dump: RankedDump): { lowest: number; highest: number } {
  let lowest = Infinity;
  let highest = -Infinity;
  let unjudged = false;
  const label = dump.label;
  for (let r = 0; r < dump.rowCount; r++) {
    const g = label[r]!;
    if (g < lowest) lowest = g;
    if (g > highest) highest = g;
    if (g !== g) unjudged = true;
  }
  // Unjudged rows count as grade 0.
  if (unjudged || lowest === Infinity) {
    lowest = Math.min(lowest, 0);
    highest = Math.max(highest, 0);
  }
  return { lowest, highest };
}

/** Checks the conventions against the data once, before any query is scored; returns ERR's g_max. */
export function checkConventions(dump: RankedDump, metrics: readonly MetricSpec[], c: Conventions): number {
  return checkAgainstRange(gradeRange(dump), metrics, c, dump.path);
}

function checkAgainstRange(range: { lowest: number; highest: number }, metrics: readonly MetricSpec[], c: Conventions, path: string): number {
  const { lowest, highest } = range;
  checkGainApplies(c.gain, lowest);
  if (!(c.rbpPersistence > 0 && c.rbpPersistence < 1)) {
    throw new InputError('an RBP persistence strictly between 0 and 1', undefined, undefined, String(c.rbpPersistence));
  }
  const gmax = c.maxGrade ?? highest;
  if (metrics.some((m) => m.name === 'err')) {
    if (lowest < 0) throw new InputError('grades >= 0 for ERR', path, undefined, String(lowest));
    if (highest > gmax) throw new InputError(`grades <= the maximum grade ${gmax} for ERR`, path, undefined, String(highest));
  }
  return gmax;
}

export function evaluate(
  dump: RankedDump,
  metrics: readonly MetricSpec[],
  conventions: Conventions,
  options: EvaluateOptions = {},
): Evaluation {
  const range = gradeRange(dump);
  const gmax = checkAgainstRange(range, metrics, conventions, dump.path);
  const groups = options.groups ?? groupByQuery(dump);
  const queryCount = groups.start.length - 1;
  const scorer = new QueryScorer(conventions, metrics, gmax);
  const ranking = new QueryRanking();
  const seen = new SeenItems(dump.items.size);
  const sensitivity = options.sensitivity === false ? undefined : new SensitivityPass(conventions, scorer.headlineK, range.lowest);
  const hasRbp = metrics.some((m) => m.name === 'rbp');

  const values = metrics.map(() => new Float64Array(queryCount));
  const perQuery: PerQueryColumns = {
    items: new Uint32Array(queryCount),
    relevant: new Uint32Array(queryCount),
    values,
    inversions: new Float64Array(queryCount),
    inversionCost: new Float64Array(queryCount),
    skipped: new Uint8Array(queryCount),
    ...(hasRbp ? { rbpResidual: new Float64Array(queryCount) } : {}),
  };
  const degenerate: DegenerateCounts = {
    singleItemQueries: 0,
    noRelevantQueries: 0,
    duplicateRows: 0,
    missingScoreRows: 0,
    unjudgedRows: 0,
    tiedScoreRows: 0,
  };
  let emptyQueries = 0;
  let tauUndefined = 0;
  const tauIndex = metrics.findIndex((m) => m.name === 'tau');
  const skipPolicy = conventions.noRelevant === 'skip';
  const step = Math.max(1, Math.min(4096, Math.ceil(queryCount / 100)));

  for (let q = 0; q < queryCount; q++) {
    if (q % step === 0) {
      if (options.signal?.aborted) throw new CancelledError();
      options.onProgress?.(q / queryCount);
    }
    ranking.load(dump, groups.rowsOfQuery, groups.start[q]!, groups.start[q + 1]!, seen);
    scorer.score(ranking);
    const n = ranking.n;
    perQuery.items[q] = n;
    perQuery.relevant[q] = scorer.relevant;
    for (let m = 0; m < metrics.length; m++) values[m]![q] = scorer.values[m]!;
    degenerate.duplicateRows += ranking.duplicates;
    degenerate.missingScoreRows += ranking.missingScores;
    degenerate.unjudgedRows += ranking.unjudgedRows;
    degenerate.tiedScoreRows += ranking.tiedRows;
    if (n === 0) emptyQueries++;
    if (n === 1) degenerate.singleItemQueries++;
    const skipped = scorer.noRelevant && skipPolicy;
    if (scorer.noRelevant) degenerate.noRelevantQueries++;
    perQuery.skipped[q] = skipped ? 1 : 0;
    perQuery.inversions[q] = skipped ? NaN : scorer.pairs.discordant;
    perQuery.inversionCost[q] = skipped ? NaN : scorer.inversionCost;
    if (perQuery.rbpResidual) perQuery.rbpResidual[q] = skipped ? NaN : scorer.rbpResidual;
    if (tauIndex >= 0 && !skipped && Number.isNaN(scorer.pairs.tau)) tauUndefined++;
    sensitivity?.add(ranking, scorer.grades, scorer.noRelevant);
  }
  options.onProgress?.(1);

  const summary: MetricSummary[] = metrics.map((m, i) => summarise(m.key, values[i]!));
  if (perQuery.rbpResidual) {
    const first = metrics.find((m) => m.name === 'rbp')!;
    summary.push(summarise(`${first.key}_residual`, perQuery.rbpResidual));
  }
  const warnings = describeDegenerate({
    dump,
    conventions,
    metrics,
    queryCount,
    degenerate,
    emptyQueries,
    tauUndefined,
    gmax,
    headlineK: scorer.headlineK,
  });
  return {
    conventions,
    metrics,
    headline: 0,
    queryCount,
    perQuery,
    summary,
    degenerate,
    sensitivity: sensitivity ? sensitivity.rows() : [],
    warnings,
  };
}

/** Mean over the queries whose value is not NaN. */
export function summarise(key: string, column: Float64Array): MetricSummary {
  let sum = 0;
  let counted = 0;
  for (let i = 0; i < column.length; i++) {
    const v = column[i]!;
    if (v === v) {
      sum += v;
      counted++;
    }
  }
  return { key, mean: counted > 0 ? sum / counted : NaN, counted };
}
