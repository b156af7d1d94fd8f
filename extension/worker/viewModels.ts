/**
 * Engine results → the plain-JSON view models of the protocol (no Map, no NaN, no typed arrays).
 * Pure functions, tested without a worker.
 */
import { basename } from 'node:path';
import { itemOfRow, type RankedDump } from '../engine/model/dump';
import type { Conventions } from '../engine/metrics/conventions';
import type { MetricSpec } from '../engine/metrics/registry';
import type { Evaluation, QueryDetail } from '../engine/evaluate/types';
import { segmentBreakdown, type SegmentedRows } from '../engine/evaluate/segments';
import { positionDcgParts } from '../engine/evaluate/detail';
import { describeConventions, describeGain } from '../presentation/conventionsLine';
import { metricLabel as labelOfKey } from '../presentation/metricText';
import { metricRange } from '../engine/metrics/registry';
import type { QueryMovement } from '../engine/compare/movement';
import type {
  ConventionsView,
  FileInfo,
  Histogram,
  IdealView,
  JudgmentsView,
  MetricColumn,
  MovementView,
  OverviewModel,
  QueryDetailView,
  SegmentTable,
  SensitivityView,
} from '../protocol/messages';
import { NO_SEGMENT_VALUE, toMaybe, type QueryTable } from './queryTable';

/** 'ndcg@10' → 'NDCG@10', 'tau' → "Kendall's τ": the registry's label (presentation module). */
export function metricLabel(spec: MetricSpec): string {
  return labelOfKey(spec.key);
}

export function conventionsView(c: Conventions): ConventionsView {
  return {
    gain: describeGain(c.gain),
    ties: c.ties,
    noRelevant: c.noRelevant,
    relevantFrom: c.relevantFrom,
    maxGrade: c.maxGrade ?? null,
    rbpPersistence: c.rbpPersistence,
    summary: describeConventions(c),
  };
}

/** Parquet and compressed files have no text lines to reveal. */
export function fileInfo(dump: RankedDump): FileInfo {
  return {
    path: dump.path,
    name: basename(dump.path),
    format: dump.format,
    rowCount: dump.rowCount,
    sizeBytes: dump.stamp.size,
    textual: dump.format !== 'parquet' && !/\.gz$/i.test(dump.path),
  };
}

/**
 * 10 equal bins over the metric's range from the registry ([0, 1], tau's [-1, 1]); a metric unbounded
 * above (DCG) gets [min(0, lowest value), highest value]. The last bin includes its upper end.
 */
export function histogram(values: Float64Array, range?: readonly [number, number], bins = 10): Histogram {
  let [lower, upper] = range ?? [0, -Infinity];
  if (!range) {
    for (const v of values) {
      if (!Number.isFinite(v)) continue;
      if (v < lower) lower = v;
      if (v > upper) upper = v;
    }
    if (!(upper > lower)) upper = lower + 1;
  }
  const counts = new Array<number>(bins).fill(0);
  for (const v of values) {
    if (!Number.isFinite(v)) continue;
    const bin = Math.min(bins - 1, Math.max(0, Math.floor(((v - lower) / (upper - lower)) * bins)));
    counts[bin]!++;
  }
  return { lower, upper, counts };
}

export function metricColumns(evaluation: Evaluation): MetricColumn[] {
  return evaluation.metrics.map((spec, m) => ({
    key: spec.key,
    label: metricLabel(spec),
    mean: toMaybe(evaluation.summary[m]?.mean ?? NaN),
    counted: evaluation.summary[m]?.counted ?? 0,
  }));
}

function judgmentsView(j: NonNullable<Evaluation['judgments']>): JudgmentsView {
  return { unretrieved: j.unretrieved, absentQueries: j.absentQueries, missingQueries: j.missingQueries, disagreements: j.disagreements };
}

export function overviewModel(dump: RankedDump, evaluation: Evaluation, loadMs: number): OverviewModel {
  return {
    ...overviewOf(fileInfo(dump), evaluation, [], loadMs),
    segmentColumns: dump.segments.map((s) => s.name),
  };
}

/**
 * The convention sensitivity rows of `evaluation`, each with its Δ against `headlineMean` (the
 * overview's headline, which may come from another evaluation of the same dump: see engineWorker.ts).
 */
