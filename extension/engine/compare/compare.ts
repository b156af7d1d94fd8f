/**
 * Compares two runs over the queries they share: every metric is scored on each run separately (each
 * run on its own candidate items), then the per-query pairs go through the paired statistics.
 * A query skipped in either run (no relevant item under the `skip` policy) has no pair and is counted.
 */
import { evaluate, gradeRange } from '../evaluate/evaluate';
import type { Evaluation } from '../evaluate/types';
import { describeReading } from '../evaluate/warnings';
import { InputError } from '../errors';
import type { Conventions } from '../metrics/conventions';
import { anyNeeds, type MetricSpec } from '../metrics/registry';
import { DEFAULT_COMPARE_SETTINGS } from '../../presentation/defaults';
import type { RankedDump } from '../model/dump';
import { groupByQuery, type QueryGroups } from '../model/groups';
import { matchRuns, type RunMatch } from './match';
import type { ProgressCallback } from './pacer';
import {
  benjaminiHochbergAdjust,
  bootstrapMeanIntervals,
  holmAdjust,
  pairedSummary,
  pairedTTest,
  signFlipTest,
  wilcoxonSignedRank,
  WILCOXON_ROUNDING,
  type Interval,
  type PairedSummary,
  type SignFlipResult,
  type TTestResult,
  type WilcoxonResult,
} from './stats';

export interface CompareOptions {
  /** Random sign patterns for the randomization test (exact enumeration when 2^n is not larger). */
  readonly permutations: number;
  /**
   * Bootstrap resamples for the interval of the mean difference; 0 leaves the interval out. The
   * default 2,000 follows Efron & Tibshirani (1993), who suggest B of about 1,000–2,000 for percentile
   * intervals (from memory; the book was not at hand) — 10,000 cost ~10 s over 100k queries × 8 metrics.
   */
  readonly bootstrap: number;
  readonly seed: number;
  /** |b − a| ≤ tieTolerance counts as a tie in wins / ties / losses. */
  readonly tieTolerance: number;
  readonly signal?: AbortSignal;
  /** Overall fraction done, 0..1. */
  readonly onProgress?: (fraction: number) => void;
  /**
   * Run A's grouping and evaluations from an earlier comparison against the same A (one baseline,
   * several candidates): A is scored once per set of shared conventions instead of once per candidate.
   */
  readonly baseline?: BaselineMemo;
}

/** Run A's groups and its evaluation per shared conventions, filled in by compareRuns. */
export interface BaselineMemo {
  readonly dump: RankedDump;
  groups?: QueryGroups;
  readonly evaluations: Map<string, Evaluation>;
}

export const DEFAULT_COMPARE_OPTIONS: CompareOptions = { ...DEFAULT_COMPARE_SETTINGS };

/** Adjusted p-values of one test across the compared metrics. */
export interface AdjustedP {
  readonly holm: number;
  readonly benjaminiHochberg: number;
}

export interface MetricComparison {
  readonly key: string;
  /** Queries paired for this metric (present in both runs and skipped in neither). */
  readonly paired: number;
  /** Common queries left out because the metric is undefined (skipped) in A, in B, or both. */
  readonly skipped: number;
  readonly summary: PairedSummary;
  /** 95% percentile-bootstrap interval of the mean difference (B − A). */
  readonly interval: Interval;
  readonly tTest: TTestResult;
  readonly wilcoxon: WilcoxonResult;
  readonly randomization: SignFlipResult;
  /** Holm and Benjamini–Hochberg adjustments across the compared metrics, per test. */
  readonly adjusted: { readonly tTest: AdjustedP; readonly wilcoxon: AdjustedP; readonly randomization: AdjustedP };
}

/** Per common query, columnar: index i is the i-th query present in both runs. */
export interface PairedColumns {
  /** Interned query ids in run A and in run B. */
  readonly queryA: Uint32Array;
  readonly queryB: Uint32Array;
  /** Per metric (same order as `metrics`): value in A, in B, and B − A (NaN when either is undefined). */
  readonly a: readonly Float64Array[];
  readonly b: readonly Float64Array[];
  readonly delta: readonly Float64Array[];
}

