/** Reports of a training series (engine/trend/trend.ts): table, Markdown, CSV and JSON. */
import type { Conventions } from '../metrics/conventions';
import type { QueryDrop, Trend } from '../trend/trend';
import { csvField } from './csv';
import { describeConventions } from '../../presentation/conventionsLine';
import { formatDelta, formatMeanInterval, formatValue } from '../../presentation/numbers';
import { conventionsAsJson, jsonNumber } from './reportInput';
import { alignedTable, clip, markdownTable, type Align } from './textTable';

export type TrendFormat = 'table' | 'json' | 'markdown' | 'csv';
export const TREND_FORMATS: readonly TrendFormat[] = ['table', 'json', 'markdown', 'csv'];

export interface TrendReportInput {
  readonly trend: Trend;
  readonly conventions: Conventions;
  /** How the series was put in order, in words. */
  readonly orderRule: string;
  readonly methodNotes: readonly string[];
}

export function formatTrend(format: TrendFormat, input: TrendReportInput): string {
  switch (format) {
    case 'table':
      return trendText(input, false);
    case 'markdown':
      return trendText(input, true);
    case 'csv':
      return trendCsv(input.trend);
    case 'json':
      return trendJson(input);
  }
}

const PER_QUERY_SLOT = '\u0000per-query trajectories\u0000';

function trendJson(input: TrendReportInput): string {
  const { trend } = input;
  const keys = trend.metrics.map((m) => m.key);
  const byMetric = <T>(f: (m: number) => T) => Object.fromEntries(keys.map((k, m) => [k, f(m)]));
  const drop = (d: QueryDrop) => ({
    query: d.query,
    from: jsonNumber(d.from),
    fromRun: trend.checkpoints[d.fromCheckpoint]!.run,
    last: jsonNumber(d.last),
    delta: jsonNumber(d.delta),
  });
  const c = trend.checkpoints.length;
  const out = {
    order: input.orderRule,
    conventions: conventionsAsJson(input.conventions),
    metrics: keys,
    headline: keys[0] ?? null,
    runs: trend.checkpoints.map((k) => ({
      run: k.run,
      position: k.position,
      queries: k.queries,
      summary: byMetric((m) => jsonNumber(k.means[m]!)),
      interval95: byMetric((m) => ({ low: jsonNumber(k.intervals[m]!.low), high: jsonNumber(k.intervals[m]!.high) })),
      counted: byMetric((m) => k.counted[m]!),
    })),
    peaks: byMetric((m) => {
      const at = trend.peaks[m]!;
      return at < 0 ? null : { run: trend.checkpoints[at]!.run, index: at, mean: jsonNumber(trend.checkpoints[at]!.means[m]!) };
    }),
    worstFirstToLast: trend.worstFirstToLast.map(drop),
    worstPeakToLast: trend.worstPeakToLast.map(drop),
    querySets: {
      queries: trend.queryNames.length,
      inEveryCheckpoint: trend.inEveryCheckpoint,
      comparableFirstToLast: trend.comparableFirstToLast,
      checkpoints: trend.querySets,
    },
    methodNotes: input.methodNotes,
    warnings: trend.warnings,
    perQuery: PER_QUERY_SLOT,
  };
  // One line per metric: a trajectory per query, checkpoints in series order.
  const perQuery = {
    query: trend.queryNames,
    values: byMetric((m) =>
      Array.from({ length: trend.queryNames.length }, (_, q) => Array.from(trend.trajectories[m]!.subarray(q * c, q * c + c), jsonNumber)),
    ),
  };
  return JSON.stringify(out, null, 2).replace(JSON.stringify(PER_QUERY_SLOT), () => JSON.stringify(perQuery)) + '\n';
}

/** One row per checkpoint: its mean, interval bounds and counted queries per metric. */
function trendCsv(trend: Trend): string {
  const header = ['run', 'position', 'queries', ...trend.metrics.flatMap((m) => [m.key, `${m.key}_low`, `${m.key}_high`, `${m.key}_counted`])];
  const number = (x: number) => (Number.isFinite(x) ? String(x) : '');
  const lines = [header.map(csvField).join(',')];
  for (const k of trend.checkpoints) {
    lines.push(
      [csvField(k.run), String(k.position), String(k.queries),
        ...trend.metrics.flatMap((_, m) => [number(k.means[m]!), number(k.intervals[m]!.low), number(k.intervals[m]!.high), String(k.counted[m])])].join(','),
    );
  }
  return lines.join('\n') + '\n';
}

function trendText(input: TrendReportInput, markdown: boolean): string {
  const { trend } = input;
  const table = (header: string[], rows: string[][], align: Align[]) =>
    markdown ? markdownTable(header, rows.map((r) => r.map((cell) => cell.trim())), align) : alignedTable(header, rows, align);
  const title = (text: string) => (markdown ? `#### ${text}\n\n` : `${text}\n`);
  const list = (lines: readonly string[]) => lines.map((l) => (markdown ? `- ${l}` : `  - ${l}`)).join('\n');
  const headline = trend.metrics[0]?.key ?? '';
  const parts: string[] = [];
  parts.push((markdown ? '### ' : '') + `${trend.checkpoints.length} checkpoints, ${input.orderRule}`);
  trend.metrics.forEach((spec, m) => {
    const peak = trend.peaks[m]!;
    parts.push(
      title(`${spec.key}${peak >= 0 ? ` (peak at ${trend.checkpoints[peak]!.run})` : ''}`) +
        table(
          ['#', 'checkpoint', 'mean', '95% interval', 'queries', ''],
          trend.checkpoints.map((k, i) => [String(i + 1), k.run, formatValue(k.means[m]!), formatMeanInterval(k.intervals[m]!.low, k.intervals[m]!.high), String(k.counted[m]), i === peak ? 'peak' : '']),
          ['right', 'left', 'right', 'left', 'right', 'left'],
        ),
    );
  });
  const dropRows = (drops: readonly QueryDrop[]) =>
    drops.map((d, i) => [String(i + 1), markdown ? d.query : clip(d.query, 40), formatValue(d.from), trend.checkpoints[d.fromCheckpoint]!.run,
      formatValue(d.last), formatDelta(d.delta)]);
  const dropAlign: Align[] = ['right', 'left', 'right', 'left', 'right', 'right'];
  const section = (name: string, drops: readonly QueryDrop[], fromLabel: string) =>
    title(name) + (drops.length === 0 ? (markdown ? 'None.' : '  none') : table(['#', 'query', fromLabel, 'at', 'last', 'Δ'], dropRows(drops), dropAlign));
  parts.push(section(`Worst ${headline} changes, first to last checkpoint (${trend.comparableFirstToLast} queries at both)`, trend.worstFirstToLast, 'first'));
  parts.push(section(`Worst ${headline} falls from each query's peak to the last checkpoint`, trend.worstPeakToLast, 'peak'));
  parts.push(title('Queries') + list([
    `${trend.queryNames.length} queries in the series, ${trend.inEveryCheckpoint} in every checkpoint.`,
    ...trend.warnings,
  ]));
  parts.push(title('Conventions') + list([describeConventions(input.conventions)]));
  parts.push(title('How these were computed') + list(input.methodNotes));
  return parts.join('\n\n') + '\n';
}

