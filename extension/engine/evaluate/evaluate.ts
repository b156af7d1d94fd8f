/**
 * Evaluates every query of a dump: per-query metric columns, means, degenerate-data counts, convention
 * sensitivity and plain-sentence warnings. One pass over the queries with reused scratch arrays.
 */
import { CancelledError } from '../errors';
import type { RankedDump } from '../model/dump';
import { gradeRangeOf, summariseRows, type GradeRange } from '../model/rowSummary';

export type { GradeRange } from '../model/rowSummary';
import { groupByQuery, usableValues, type QueryGroups } from '../model/groups';
import type { Conventions } from '../metrics/conventions';
import { isPairMeasure, metricDefinition, residualMetricIndex, type MetricSpec } from '../metrics/registry';
import { checkGainsAndGrades, gainProblem } from './gainLimits';
import { QueryRanking, SeenItems } from './ranking';
import { headlineCutoff, QueryScorer } from './scorer';
import { PLAIN_COLUMNS, type ColumnMemory } from './columnMemory';
import { SensitivityPass, type SensitivityColumns } from './sensitivity';
import type { DegenerateCounts, Evaluation, MetricSummary, PerQueryColumns } from './types';
import { describeDegenerate } from './warnings';
import { formatCountInText } from '../../presentation/numbers';

export interface EvaluateOptions {
  groups?: QueryGroups;
  signal?: AbortSignal;
  onProgress?: (fraction: number) => void;
  /** Compute the convention sensitivity rows (default true). */
  sensitivity?: boolean;
}

/**
 * Highest and lowest judged grade of the whole dump, unjudged rows counting as grade 0 (0 and 0 when
 * nothing is judged). Readers note it while reading; a dump built some other way is scanned.
 */
export function gradeRange(dump: RankedDump): GradeRange {
  return dump.notes.gradeRange ?? gradeRangeOf(summariseRows(dump.label, dump.score, 0, dump.rowCount));
}

/**
 * Checks the conventions against the data once, before any query is scored; returns ERR's g_max.
 * Callers that keep the dump's grade range from load time pass it to skip the scan over every row.
 * `largestQuery` (rows of the largest query) bounds the sums a gain must stay finite over.
 */
export function checkConventions(dump: RankedDump, metrics: readonly MetricSpec[], c: Conventions, range: GradeRange = gradeRange(dump),
  largestQuery: number = dump.rowCount): number {
  return checkGainsAndGrades(dump, metrics, c, range, largestQuery);
}

/** Rows of the largest query. */
export function largestQuery(groups: QueryGroups): number {
  let most = 0;
  const start = groups.start;
  for (let q = 0; q + 1 < start.length; q++) most = Math.max(most, start[q + 1]! - start[q]!);
  return most;
}

export function evaluate(
  dump: RankedDump,
  metrics: readonly MetricSpec[],
  conventions: Conventions,
  options: EvaluateOptions = {},
): Evaluation {
  const setup = prepareEvaluation(dump, metrics, conventions, options);
  const perQuery = allocatePerQuery(setup.queryCount, metrics, setup.hasRbp);
  const sensitivity = setup.sensitivity ? newSensitivityPass(setup) : undefined;
  // Weighted means need each query's value under every variant.
  const recorded = sensitivity && dump.joined?.queryWeight ? sensitivityColumns(sensitivity, setup.queryCount) : undefined;
  if (recorded) sensitivity!.recordInto(recorded);
  const tally = scoreQueryRange(setup, dump, 0, setup.queryCount, perQuery, sensitivity, options);
  options.onProgress?.(1);
  return finishEvaluation(setup, dump, perQuery, tally, sensitivity, recorded);
}

/** What every range of one evaluation shares: the checked conventions and the query groups. */
export interface EvaluationSetup {
  readonly metrics: readonly MetricSpec[];
  readonly conventions: Conventions;
  readonly groups: QueryGroups;
  readonly queryCount: number;
  /** ERR's g_max. */
  readonly gmax: number;
  readonly gradeRange: GradeRange;
  /** Rows of the largest query: the sums a gain must stay finite over. */
  readonly largestQuery: number;
  readonly hasRbp: boolean;
  readonly sensitivity: boolean;
}

export function prepareEvaluation(dump: RankedDump, metrics: readonly MetricSpec[], conventions: Conventions,
  options: EvaluateOptions): EvaluationSetup {
  const range = gradeRange(dump);
  // Values carried along in grouped order serve only the dump they came from.
  const groups = usableValues(options.groups ?? groupByQuery(dump), dump);
  const largest = largestQuery(groups);
  const gmax = checkConventions(dump, metrics, conventions, range, largest);
  return {
    metrics,
    conventions,
    groups,
    queryCount: groups.start.length - 1,
    gmax,
    gradeRange: range,
    largestQuery: largest,
    hasRbp: residualMetricIndex(metrics) >= 0,
    sensitivity: options.sensitivity !== false,
  };
}

