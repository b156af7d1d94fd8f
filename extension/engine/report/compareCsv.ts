/**
 * Comparisons as CSV, one row per run × metric, for spreadsheets: the same figures as the JSON report
 * with every p-value and its adjustments in its own column. A two-run comparison has one run (B), its
 * adjustments across the metrics of that pair; several candidates have one block each, adjusted across
 * candidates × metrics, with the candidate's rank.
 */
import type { MetricComparison } from '../compare/compare';
import type { CandidatesComparison } from '../compare/candidates';
import type { CompareReportInput } from './compareShared';
import { csvField } from './csv';

const HEADER = [
  'run', 'rank', 'metric', 'paired', 'skipped', 'mean_baseline', 'mean_run', 'delta', 'sd_delta', 'effect_size_dz',
  'interval95_low', 'interval95_high', 'wins', 'ties', 'losses',
  't', 't_dof', 'p_t', 'p_t_holm', 'p_t_bh',
  'wilcoxon_statistic', 'wilcoxon_z', 'p_wilcoxon', 'p_wilcoxon_holm', 'p_wilcoxon_bh',
  'randomization_patterns', 'p_randomization', 'p_randomization_holm', 'p_randomization_bh',
];

function number(x: number): string {
  return Number.isFinite(x) ? String(x) : '';
}

function row(run: string, rank: number | undefined, r: MetricComparison, adjusted: MetricComparison['adjusted']): string {
  return [
    csvField(run), rank === undefined ? '' : String(rank), csvField(r.key), String(r.paired), String(r.skipped),
    number(r.summary.meanA), number(r.summary.meanB), number(r.summary.meanDifference), number(r.summary.sdDifference),
    number(r.summary.effectSize), number(r.interval.low), number(r.interval.high),
    String(r.summary.wins), String(r.summary.ties), String(r.summary.losses),
    number(r.tTest.t), number(r.tTest.dof), number(r.tTest.p), number(adjusted.tTest.holm), number(adjusted.tTest.benjaminiHochberg),
    number(r.wilcoxon.statistic), number(r.wilcoxon.z), number(r.wilcoxon.p), number(adjusted.wilcoxon.holm),
    number(adjusted.wilcoxon.benjaminiHochberg),
    String(r.randomization.patterns), number(r.randomization.p), number(adjusted.randomization.holm),
    number(adjusted.randomization.benjaminiHochberg),
  ].join(',');
}

export function formatCompareCsv(input: CompareReportInput): string {
  const lines = [HEADER.join(',')];
  for (const r of input.comparison.byMetric) lines.push(row(input.sourceB, undefined, r, r.adjusted));
  return lines.join('\n') + '\n';
}

export function formatCandidatesCsv(many: CandidatesComparison): string {
  const lines = [HEADER.join(',')];
  for (const c of many.candidates) c.comparison.byMetric.forEach((r, m) => lines.push(row(c.run, c.rank, r, c.adjusted[m]!)));
  return lines.join('\n') + '\n';
}