export interface Comparison {
  readonly conventions: Conventions;
  readonly metrics: readonly MetricSpec[];
  /** Index of the headline metric (the first requested). */
  readonly headline: number;
  readonly options: Omit<CompareOptions, 'signal' | 'onProgress' | 'baseline'>;
  readonly match: RunMatch;
  readonly evaluationA: Evaluation;
  readonly evaluationB: Evaluation;
  readonly perQuery: PairedColumns;
  readonly byMetric: readonly MetricComparison[];
  /** How the statistics were computed, for printing beside them. */
  readonly methodNotes: readonly string[];
  /** Present when means and the interval are weighted by query (weights of run A's queries). */
  readonly weighting?: { readonly source: string };
  /** Matching notes plus anything skipped or degenerate. */
  readonly warnings: readonly string[];
}

/** Scores one run under the shared conventions (without sensitivity rows); the engine entry passes its own. */
export type RunEvaluator = (dump: RankedDump, metrics: readonly MetricSpec[], conventions: Conventions,
  options: { groups: QueryGroups; signal?: AbortSignal; sensitivity: false; onProgress: (fraction: number) => void }) => Evaluation | Promise<Evaluation>;

/** Each run's judgments-file counts (judged items never retrieved, missing queries), marked with the run. */
function readingNotes(run: 'A' | 'B', dump: RankedDump): string[] {
  return describeReading(dump).map((note) => `${run}: ${note}`);
}

export async function compareRuns(
  a: RankedDump,
  b: RankedDump,
  metrics: readonly MetricSpec[],
  conventions: Conventions,
  options: Partial<CompareOptions> = {},
  evaluateRun: RunEvaluator = evaluate,
): Promise<Comparison> {
  const o: CompareOptions = { ...DEFAULT_COMPARE_OPTIONS, ...options };
  const progress = stagedProgress(o.onProgress);
  const memo = o.baseline?.dump === a ? o.baseline : undefined;
  const groupsA = memo?.groups ?? groupByQuery(a);
  if (memo) memo.groups = groupsA;
  const groupsB = groupByQuery(b);
  progress.stage(0.05);
  const match = matchRuns(a, b, groupsA, groupsB);
  if (match.commonA.length === 0) {
    throw new InputError(`a run that shares at least one query with ${a.path} (none of its ${match.queriesInB} queries appear there)`, b.path);
  }
  const shared = sharedConventions(a, b, metrics, conventions);
  const evaluateOne = (dump: RankedDump, groups: QueryGroups): Evaluation | Promise<Evaluation> =>
    evaluateRun(dump, metrics, shared, { groups, ...(o.signal ? { signal: o.signal } : {}), sensitivity: false, onProgress: progress.report });
  progress.stage(0.3);
  const memoKey = JSON.stringify(shared);
  const evaluationA = memo?.evaluations.get(memoKey) ?? await evaluateOne(a, groupsA);
  memo?.evaluations.set(memoKey, evaluationA);
  progress.stage(0.3);
  const evaluationB = await evaluateOne(b, groupsB);

  const perQuery = pairColumns(match, evaluationA, evaluationB);
  const loop = { signal: o.signal, onProgress: progress.fraction };
  const weights = pairWeights(a, match.commonA);
  const pairedOf = perQuery.delta.map((d) => pairedIndices(d, weights));

  // The interval: metrics paired on the same queries share one resampling pass; every pass draws from the
  // same seeded stream, so a metric's interval does not depend on which metrics share its pass.
  const intervals: Interval[] = new Array(metrics.length);
  const sharing = groupIdentical(pairedOf);
  for (const group of sharing) {
    progress.stage(0.15 / sharing.length);
    const columns = group.map((m) => gather(perQuery.delta[m]!, pairedOf[m]!));
    const found = await bootstrapMeanIntervals(columns, {
      ...loop, resamples: o.bootstrap, seed: o.seed, ...(weights ? { weights: gather(weights, pairedOf[group[0]!]!) } : {}),
    });
    group.forEach((m, i) => (intervals[m] = found[i]!));
  }

  const partial = [];
  for (let m = 0; m < metrics.length; m++) {
    progress.stage(0.2 / metrics.length);
    const rows = pairedOf[m]!;
    const d = gather(perQuery.delta[m]!, rows);
    const randomization = await signFlipTest(d, { ...loop, permutations: o.permutations, seed: o.seed, key: metrics[m]!.key });
    partial.push({
      key: metrics[m]!.key,
      paired: rows.length,
      skipped: perQuery.queryA.length - rows.length,
      summary: weighMeans(pairedSummary(gather(perQuery.a[m]!, rows), gather(perQuery.b[m]!, rows), o.tieTolerance),
        weights && gather(weights, rows), gather(perQuery.a[m]!, rows), gather(perQuery.b[m]!, rows)),
      interval: intervals[m]!,
      tTest: pairedTTest(d),
      wilcoxon: wilcoxonSignedRank(d),
      randomization,
    });
  }
  const adjust = (ps: number[], i: number): AdjustedP => ({ holm: holmAdjust(ps)[i]!, benjaminiHochberg: benjaminiHochbergAdjust(ps)[i]! });
  const tPs = partial.map((r) => r.tTest.p);
  const wPs = partial.map((r) => r.wilcoxon.p);
  const rPs = partial.map((r) => r.randomization.p);
  const byMetric: MetricComparison[] = partial.map((r, i) => ({
    ...r,
    adjusted: { tTest: adjust(tPs, i), wilcoxon: adjust(wPs, i), randomization: adjust(rPs, i) },
  }));
  progress.done();

  const { signal: _signal, onProgress: _onProgress, baseline: _baseline, ...used } = o;
  return {
    conventions: shared,
    metrics,
    headline: 0,
    options: used,
    match,
    evaluationA,
    evaluationB,
    perQuery,
    byMetric,
    methodNotes: [...methodNotes(o, metrics.length), ...(weights ? weightNotes(a) : [])],
    ...(weights ? { weighting: { source: a.joined?.weightSource ?? 'query weights' } } : {}),
    warnings: [...match.notes, ...readingNotes('A', a), ...readingNotes('B', b), ...skipWarnings(byMetric)],
  };
}

