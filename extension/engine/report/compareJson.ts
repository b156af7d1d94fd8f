/**
 * A comparison as JSON for scripts and dashboards: every summary figure, the matching counts, and the
 * per-query values as columns (one array per metric rather than one object per query).
 */
import { conventionsAsJson, jsonNumber } from './reportInput';
import { biggestChanges, type CompareReportInput, type CompareReportOptions, type QueryChange } from './compareShared';
import type { AdjustedP, MetricComparison } from '../compare/compare';
import type { RunMatch } from '../compare/match';

const PER_QUERY_SLOT = '\u0000per-query columns\u0000';

export function formatCompareJson(input: CompareReportInput, options: CompareReportOptions): string {
  const c = input.comparison;
  const { match } = c;
  const { drops, gains } = biggestChanges(input, options.top);
  const change = (ch: QueryChange) => ({ query: ch.query, a: jsonNumber(ch.a), b: jsonNumber(ch.b), delta: jsonNumber(ch.delta) });
  const columns = (arrays: readonly Float64Array[]) =>
    Object.fromEntries(c.metrics.map((spec, m) => [spec.key, Array.from(arrays[m]!, jsonNumber)]));
  const out = {
    runs: { a: input.sourceA, b: input.sourceB },
    conventions: conventionsAsJson(c.conventions),
    options: c.options,
    headline: c.metrics[c.headline]?.key ?? null,
    matching: matchingJson(match),
    metrics: c.byMetric.map((r) => metricJson(r, r.adjusted)),
    biggestDrops: drops.map(change),
    biggestGains: gains.map(change),
    ...(c.weighting ? { weights: c.weighting.source } : {}),
    methodNotes: c.methodNotes,
    warnings: c.warnings,
    perQuery: PER_QUERY_SLOT,
  };
  // The per-query columns stay on one line each: indenting 100k-element arrays helps nobody.
  const perQuery = {
    query: Array.from(c.perQuery.queryA, (q) => input.queryNamesA.get(q)),
    a: columns(c.perQuery.a),
    b: columns(c.perQuery.b),
  };
  return JSON.stringify(out, null, 2).replace(JSON.stringify(PER_QUERY_SLOT), () => JSON.stringify(perQuery)) + '\n';
}

/**
 * One metric of one paired comparison. `adjustments` are the adjusted p-values to print: across the
 * metrics of this pair in a two-run comparison, across candidates × metrics when several are compared.
 */
export function metricJson(r: MetricComparison, adjustments: MetricComparison['adjusted']): Record<string, unknown> {
  const adjusted = (x: AdjustedP) => ({ holm: jsonNumber(x.holm), benjaminiHochberg: jsonNumber(x.benjaminiHochberg) });
  return {
    key: r.key,
    paired: r.paired,
    skipped: r.skipped,
    meanA: jsonNumber(r.summary.meanA),
    meanB: jsonNumber(r.summary.meanB),
    meanDelta: jsonNumber(r.summary.meanDifference),
    sdDelta: jsonNumber(r.summary.sdDifference),
    effectSizeDz: jsonNumber(r.summary.effectSize),
    interval95: { low: jsonNumber(r.interval.low), high: jsonNumber(r.interval.high) },
    wins: r.summary.wins,
    ties: r.summary.ties,
    losses: r.summary.losses,
    tTest: { t: jsonNumber(r.tTest.t), dof: r.tTest.dof, p: jsonNumber(r.tTest.p), adjusted: adjusted(adjustments.tTest) },
    wilcoxon: {
      statistic: jsonNumber(r.wilcoxon.statistic),
      nonZero: r.wilcoxon.n,
      zeros: r.wilcoxon.zeros,
      method: r.wilcoxon.method,
      z: jsonNumber(r.wilcoxon.z),
      p: jsonNumber(r.wilcoxon.p),
      adjusted: adjusted(adjustments.wilcoxon),
    },
    randomization: {
      method: r.randomization.method,
      patterns: r.randomization.patterns,
      asExtreme: r.randomization.asExtreme,
      p: jsonNumber(r.randomization.p),
      adjusted: adjusted(adjustments.randomization),
    },
  };
}

/** Which queries the two runs share, as counts and examples. */
export function matchingJson(match: RunMatch): Record<string, unknown> {
  return {
    queriesInA: match.queriesInA,
    queriesInB: match.queriesInB,
    common: match.commonA.length,
    onlyInA: match.onlyInA,
    onlyInB: match.onlyInB,
    onlyInAExamples: match.onlyInAExamples,
    onlyInBExamples: match.onlyInBExamples,
    differingItemSets: match.differingItemSets,
    differingExamples: match.differingExamples,
  };
}