export function newSensitivityPass(setup: EvaluationSetup): SensitivityPass {
  return new SensitivityPass(setup.conventions, headlineCutoff(setup.metrics),
    (gain) => gainProblem(gain, setup.gradeRange, setup.largestQuery)?.why);
}

/** Per-variant, per-query columns for a sensitivity pass to record into; `memory` picks plain or shared memory. */
export function sensitivityColumns(pass: SensitivityPass, queryCount: number, memory: ColumnMemory = PLAIN_COLUMNS): SensitivityColumns {
  return {
    value: Array.from({ length: pass.variantCount }, () => memory.f64(queryCount)),
  };
}

/** Per-query columns for every query; `memory` picks plain or shared memory. */
export function allocatePerQuery(queryCount: number, metrics: readonly MetricSpec[], hasRbp: boolean,
  memory: ColumnMemory = PLAIN_COLUMNS): PerQueryColumns {
  const f64 = () => memory.f64(queryCount);
  return {
    items: memory.u32(queryCount),
    relevant: memory.u32(queryCount),
    unretrieved: memory.u32(queryCount),
    values: metrics.map(f64),
    inversions: f64(),
    inversionCost: f64(),
    skipped: memory.u8(queryCount),
    ...(hasRbp ? { rbpResidual: f64() } : {}),
  };
}

/** Counts gathered while scoring a range of queries; ranges add up. */
export interface RangeTally {
  degenerate: DegenerateCounts;
  emptyQueries: number;
  /** Judged queries without a row in the run, scored 0 under missing queries `zero`. */
  absentQueries: number;
  tauUndefined: number;
  /** Queries the sensitivity pass saw with no relevant item. */
  sensitivityNoRelevant: number;
}

export function emptyTally(): RangeTally {
  return {
    degenerate: { singleItemQueries: 0, noRelevantQueries: 0, duplicateRows: 0, missingScoreRows: 0, unjudgedRows: 0, tiedScoreRows: 0 },
    emptyQueries: 0,
    absentQueries: 0,
    tauUndefined: 0,
    sensitivityNoRelevant: 0,
  };
}

export function addTally(into: RangeTally, from: RangeTally): void {
  const d = into.degenerate;
  for (const key of Object.keys(d) as (keyof DegenerateCounts)[]) d[key] += from.degenerate[key];
  into.emptyQueries += from.emptyQueries;
  into.absentQueries += from.absentQueries;
  into.tauUndefined += from.tauUndefined;
  into.sensitivityNoRelevant += from.sensitivityNoRelevant;
}

/** The dump columns scoring reads (a worker thread gets only these). */
export type ScoredColumns = Pick<RankedDump, 'itemKey' | 'label' | 'score' | 'unretrieved'> & { readonly item?: Uint32Array };

/** Scores queries [from, to) into `perQuery` (indexed by query id); progress is the fraction of this range. */
export function scoreQueryRange(setup: EvaluationSetup, dump: RankedDump | ScoredColumns, from: number, to: number,
  perQuery: PerQueryColumns, sensitivity: SensitivityPass | undefined,
  options: Pick<EvaluateOptions, 'signal' | 'onProgress'> = {}): RangeTally {
  const tally = emptyTally();
  new RangeScorer(setup, dump, perQuery, sensitivity).score(from, to, tally, options);
  return tally;
}

/** Scores ranges of queries one after another with the same scratch arrays (ranges may come in any order). */
export class RangeScorer {
  private readonly scorer: QueryScorer;
  private readonly ranking = new QueryRanking();
  private readonly seen: SeenItems;
  private readonly columns: RankedDump;
  private readonly tauIndex: number;
  /** Queries from here on have no row in the run (judged queries added under missing queries `zero`). */
  private readonly firstAbsent: number;
  /** The sensitivity pass scores at the scorer's headline cut-off, so it takes the scorer's configured-gain values. */
  private readonly sharesConfigured: boolean;