/**
 * ERR's g_max defaults to the highest grade in the data; two runs must share it or their ERR values are
 * on different scales, so the higher of the two runs' highest grades is used for both.
 */
function sharedConventions(a: RankedDump, b: RankedDump, metrics: readonly MetricSpec[], conventions: Conventions): Conventions {
  if (conventions.maxGrade !== undefined || !anyNeeds(metrics, 'maxGrade')) return conventions;
  return { ...conventions, maxGrade: Math.max(gradeRange(a).highest, gradeRange(b).highest) };
}

function pairColumns(match: RunMatch, ea: Evaluation, eb: Evaluation): PairedColumns {
  const n = match.commonA.length;
  const a: Float64Array[] = [];
  const b: Float64Array[] = [];
  const delta: Float64Array[] = [];
  for (let m = 0; m < ea.metrics.length; m++) {
    const va = ea.perQuery.values[m]!;
    const vb = eb.perQuery.values[m]!;
    const ca = new Float64Array(n);
    const cb = new Float64Array(n);
    const cd = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const qa = match.commonA[i]!;
      const qb = match.commonB[i]!;
      // A query skipped from the means is NaN in values; make sure the skip flag wins either way.
      ca[i] = ea.perQuery.skipped[qa] ? Number.NaN : va[qa]!;
      cb[i] = eb.perQuery.skipped[qb] ? Number.NaN : vb[qb]!;
      cd[i] = cb[i]! - ca[i]!;
    }
    a.push(ca);
    b.push(cb);
    delta.push(cd);
  }
  return { queryA: match.commonA, queryB: match.commonB, a, b, delta };
}

/** Pairs with a defined Δ (and, when weighted, a known weight). */
function pairedIndices(delta: Float64Array, weights?: Float64Array): Uint32Array {
  const keep = (i: number) => Number.isFinite(delta[i]!) && (weights === undefined || Number.isFinite(weights[i]!));
  let count = 0;
  for (let i = 0; i < delta.length; i++) if (keep(i)) count++;
  const rows = new Uint32Array(count);
  for (let i = 0, k = 0; i < delta.length; i++) if (keep(i)) rows[k++] = i;
  return rows;
}

function gather(values: Float64Array, rows: Uint32Array): Float64Array {
  const out = new Float64Array(rows.length);
  for (let k = 0; k < rows.length; k++) out[k] = values[rows[k]!]!;
  return out;
}

