/**
 * What `gainline eval` shows besides the report: one query's detail (--query), a table per segment
 * value (--segment) and the worst-first order by another key (--sort). The numbers come from the
 * engine functions the editor uses (queryDetail, segmentBreakdown, lossShares); this file only lays
 * them out as text or JSON.
 */
import { InputError } from '../engine/errors';
import { positionDcgParts, queryDetail } from '../engine/evaluate/detail';
import { lossShares } from '../engine/evaluate/lossShare';
import { dcgByPosition, scoresByGrade } from '../engine/evaluate/diagnostics';
import { headlineCutoff } from '../engine/evaluate/scorer';
import { segmentBreakdown, type SegmentedRows } from '../engine/evaluate/segments';
import type { Evaluation, QueryDetail } from '../engine/evaluate/types';
import type { Conventions } from '../engine/metrics/conventions';
import type { MetricSpec } from '../engine/metrics/registry';
import { itemOfRow, type RankedDump } from '../engine/model/dump';
import { describeConventions, formatValue, jsonNumber, lowestIds, type WorstOrder } from '../engine/report/reportInput';
import { alignedTable } from '../engine/report/textTable';
import { dcgByPositionJson, dcgByPositionText, scoresByGradeJson, scoresByGradeText } from './diagnosticsView';

/** Finds a query by id, or by its text from the queries table when no id matches. */
export function findQuery(dump: RankedDump, wanted: string): number {
  const id = dump.queries.find(wanted);
  if (id >= 0) return id;
  const text = dump.joined?.queryText;
  const byText = text ? text.indexOf(wanted) : -1;
  if (byText >= 0) return byText;
  throw new InputError(`a query id${text ? ' or query text' : ''} of the dump`, '--query', undefined, wanted);
}

export function detailOf(dump: RankedDump, query: number, metrics: readonly MetricSpec[], conventions: Conventions): QueryDetail {
  return queryDetail(dump, query, conventions, headlineCutoff(metrics), { metrics, maxPairs: 50 });
}

/** The detail with item titles and attributes from the items table, as one JSON document. */
export function detailJson(dump: RankedDump, detail: QueryDetail, source: string): string {
  const scores = scoresByGrade(dump, detail.positions.map((p) => p.row));
  const facts = itemFacts(dump);
  // Only titles and attributes need dump-wide item ids (made on first use when items are kept per row).
  const titleOf = (item: () => number) => (facts ? facts(item()) : {});
  const values: Record<string, number | null> = {};
  for (const [key, v] of Object.entries(detail.values)) values[key] = jsonNumber(v);
  const text = dump.joined?.queryText?.[dump.queries.find(detail.query)];
  const doc = {
    source,
    query: detail.query,
    ...(text !== undefined ? { text } : {}),
    k: detail.k,
    values,
    dcg: jsonNumber(detail.dcg),
    idealDcg: jsonNumber(detail.idealDcg),
    positions: detail.positions.map((p) => ({
      position: p.position,
      item: p.item,
      ...titleOf(() => dump.item[p.row]!),
      grade: jsonNumber(p.label),
      score: jsonNumber(p.score),
      ...positionDcgParts(p),
      line: dump.line[p.row] || null,
    })),
    idealOrder: idealEntries(dump, detail).map((e) => ({
      item: e.item, ...titleOf(e.itemId), grade: jsonNumber(e.grade), ...(e.retrieved ? {} : { retrieved: false }),
    })),
    invertedPairs: detail.invertedPairs.map((pair) => ({
      above: { position: pair.abovePosition, item: itemOfRow(dump, pair.aboveRow) },
      below: { position: pair.belowPosition, item: itemOfRow(dump, pair.belowRow) },
      ndcgRecovered: pair.ndcgRecovered,
    })),
    invertedPairsTotal: detail.invertedPairsTotal,
    scoresByGrade: scoresByGradeJson(scores),
  };
  return JSON.stringify(doc, null, 1) + '\n';
}