export function sensitivityRows(evaluation: Evaluation, headlineMean: number): SensitivityView[] {
  return evaluation.sensitivity.map((row) => ({
    label: row.label,
    mean: toMaybe(row.mean),
    counted: row.counted,
    delta: toMaybe(row.mean - headlineMean),
    // The sensitivity pass reuses the configured gain object for its "as configured" rows.
    current: row.conventions.gain === evaluation.conventions.gain && row.conventions.ties === evaluation.conventions.ties && row.conventions.noRelevant === evaluation.conventions.noRelevant,
    ...(row.unavailable !== undefined ? { unavailable: row.unavailable } : {}),
  }));
}

/**
 * The overview of an evaluation whose rows are not held here (an SQL engine's per-query table). `notes`: what
 * the caller adds to the evaluation's warnings (a dump's own reading notes are among those already).
 */
export function overviewOf(file: FileInfo, evaluation: Evaluation, notes: readonly string[], loadMs: number): OverviewModel {
  const headlineMean = evaluation.summary[evaluation.headline]?.mean ?? NaN;
  return {
    file,
    queryCount: evaluation.queryCount,
    metrics: metricColumns(evaluation),
    headline: evaluation.headline,
    conventions: conventionsView(evaluation.conventions),
    sensitivity: sensitivityRows(evaluation, headlineMean),
    degenerate: { ...evaluation.degenerate },
    histogram: histogram(evaluation.perQuery.values[evaluation.headline]!, metricRange(evaluation.metrics[evaluation.headline]!)),
    segmentColumns: [],
    warnings: [...evaluation.warnings, ...notes],
    ...(evaluation.judgments ? { judgments: judgmentsView(evaluation.judgments) } : {}),
    loadMs: Math.round(loadMs),
  };
}

/**
 * The whole ideal ranking: listed items at their ideal positions, with the judged items the run never
 * retrieved in between, marked (`retrieved: false`, predicted position 0).
 */
function idealViews(dump: RankedDump, detail: QueryDetail, byRow: ReadonlyMap<number, QueryDetail['positions'][number]>,
  label: (v: number) => ReturnType<typeof toMaybe>): IdealView[] {
  // Titles by item id; the items pool also holds judged items with no row, so they get theirs too.
  const titles = dump.joined?.itemTitle;
  const titleOf = (item: number) => (titles ? { title: item >= 0 ? titles[item] ?? '' : '' } : {});
  const views: IdealView[] = detail.idealOrder.map((row) => {
    const p = byRow.get(row);
    return {
      position: p?.idealPosition ?? 0,
      row,
      item: p?.item ?? itemOfRow(dump, row),
      label: label(dump.label[row]!),
      gain: p?.gain ?? 0,
      predictedPosition: p?.position ?? 0,
      retrieved: true,
      ...(titles ? titleOf(dump.item[row]!) : {}),
    };
  });
  for (const missing of detail.notRetrieved) {
    views.push({ position: missing.idealPosition, row: -1, item: missing.item, label: label(missing.label), gain: missing.gain, predictedPosition: 0, retrieved: false,
      ...(titles ? titleOf(dump.items.find(missing.item)) : {}) });
  }
  return views.sort((a, b) => a.position - b.position);
}

export function detailView(dump: RankedDump, evaluation: Evaluation, detail: QueryDetail, queryId: number, table: QueryTable): QueryDetailView {
  const label = (v: number) => toMaybe(v);
  const byRow = new Map(detail.positions.map((p) => [p.row, p]));
  const segments: Record<string, string> = {};
  for (const s of dump.segments) {
    const { values, ofQuery } = table.segment(s.name);
    if (ofQuery[queryId] !== NO_SEGMENT_VALUE) segments[s.name] = values(ofQuery[queryId]!);
  }
  const titles = dump.joined?.itemTitle;
  const titleOf = (row: number) => (titles ? { title: titles[dump.item[row]!] ?? '' } : {});
  const text = dump.joined?.queryText?.[queryId];
  return {
    ...(text !== undefined ? { text } : {}),
    query: detail.query,
    k: detail.k,
    headlineKey: evaluation.metrics[evaluation.headline]!.key,
    positions: detail.positions.map((p) => ({
      position: p.position,
      row: p.row,
      line: dump.line[p.row] ?? 0,
      item: p.item,
      label: label(p.label),
      score: toMaybe(p.score),
      ...positionDcgParts(p),
      withinCutoff: p.position <= detail.k,
      ...titleOf(p.row),
    })),
    ideal: idealViews(dump, detail, byRow, label),
    dcg: detail.dcg,
    idealDcg: detail.idealDcg,
    ndcg: toMaybe(detail.ndcg),
    invertedPairs: detail.invertedPairs.map((pair) => ({
      aboveItem: byRow.get(pair.aboveRow)?.item ?? '',
      belowItem: byRow.get(pair.belowRow)?.item ?? '',
      aboveRow: pair.aboveRow,
      belowRow: pair.belowRow,
      abovePosition: pair.abovePosition,
      belowPosition: pair.belowPosition,
      aboveLabel: label(dump.label[pair.aboveRow]!),
      belowLabel: label(dump.label[pair.belowRow]!),
      ndcgRecovered: pair.ndcgRecovered,
    })),
    invertedPairsTotal: detail.invertedPairsTotal,
    // Values as the overview computed them, so the detail and the table never disagree.
    values: evaluation.perQuery.values.map((column) => toMaybe(column[queryId]!)),
    segments,
  };
}