/** Groups of metric indices whose paired query sets are identical. */
function groupIdentical(sets: readonly Uint32Array[]): number[][] {
  const groups: number[][] = [];
  sets.forEach((set, m) => {
    const same = groups.find((g) => equalArrays(sets[g[0]!]!, set));
    if (same) same.push(m);
    else groups.push([m]);
  });
  return groups;
}

function equalArrays(x: Uint32Array, y: Uint32Array): boolean {
  if (x.length !== y.length) return false;
  for (let i = 0; i < x.length; i++) if (x[i] !== y[i]) return false;
  return true;
}

function skipWarnings(byMetric: readonly MetricComparison[]): string[] {
  const affected = byMetric.filter((r) => r.skipped > 0);
  if (affected.length === 0) return [];
  const why = 'undefined (skipped) in at least one run, usually for having nothing relevant, and are left out of the paired tests';
  if (affected.length === byMetric.length && affected.every((r) => r.skipped === affected[0]!.skipped)) {
    return [`${affected[0]!.skipped} common queries are ${why}.`];
  }
  return affected.map((r) => `${r.key}: ${r.skipped} common queries are ${why}.`);
}

function methodNotes(o: CompareOptions, metricCount: number): string[] {
  return [
    `Δ = B − A per query; means and tests over queries paired in both runs.`,
    `95% interval: percentile bootstrap of the mean Δ, ${o.bootstrap} resamples, seed ${o.seed}.`,
    `t: paired t-test, two-sided.`,
    `Wilcoxon: signed-rank test, two-sided; differences rounded to ${WILCOXON_ROUNDING} before ranking, zero differences dropped; ` +
      `exact for at most 50 pairs without zeros or ties, otherwise normal approximation with tie correction.`,
    `Randomization: paired sign-flip test of the mean Δ, two-sided, ${o.permutations} random sign patterns ` +
      `(every pattern when 2^n is not more), seed ${o.seed} with a random stream of its own per metric; ` +
      `p = (1 + as extreme) / (1 + patterns) when sampled.`,
    `Wins / ties / losses: |Δ| ≤ ${o.tieTolerance} is a tie.`,
    ...(metricCount > 1 ? [`Holm and Benjamini–Hochberg adjustments are across the ${metricCount} metrics compared, per test.`] : []),
  ];
}

/** Maps each stage's own 0..1 progress into the overall 0..1. */
function stagedProgress(onProgress?: (fraction: number) => void): {
  stage: (weight: number) => void;
  report: (fraction: number) => void;
  fraction: ProgressCallback;
  done: () => void;
} {
  let base = 0;
  let weight = 0;
  const report = (f: number) => onProgress?.(Math.min(1, base + weight * Math.max(0, Math.min(1, f))));
  return {
    stage: (next) => {
      base += weight;
      weight = next;
      report(0);
    },
    report,
    fraction: (done, total) => report(total > 0 ? done / total : 1),
    done: () => onProgress?.(1),
  };
}

/** Run A's query weights per common query, when A has weights (the queries table is shared by both runs). */
function pairWeights(a: RankedDump, commonA: Uint32Array): Float64Array | undefined {
  const weights = a.joined?.queryWeight;
  return weights === undefined ? undefined : Float64Array.from(commonA, (q) => weights[q]!);
}

/** With weights, the means become weighted means Σ w·x / Σ w (numpy.average's definition); the counts stay. */
function weighMeans(summary: PairedSummary, weights: Float64Array | undefined, a: Float64Array, b: Float64Array): PairedSummary {
  if (weights === undefined) return summary;
  let total = 0;
  let sumA = 0;
  let sumB = 0;
  for (let i = 0; i < a.length; i++) {
    total += weights[i]!;
    sumA += weights[i]! * a[i]!;
    sumB += weights[i]! * b[i]!;
  }
  const meanA = total > 0 ? sumA / total : NaN;
  const meanB = total > 0 ? sumB / total : NaN;
  return { ...summary, meanA, meanB, meanDifference: meanB - meanA };
}

function weightNotes(a: RankedDump): string[] {
  return [
    `Weighted by query (weights from ${a.joined?.weightSource ?? 'the data'}): the means and Δ are Σ w·x / Σ w; the interval is a bootstrap ` +
      'that draws queries uniformly with replacement and takes the weighted mean of each resample. The t-test, Wilcoxon, ' +
      'randomization test, d_z and wins / ties / losses are unweighted; queries without a weight are left out of every column.',
  ];
}