  constructor(
    private readonly setup: EvaluationSetup,
    dump: RankedDump | ScoredColumns,
    private readonly perQuery: PerQueryColumns,
    private readonly sensitivity: SensitivityPass | undefined,
  ) {
    // QueryRanking reads only item, score and label.
    this.columns = dump as RankedDump;
    this.seen = new SeenItems();
    this.scorer = new QueryScorer(setup.conventions, setup.metrics, setup.gmax);
    this.tauIndex = setup.metrics.findIndex(isPairMeasure);
    this.firstAbsent = dump.unretrieved?.firstAbsentQuery ?? Infinity;
    this.sharesConfigured = sensitivity !== undefined && sensitivity.k === this.scorer.headlineK;
  }

  /** Adds queries [from, to) to `tally`. */
  score(from: number, to: number, tally: RangeTally, options: Pick<EvaluateOptions, 'signal' | 'onProgress'> = {}): void {
    const { metrics, conventions, groups } = this.setup;
    const { scorer, ranking, seen, columns, perQuery, sensitivity, tauIndex } = this;
    const degenerate = tally.degenerate;
    const values = perQuery.values;
    const skipPolicy = conventions.noRelevant === 'skip';
    const count = to - from;
    const step = Math.max(1, Math.min(4096, Math.ceil(count / 100)));
    const noRelevantBefore = sensitivity?.noRelevantQueries ?? 0;

    for (let q = from; q < to; q++) {
      if ((q - from) % step === 0) {
        if (options.signal?.aborted) throw new CancelledError();
        options.onProgress?.((q - from) / count);
      }
      ranking.load(columns, groups.rowsOfQuery, groups.start[q]!, groups.start[q + 1]!, seen, groups.values);
      ranking.setUnretrieved(columns.unretrieved, q);
      if (perQuery.unretrieved) perQuery.unretrieved[q] = ranking.unretrieved;
      if (q >= this.firstAbsent) {
        this.scoreAbsent(q, tally);
        continue;
      }
      scorer.score(ranking);
      const n = ranking.n;
      perQuery.items[q] = n;
      perQuery.relevant[q] = scorer.relevant;
      for (let m = 0; m < metrics.length; m++) values[m]![q] = scorer.values[m]!;
      degenerate.duplicateRows += ranking.duplicates;
      degenerate.missingScoreRows += ranking.missingScores;
      degenerate.unjudgedRows += ranking.unjudgedRows;
      degenerate.tiedScoreRows += ranking.tiedRows;
      if (n === 0) tally.emptyQueries++;
      if (n === 1) degenerate.singleItemQueries++;
      const skipped = scorer.noRelevant && skipPolicy;
      if (scorer.noRelevant) degenerate.noRelevantQueries++;
      perQuery.skipped[q] = skipped ? 1 : 0;
      perQuery.inversions[q] = skipped ? NaN : scorer.pairs.discordant;
      perQuery.inversionCost[q] = skipped ? NaN : scorer.inversionCost;
      if (perQuery.rbpResidual) perQuery.rbpResidual[q] = skipped ? NaN : scorer.rbpResidual;
      if (tauIndex >= 0 && !skipped && Number.isNaN(scorer.pairs.tau)) tally.tauUndefined++;
      sensitivity?.add(ranking, scorer.grades, scorer.noRelevant, q, scorer.idealGrades, this.sharesConfigured ? scorer.configuredGain : undefined);
    }
    tally.sensitivityNoRelevant += (sensitivity?.noRelevantQueries ?? 0) - noRelevantBefore;
  }

  /**
   * A judged query the run has no row for, under missing queries `zero`: 0 on every metric and never
   * skipped, as evaluation campaigns count a topic a system did not answer (common practice). Its judged
   * items are all unretrieved; nothing is inverted. The rows under other conventions count it as 0 too.
   */
  private scoreAbsent(q: number, tally: RangeTally): void {
    const perQuery = this.perQuery;
    perQuery.items[q] = 0;
    let relevant = 0;
    const side = this.columns.unretrieved!;
    for (let e = side.start[q]!; e < side.start[q + 1]!; e++) if (side.grade[e]! >= this.setup.conventions.relevantFrom) relevant++;
    perQuery.relevant[q] = relevant;
    for (let m = 0; m < this.setup.metrics.length; m++) perQuery.values[m]![q] = 0;
    perQuery.skipped[q] = 0;
    perQuery.inversions[q] = 0;
    perQuery.inversionCost[q] = 0;
    if (perQuery.rbpResidual) perQuery.rbpResidual[q] = 0;
    this.sensitivity?.addAbsent(q);
    tally.absentQueries++;
  }
}

/**
 * A query that is not skipped never carries an unexplained empty value: each metric left undefined for
 * such queries gets a sentence saying how many and why (tau has its own note in describeDegenerate).
 */
