/**
 * Reports of one baseline against several candidates: table, Markdown and JSON (CSV is in
 * compareCsv.ts). The per-metric figures are the two-run report's; only the Holm and BH columns differ,
 * being adjusted across every candidate × metric.
 */
import type { CandidateResult, CandidatesComparison } from '../compare/candidates';
import type { MetricComparison } from '../compare/compare';
import { matchingJson, metricJson } from './compareJson';
import { describeConventions } from '../../presentation/conventionsLine';
import { formatCount, formatDelta, formatInterval, formatP, formatValue } from '../../presentation/numbers';
import { winsTiesLosses } from './compareShared';
import { conventionsAsJson, jsonNumber } from './reportInput';
import { alignedTable, markdownTable, type Align } from './textTable';

const METRIC_HEADER = ['rank', 'candidate', 'baseline', 'candidate mean', 'Δ', '95% interval', 'p t', 'p Wilcoxon', 'p random', 'Holm', 'BH',
  'better / same / worse', 'pairs'];
const METRIC_ALIGN: Align[] = ['right', 'left', 'right', 'right', 'right', 'left', 'right', 'right', 'right', 'right', 'right', 'right', 'right'];

function metricRow(c: CandidateResult, m: number): string[] {
  const r: MetricComparison = c.comparison.byMetric[m]!;
  const adjusted = c.adjusted[m]!.randomization;
  return [
    String(c.rank), c.run, formatValue(r.summary.meanA), formatValue(r.summary.meanB), formatDelta(r.summary.meanDifference),
    formatInterval(r.interval.low, r.interval.high), formatP(r.tTest.p), formatP(r.wilcoxon.p), formatP(r.randomization.p),
    formatP(adjusted.holm), formatP(adjusted.benjaminiHochberg), winsTiesLosses(r), String(r.paired),
  ];
}

/** Per candidate: how its queries line up with the baseline's. */
export function coverageLines(many: CandidatesComparison): string[] {
  const lines = [`${formatCount(many.inEveryRun)} of the baseline's ${formatCount(many.baselineQueries)} queries are in every run.`];
  for (const c of many.candidates) {
    const match = c.comparison.match;
    const parts = [`${formatCount(match.commonA.length)} shared`];
    const quoted = (names: readonly string[]) => names.map((n) => JSON.stringify(n)).join(', ');
    if (match.onlyInA > 0) parts.push(`${match.onlyInA} only in the baseline (e.g. ${quoted(match.onlyInAExamples)})`);
    if (match.onlyInB > 0) parts.push(`${match.onlyInB} only in the candidate (e.g. ${quoted(match.onlyInBExamples)})`);
    if (match.differingItemSets > 0) parts.push(`${match.differingItemSets} shared queries with different candidate items`);
    lines.push(`${c.run}: ${parts.join('; ')}.`);
  }
  return lines;
}

function byRank(many: CandidatesComparison): CandidateResult[] {
  return many.ranking.map((i) => many.candidates[i]!);
}

function otherWarnings(many: CandidatesComparison): string[] {
  // Matching sentences are replaced by the coverage lines; the rest (skipped queries, ERR scale) stay.
  return many.candidates.flatMap((c) =>
    c.comparison.warnings.filter((w) => !c.comparison.match.notes.includes(w)).map((w) => `${c.run}: ${w}`),
  );
}

export function formatCandidatesTable(many: CandidatesComparison): string {
  const first = many.candidates[0]!.comparison;
  const sections: string[] = [`Baseline: ${many.baseline}\nCandidates: ${many.candidates.length}, ranked on ${first.metrics[first.headline]!.key}`];
  first.metrics.forEach((spec, m) => {
    sections.push(`${spec.key} (Δ = candidate − baseline)\n` + alignedTable(METRIC_HEADER, byRank(many).map((c) => metricRow(c, m)), METRIC_ALIGN));
  });
  sections.push('Queries\n' + coverageLines(many).map((l) => `  - ${l}`).join('\n'));
  sections.push(`Conventions\n  ${describeConventions(first.conventions)}`);
  sections.push('How these were computed\n' + [...many.methodNotes, 'Holm and BH columns adjust the randomization p-values.']
    .map((n) => `  - ${n}`).join('\n'));
  const warnings = otherWarnings(many);
  if (warnings.length > 0) sections.push('Notes\n' + warnings.map((w) => `  - ${w}`).join('\n'));
  return sections.join('\n\n') + '\n';
}

export function formatCandidatesMarkdown(many: CandidatesComparison): string {
  const code = (text: string) => '`' + text.replaceAll('`', "'") + '`';
  const first = many.candidates[0]!.comparison;
  const parts = [`### ${many.candidates.length} candidates against ${code(many.baseline)}`];
  parts.push(`Conventions: ${describeConventions(first.conventions)}.`);
  first.metrics.forEach((spec, m) => {
    parts.push(`#### ${spec.key}\n\n` + markdownTable(METRIC_HEADER, byRank(many).map((c) => metricRow(c, m).map((cell) => cell.trim())), METRIC_ALIGN));
  });
  parts.push('#### Queries\n\n' + coverageLines(many).map((l) => `- ${l}`).join('\n'));
  parts.push('<details><summary>How these were computed</summary>\n\n' +
    [...many.methodNotes, 'Holm and BH columns adjust the randomization p-values.'].map((n) => `- ${n}`).join('\n') + '\n\n</details>');
  const warnings = otherWarnings(many);
  if (warnings.length > 0) parts.push(warnings.map((w) => `- ${w}`).join('\n'));
  return parts.join('\n\n') + '\n';
}

/**
 * `candidates[i].metrics[m]` has the two-run report's shape; its unadjusted fields equal those of
 * `compare BASE candidate` with the same options, its `adjusted` fields are across the whole family.
 */
export function formatCandidatesJson(many: CandidatesComparison): string {
  const first = many.candidates[0]!.comparison;
  const out = {
    baseline: many.baseline,
    conventions: conventionsAsJson(first.conventions),
    options: first.options,
    headline: first.metrics[first.headline]?.key ?? null,
    adjustment: {
      family: 'candidates × metrics',
      tests: many.candidates.length * first.metrics.length,
      methods: ['holm', 'benjaminiHochberg'],
    },
    ranking: { rule: many.rankingRule, order: many.ranking.map((i) => many.candidates[i]!.run) },
    queries: { baseline: many.baselineQueries, inEveryRun: many.inEveryRun },
    candidates: many.candidates.map((c) => {
      return {
        run: c.run,
        rank: c.rank,
        conventions: conventionsAsJson(c.comparison.conventions),
        matching: matchingJson(c.comparison.match),
        metrics: c.comparison.byMetric.map((r, m) => metricJson(r, c.adjusted[m]!)),
        headlineDelta: jsonNumber(c.comparison.byMetric[c.comparison.headline]!.summary.meanDifference),
        warnings: c.comparison.warnings,
      };
    }),
    methodNotes: many.methodNotes,
  };
  return JSON.stringify(out, null, 2) + '\n';
}