/** The detail as text: the values, the predicted order beside the ideal one, and the costliest inverted pairs. */
export function detailText(dump: RankedDump, detail: QueryDetail, source: string): string {
  const titles = dump.joined?.itemTitle;
  const text = dump.joined?.queryText?.[dump.queries.find(detail.query)];
  const ideal = idealEntries(dump, detail);
  const unretrieved = ideal.length - detail.positions.length;
  const sections = [
    `${source}\nquery ${detail.query}${text ? ` · ${text}` : ''} · ${detail.positions.length} items`,
    'Values\n' + alignedTable(['metric', 'value'], Object.entries(detail.values).map(([k, v]) => [k, formatValue(v)]), ['left', 'right']),
    `Conventions\n  ${describeConventions(detail.conventions)}`,
  ];
  // The ideal order also holds judged items the run never retrieved: it may run past the predicted list.
  const rows = ideal.map((e, i) => {
    const p = detail.positions[i];
    const idealItem = e.retrieved ? e.item : `${e.item} (not retrieved)`;
    const predicted = p === undefined ? Array<string>(titles ? 11 : 10).fill('') : [
      String(p.position), p.item, ...(titles ? [titles[dump.item[p.row]!]!] : []), formatValue(p.label, true), formatValue(p.score),
      formatValue(p.gain), formatValue(p.discount), formatValue(p.contribution), formatValue(p.cumulativeDcg), formatValue(p.idealCumulativeDcg),
      String(p.idealPosition),
    ];
    return [...predicted, idealItem, formatValue(e.grade, true)];
  });
  const beyond = unretrieved > 0 ? `; ${unretrieved} judged item${unretrieved === 1 ? '' : 's'} the run never retrieved ${unretrieved === 1 ? 'counts' : 'count'} in the ideal order only` : '';
  sections.push(`Predicted order against the ideal order (contributions at k = ${detail.k}${beyond})\n` + alignedTable(
    ['#', 'item', ...(titles ? ['title'] : []), 'grade', 'score', 'gain', 'discount', 'contribution', 'DCG', 'ideal DCG', 'ideal #', 'ideal item', 'ideal grade'],
    rows,
    ['right', 'left', ...(titles ? ['left' as const] : []), 'right', 'right', 'right', 'right', 'right', 'right', 'right', 'right', 'left', 'right'],
  ));
  sections.push(scoresByGradeText(scoresByGrade(dump, detail.positions.map((p) => p.row), 10)));
  const pairs = detail.invertedPairs.slice(0, 20);
  sections.push(pairs.length === 0 ? 'Inverted pairs\n  (none)' : `Inverted pairs (${pairs.length} of ${detail.invertedPairsTotal}, most NDCG recovered by a swap first)\n` + alignedTable(
    ['above #', 'above item', 'below #', 'below item', 'NDCG recovered'],
    pairs.map((p) => [String(p.abovePosition), itemOfRow(dump, p.aboveRow), String(p.belowPosition), itemOfRow(dump, p.belowRow), formatValue(p.ndcgRecovered)]),
    ['right', 'left', 'right', 'left', 'right'],
  ));
  return sections.join('\n\n') + '\n';
}

/** One entry of the whole ideal order: a listed row, or a judged item the run never retrieved (row -1). */
interface IdealEntry {
  readonly item: string;
  readonly itemId: () => number;
  readonly grade: number;
  readonly retrieved: boolean;
}

/** The listed rows and the judged items the run never retrieved, in the order of their ideal positions. */
function idealEntries(dump: RankedDump, detail: QueryDetail): IdealEntry[] {
  const positionOf = new Map(detail.positions.map((p) => [p.row, p.idealPosition]));
  const entries = detail.idealOrder.map((row) => ({
    at: positionOf.get(row) ?? 0, item: itemOfRow(dump, row), itemId: () => dump.item[row]!, grade: dump.label[row]!, retrieved: true,
  }));
  for (const m of detail.notRetrieved) entries.push({ at: m.idealPosition, item: m.item, itemId: () => dump.items.find(m.item), grade: m.label, retrieved: false });
  return entries.sort((a, b) => a.at - b.at).map(({ at: _at, ...e }) => e);
}

/** Title and attributes by item id (the items pool also holds judged items that have no row). */
function itemFacts(dump: RankedDump): ((item: number) => Record<string, unknown>) | undefined {
  const titles = dump.joined?.itemTitle;
  const attributes = dump.joined?.itemAttributes ?? [];
  if (!titles && attributes.length === 0) return undefined;
  return (item) => {
    const out: Record<string, unknown> = {};
    if (titles) out.title = titles[item];
    if (attributes.length > 0) out.attributes = Object.fromEntries(attributes.map((a) => [a.name, a.values[item]]));
    return out;
  };
}

