/**
 * What every comparison report needs, and the helpers they share: the biggest per-query changes on the
 * headline metric, and number formats for deltas, intervals and p-values.
 */
import type { Comparison, MetricComparison } from '../compare/compare';
import type { StringPool } from '../model/stringPool';
import { formatDelta, formatInterval, formatP, formatValue, formatCountInText } from '../../presentation/numbers';

export { formatDelta, formatInterval, formatP };

export interface CompareReportInput {
  readonly comparison: Comparison;
  /** Run A's query names (the comparison's query ids are run A's). */
  readonly queryNamesA: StringPool;
  /** The files, as the user named them. */
  readonly sourceA: string;
  readonly sourceB: string;
}

export interface CompareReportOptions {
  /** How many of the biggest drops and gains to list (0 hides them). */
  readonly top: number;
}

export interface QueryChange {
  /** Index into the comparison's per-query columns. */
  readonly index: number;
  readonly query: string;
  readonly a: number;
  readonly b: number;
  readonly delta: number;
}

/** The `limit` largest drops (most negative Δ first) and gains (most positive first) on the headline. */
export function biggestChanges(input: CompareReportInput, limit: number): { drops: QueryChange[]; gains: QueryChange[] } {
  const c = input.comparison;
  const m = c.headline;
  const delta = c.perQuery.delta[m];
  if (!delta || limit <= 0) return { drops: [], gains: [] };
  const down: number[] = [];
  const up: number[] = [];
  for (let i = 0; i < delta.length; i++) {
    if (delta[i]! < 0) down.push(i);
    else if (delta[i]! > 0) up.push(i);
  }
  // Equal deltas keep query order so listings are stable between runs.
  down.sort((x, y) => delta[x]! - delta[y]! || x - y);
  up.sort((x, y) => delta[y]! - delta[x]! || x - y);
  const change = (index: number): QueryChange => ({
    index,
    query: input.queryNamesA.get(c.perQuery.queryA[index]!),
    a: c.perQuery.a[m]![index]!,
    b: c.perQuery.b[m]![index]!,
    delta: delta[index]!,
  });
  return { drops: down.slice(0, limit).map(change), gains: up.slice(0, limit).map(change) };
}

export function winsTiesLosses(r: MetricComparison): string {
  return `${r.summary.wins} / ${r.summary.ties} / ${r.summary.losses}`;
}

/**
 * The figures every comparison report lists for one metric, in column order: key, A, B, Δ, interval,
 * p (t, Wilcoxon, randomization), Holm, BH, wins / ties / losses. One list so the reports cannot drift.
 */
export function metricFigures(r: MetricComparison): string[] {
  return [
    r.key,
    formatValue(r.summary.meanA),
    formatValue(r.summary.meanB),
    formatDelta(r.summary.meanDifference),
    formatInterval(r.interval.low, r.interval.high),
    formatP(r.tTest.p),
    formatP(r.wilcoxon.p),
    formatP(r.randomization.p),
    formatP(r.adjusted.randomization.holm),
    formatP(r.adjusted.randomization.benjaminiHochberg),
    winsTiesLosses(r),
  ];
}

/** One line on which queries were compared. */
export function coverageLine(input: CompareReportInput): string {
  const { match } = input.comparison;
  const extra: string[] = [];
  if (match.onlyInA > 0) extra.push(`${match.onlyInA} only in A`);
  if (match.onlyInB > 0) extra.push(`${match.onlyInB} only in B`);
  if (match.differingItemSets > 0) extra.push(`${match.differingItemSets} with different candidate items`);
  return `${formatCountInText(match.commonA.length)} queries in both runs${extra.length ? ` (${extra.join(', ')})` : ''}`;
}