/** Segment means from the engine, plus the headline gap to the overall mean and the share of the loss. */
export function segmentTable(dump: SegmentedRows, evaluation: Evaluation, table: QueryTable, column: string): SegmentTable {
  const index = dump.segments.findIndex((s) => s.name === column);
  if (index < 0) throw new Error(`no segment column '${column}' (columns: ${dump.segments.map((s) => s.name).join(', ') || 'none'})`);
  const overall = evaluation.summary[evaluation.headline]?.mean ?? NaN;
  const { ofQuery, values } = table.segment(column);
  const shareByValue = new Map<string, number>();
  const shares = table.lossShare;
  for (let q = 0; q < ofQuery.length; q++) {
    const share = shares[q]!;
    if (!Number.isFinite(share) || ofQuery[q] === NO_SEGMENT_VALUE) continue;
    const value = values(ofQuery[q]!);
    shareByValue.set(value, (shareByValue.get(value) ?? 0) + share);
  }
  const anyShare = shareByValue.size > 0;
  const skippedByValue = new Map<string, number>();
  const headlineValues = evaluation.perQuery.values[evaluation.headline]!;
  for (let q = 0; q < ofQuery.length; q++) {
    if (Number.isFinite(headlineValues[q]!) || ofQuery[q] === NO_SEGMENT_VALUE) continue;
    const value = values(ofQuery[q]!);
    skippedByValue.set(value, (skippedByValue.get(value) ?? 0) + 1);
  }
  return {
    column,
    rows: segmentBreakdown(dump, evaluation, index).map((row) => ({
      value: row.value,
      queries: row.queries,
      skipped: skippedByValue.get(row.value) ?? 0,
      means: row.means.map(toMaybe),
      headlineDelta: toMaybe(row.means[evaluation.headline]! - overall),
      lossShare: anyShare ? (shareByValue.get(row.value) ?? 0) : null,
    })),
  };
}

const PAIR_CAP = 500;

export function movementView(m: QueryMovement): MovementView {
  const position = (p: number) => (p > 0 ? p : null);
  return {
    query: m.query,
    k: m.k,
    a: toMaybe(m.ndcgA),
    b: toMaybe(m.ndcgB),
    dcgA: m.dcgA,
    dcgB: m.dcgB,
    rows: m.items.map((item) => ({
      item: item.item,
      label: toMaybe(item.positionB > 0 ? item.gradeB : item.gradeA),
      positionA: position(item.positionA),
      positionB: position(item.positionB),
      moved: toMaybe(item.change),
    })),
    fixedPairs: m.fixedPairs.slice(0, PAIR_CAP).map((p) => ({ ...p })),
    introducedPairs: m.introducedPairs.slice(0, PAIR_CAP).map((p) => ({ ...p })),
    fixedTotal: m.fixedPairs.length,
    introducedTotal: m.introducedPairs.length,
    keptPairs: m.keptPairs,
    droppedPairs: m.droppedPairs,
    invertedTotalA: m.invertedTotalA,
    invertedTotalB: m.invertedTotalB,
    pairsTruncated: m.pairsTruncated || m.fixedPairs.length > PAIR_CAP || m.introducedPairs.length > PAIR_CAP,
    positions: m.positions.map((p) => ({ ...p })),
  };
}