/** Per value of one segment column: queries and the mean of every metric (weighted when the means are). */
export function segmentReport(dump: SegmentedRows, evaluation: Evaluation, column: string, format: 'text' | 'json'): string {
  const index = dump.segments.findIndex((s) => s.name === column);
  if (index < 0) {
    const names = dump.segments.map((s) => s.name);
    throw new InputError(`a segment column (${names.length > 0 ? names.join(', ') : 'this dump has none'})`, '--segment', undefined, column);
  }
  const rows = segmentBreakdown(dump, evaluation, index);
  const keys = evaluation.metrics.map((m) => m.key);
  if (format === 'json') {
    return JSON.stringify({
      segment: column,
      ...(evaluation.weighting ? { weights: evaluation.weighting.source } : {}),
      values: rows.map((r) => ({ value: r.value, queries: r.queries, means: Object.fromEntries(keys.map((k, m) => [k, jsonNumber(r.means[m]!)])) })),
    }, null, 1) + '\n';
  }
  const weighted = evaluation.weighting ? ` (weighted means: ${evaluation.weighting.source})` : '';
  return `Means per ${column}${weighted}\n` + alignedTable(
    [column, 'queries', ...keys],
    rows.map((r) => [r.value === '' ? '(empty)' : r.value, String(r.queries), ...r.means.map((v) => formatValue(v))]),
    ['left', 'right', ...keys.map(() => 'right' as const)],
  ) + '\n';
}

/** Keys --sort accepts besides the metric keys. */
export const SORT_KEYS = ['loss-share', 'inversion-cost'] as const;

/** Worst-first order by a metric (lowest first), by share of the headline loss, or by inversion cost (highest first). */
export function worstOrder(evaluation: Evaluation, key: string, limit: number): WorstOrder {
  const pq = evaluation.perQuery;
  const m = evaluation.metrics.findIndex((spec) => spec.key === key);
  let column: Float64Array;
  let ascending = true;
  let label = key;
  let shown: WorstOrder['column'];
  if (m >= 0) column = pq.values[m]!;
  else if (key === 'loss-share') {
    column = lossShares(pq.values[evaluation.headline]!);
    ascending = false;
    label = `share of the ${evaluation.metrics[evaluation.headline]!.key} loss`;
    shown = { key: 'loss share', valueOf: (q) => column[q]! };
  } else if (key === 'inversion-cost') {
    column = pq.inversionCost;
    ascending = false;
    label = 'inversion cost';
    shown = { key: 'inversion cost', valueOf: (q) => column[q]! };
  } else {
    throw new InputError(`a metric of --metrics (${evaluation.metrics.map((s) => s.key).join(', ')}) or one of ${SORT_KEYS.join(', ')}`, '--sort', undefined, key);
  }
  // Lowest first: the column itself, or its negation when higher is worse.
  const lowFirst = ascending ? column : column.map((v) => -v);
  const ids = lowestIds(evaluation.queryCount, lowFirst, limit, (q) => !pq.skipped[q] && Number.isFinite(column[q]!));
  return { ids, label, ...(shown ? { column: shown } : {}) };
}

/** The whole dump's score diagnostics (--diagnostics): scores per grade and DCG by position against the ideal. */
export function diagnosticsReport(dump: RankedDump, metrics: readonly MetricSpec[], conventions: Conventions, format: 'text' | 'json', source: string): string {
  const scores = scoresByGrade(dump);
  const positions = dcgByPosition(dump, metrics, conventions, { ...(dump.joined?.queryWeight ? { weights: dump.joined.queryWeight } : {}) });
  if (format === 'json') {
    return JSON.stringify({ source, scoresByGrade: scoresByGradeJson(scores), dcgByPosition: dcgByPositionJson(positions) }, null, 1) + '\n';
  }
  const weighted = dump.joined?.queryWeight ? `\n(weighted means: ${dump.joined.weightSource ?? 'query weights'})` : '';
  return `${source}\n\n${scoresByGradeText(scores)}\n\n${dcgByPositionText(positions)}${weighted}\n`;
}