export function undefinedValueNotes(metrics: readonly MetricSpec[], perQuery: PerQueryColumns): string[] {
  const notes: string[] = [];
  metrics.forEach((m, i) => {
    if (isPairMeasure(m)) return;
    const column = perQuery.values[i]!;
    let undefinedCount = 0;
    for (let q = 0; q < column.length; q++) if (perQuery.skipped[q] === 0 && column[q] !== column[q]) undefinedCount++;
    if (undefinedCount === 0) return;
    const why = metricDefinition(m.name).undefinedWhen ?? 'the metric has no value for them';
    const who = undefinedCount === 1 ? 'query that is' : 'queries that are';
    notes.push(`${m.key} is undefined for ${formatCountInText(undefinedCount)} ${who} not skipped: ${why}; left out of its mean.`);
  });
  return notes;
}

/** What finishing an evaluation reads of the dump: no row columns (a streamed dump has none). */
export type EvaluatedDump = Pick<RankedDump, 'notes' | 'joined' | 'queries'>;

/** Means, warnings and sensitivity rows from filled per-query columns and the summed tallies. */
export function finishEvaluation(setup: EvaluationSetup, dump: EvaluatedDump, perQuery: PerQueryColumns, tally: RangeTally,
  sensitivity: SensitivityPass | undefined, recorded?: SensitivityColumns): Evaluation {
  const { metrics, conventions, queryCount } = setup;
  const weights = dump.joined?.queryWeight;
  if (weights !== undefined && sensitivity && recorded) sensitivity.weighColumns(recorded, weights, perQuery.relevant);
  const summary: MetricSummary[] = metrics.map((m, i) => summarise(m.key, perQuery.values[i]!, weights));
  if (perQuery.rbpResidual) {
    const first = metrics[residualMetricIndex(metrics)]!;
    summary.push(summarise(`${first.key}_residual`, perQuery.rbpResidual, weights));
  }
  const warnings = describeDegenerate({
    dump,
    conventions,
    metrics,
    queryCount,
    degenerate: tally.degenerate,
    emptyQueries: tally.emptyQueries,
    tauUndefined: tally.tauUndefined,
    gmax: setup.gmax,
    headlineK: headlineCutoff(metrics),
  });
  warnings.push(...undefinedValueNotes(metrics, perQuery));
  if (weights !== undefined) warnings.push(...weightNotes(dump, weights));
  // The missing-queries policy was applied when the judgments were joined; it is printed with the rest.
  const judged = dump.notes.judgments;
  return {
    conventions: judged ? { ...conventions, missingQueries: judged.missingQueries } : conventions,
    metrics,
    headline: 0,
    ...(weights !== undefined ? { weighting: { source: dump.joined?.weightSource ?? 'query weights' } } : {}),
    queryCount,
    perQuery,
    summary,
    degenerate: tally.degenerate,
    sensitivity: sensitivity ? sensitivity.rows() : [],
    warnings,
    ...(dump.notes.judgments ? { judgments: dump.notes.judgments } : {}),
  };
}

/**
 * Mean over the queries whose value is not NaN; with `weights` (by query id), the weighted mean
 * Σ w·x / Σ w over the queries whose value and weight are both known (numpy.average's definition).
 */
export function summarise(key: string, column: Float64Array, weights?: Float64Array): MetricSummary {
  if (weights !== undefined) return weightedSummary(key, column, weights);
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

function weightedSummary(key: string, column: Float64Array, weights: Float64Array): MetricSummary {
  let sum = 0;
  let total = 0;
  let counted = 0;
  for (let q = 0; q < column.length; q++) {
    const v = column[q]!;
    const w = weights[q]!;
    if (v === v && w === w) {
      sum += w * v;
      total += w;
      counted++;
    }
  }
  return { key, mean: total > 0 ? sum / total : NaN, counted };
}

/** What weighting did, in plain sentences (queries without a weight are out of every weighted mean). */
function weightNotes(dump: EvaluatedDump, weights: Float64Array): string[] {
  let unknown = 0;
  const examples: string[] = [];
  for (let q = 0; q < weights.length; q++) {
    if (weights[q] === weights[q]) continue;
    if (examples.length < 3) examples.push(`'${dump.queries.get(q)}'`);
    unknown++;
  }
  const out = [`Means are weighted by query (Σ w·x / Σ w), weights from ${dump.joined?.weightSource ?? 'the data'}.`];
  if (unknown > 0) out.push(`${formatCountInText(unknown)} ${unknown === 1 ? 'query has' : 'queries have'} no weight (e.g. ${examples.join(', ')}); they are left out of the weighted means.`);
  return out;
}
