/**
 * One query in full: every position with its gain, discount and contribution next to the ideal order,
 * and the inverted pairs ranked by the NDCG a swap would recover.
 */
import { itemOfRow, type RankedDump } from '../model/dump';
import { rowsOfGroup, type QueryGroups } from '../model/groups';
import { DEFAULT_CONVENTIONS, type Conventions } from '../metrics/conventions';
import { residualMetricIndex, type MetricSpec } from '../metrics/registry';
import { discountTable } from '../metrics/discount';
import { parseMetricList } from '../metrics/parse';
import { checkConventions, type GradeRange } from './evaluate';
import { QueryRanking, SeenItems } from './ranking';
import { noRelevantValue, QueryScorer } from './scorer';
import { gainFunction } from '../metrics/gain';
import type { InvertedPair, NotRetrievedItem, PositionRow, QueryDetail } from './types';

export interface QueryDetailOptions {
  groups?: QueryGroups;
  /** Most inverted pairs listed (default 500); `invertedPairsTotal` always has the full count. */
  maxPairs?: number;
  /** Metrics for `values` (default: ndcg@k, dcg@k, err@k, ap, rr, p@k, r@k, rbp, tau). */
  metrics?: readonly MetricSpec[];
  /**
   * The whole dump's grade range, `gradeRange(dump)`, when the caller computed it once at load. Without
   * it every call scans all grades of the dump to check the conventions (~13 ms on 1M rows).
   */
  gradeRange?: GradeRange;
}

export type { GradeRange };

export function queryDetail(
  dump: RankedDump,
  queryId: number,
  conventions: Conventions = DEFAULT_CONVENTIONS,
  k: number = 10,
  options: QueryDetailOptions = {},
): QueryDetail {
  const at = Number.isFinite(k) ? `@${k}` : '';
  const metrics = options.metrics ?? parseMetricList(`ndcg${at},dcg${at},err${at},ap,rr,p${at},r${at},rbp,tau`);
  const rows = rowsOf(dump, queryId, options.groups);
  const gmax = checkConventions(dump, metrics, conventions, options.gradeRange, rows.length);
  const ranking = new QueryRanking();
  ranking.load(dump, rows, 0, rows.length, new SeenItems());
  ranking.setUnretrieved(dump.unretrieved, queryId);
  const scorer = new QueryScorer(conventions, metrics, gmax, k);
  scorer.score(ranking);
  const n = ranking.n;
  const order = ranking.order;
  const list = ranking.arranged;

  // Tie group size per ranked slot.
  const groupSize = new Uint32Array(n);
  for (let g = 0; g < ranking.tieGroups; g++) {
    const s = ranking.tieBounds[g]!;
    const e = ranking.tieBounds[g + 1]!;
    groupSize.fill(e - s, s, e);
  }
  // Ideal order: gain descending, then grade descending, then listed items before unretrieved judged items
  // (which count in the ideal but have no row), then the model's own order. Any order within a grade gives
  // the same ideal DCG; keeping the model's order means an item moves only when its grade says it must,
  // so equal-grade items are never shown as misplaced among themselves.
  const u = ranking.unretrieved;
  const gainOf = gainFunction(conventions.gain);
  const unretrievedGain = Array.from({ length: u }, (_, e) => gainOf(ranking.unretrievedGrade[e]!));
  const slots = Array.from({ length: n + u }, (_, i) => i);
  const rowAt = (slot: number) => ranking.row[order[slot]!]!;
  const gainAt = (i: number) => (i < n ? scorer.gain[i]! : unretrievedGain[i - n]!);
  const gradeAt = (i: number) => (i < n ? list.grade[i]! : ranking.unretrievedGrade[i - n]!);
  slots.sort((a, b) => gainAt(b) - gainAt(a) || gradeAt(b) - gradeAt(a) || (a < n ? 0 : 1) - (b < n ? 0 : 1) || a - b);
  const idealPosition = new Uint32Array(n + u);
  slots.forEach((slot, i) => (idealPosition[slot] = i + 1));
  const notRetrieved: NotRetrievedItem[] = [];
  const side = dump.unretrieved;
  for (let e = 0; e < u; e++) {
    const entry = side!.start[queryId]! + e;
    notRetrieved.push({ item: (side!.items ?? dump.items).get(side!.item[entry]!), label: side!.grade[entry]!, gain: unretrievedGain[e]!, idealPosition: idealPosition[n + e]! });
  }
  notRetrieved.sort((a, b) => a.idealPosition - b.idealPosition);
  const { discount } = discountTable(n);

  // Untruncated discount: the position's own, or its tie group's mean under `average`.
  const shownDiscount = new Float64Array(n);
  for (let g = 0; g < list.groups; g++) {
    const s = list.bounds[g]!;
    const e = list.bounds[g + 1]!;
    let sum = 0;
    for (let i = s; i < e; i++) sum += discount[i]!;
    shownDiscount.fill(sum / (e - s), s, e);
  }
  const positions: PositionRow[] = [];
  let cumulative = 0;
  let idealCumulative = 0;
  for (let i = 0; i < n; i++) {
    const row = rowAt(i);
    const contribution = scorer.gain[i]! * scorer.headlineDiscount[i]!;
    cumulative += contribution;
    if (i < k) idealCumulative += gainAt(slots[i]!) * discount[i]!;
    positions.push({
      position: i + 1,
      row,
      item: itemOfRow(dump, row),
      label: dump.label[row]!,
      score: dump.score[row]!,
      gain: scorer.gain[i]!,
      discount: shownDiscount[i]!,
      contribution,
      cumulativeDcg: cumulative,
      idealCumulativeDcg: idealCumulative,
      idealPosition: idealPosition[i]!,
      tieGroupSize: groupSize[order[i]!]!,
    });
  }

  const maxPairs = options.maxPairs ?? 500;
  const invertedPairs = topInvertedPairs(ranking, scorer, maxPairs);
  const values: Record<string, number> = {};
  metrics.forEach((m, i) => (values[m.key] = scorer.values[i]!));
  const rbp = metrics[residualMetricIndex(metrics)];
  if (rbp) values[`${rbp.key}_residual`] = scorer.noRelevant && conventions.noRelevant === 'skip' ? NaN : scorer.rbpResidual;
  const ideal = scorer.idealDcgHeadline;
  return {
    query: dump.queries.get(queryId),
    conventions,
    k,
    positions,
    idealOrder: slots.filter((slot) => slot < n).map(rowAt),
    notRetrieved,
    dcg: scorer.dcgHeadline,
    idealDcg: ideal,
    ndcg: scorer.noRelevant ? noRelevantValue(conventions.noRelevant) : ideal > 0 ? scorer.dcgHeadline / ideal : NaN,
    invertedPairs,
    invertedPairsTotal: scorer.pairs.discordant,
    values,
  };
}

function rowsOf(dump: RankedDump, queryId: number, groups?: QueryGroups): Uint32Array {
  if (queryId < 0 || queryId >= dump.queries.size) throw new RangeError(`query id ${queryId} out of range`);
  if (groups) return rowsOfGroup(groups, queryId);
  let count = 0;
  for (let r = 0; r < dump.rowCount; r++) if (dump.query[r] === queryId) count++;
  const rows = new Uint32Array(count);
  let o = 0;
  for (let r = 0; r < dump.rowCount; r++) if (dump.query[r] === queryId) rows[o++] = r;
  return rows;
}

/**
 * The inverted pairs with the largest |ΔNDCG@k| = |gain_a − gain_b| · (discount_a − discount_b) / IDCG@k
 * (Burges 2010), at most `limit`. Pairs whose upper item sits below the cut-off recover nothing, so they are
 * only visited to fill the list when fewer than `limit` pairs recover something.
 */
function topInvertedPairs(ranking: QueryRanking, scorer: QueryScorer, limit: number): InvertedPair[] {
  if (limit <= 0) return [];
  const n = ranking.n;
  const grade = ranking.arranged.grade;
  const gain = scorer.gain;
  const applied = scorer.headlineDiscount;
  const ideal = scorer.idealDcgHeadline;
  // Class index per arranged slot: pairs need strictly different scores.
  const classOf = new Uint32Array(n);
  for (let c = 0; c < ranking.classes; c++) classOf.fill(c, ranking.classBounds[c]!, ranking.classBounds[c + 1]!);
  const found: InvertedPair[] = [];
  const rowAt = (slot: number) => ranking.row[ranking.order[slot]!]!;
  const visit = (zeroOnly: boolean): void => {
    for (let a = 0; a < n; a++) {
      const upperCounts = applied[a]! > 0;
      if (zeroOnly === upperCounts) continue;
      for (let b = a + 1; b < n; b++) {
        if (classOf[b] === classOf[a] || !(grade[b]! > grade[a]!)) continue;
        const recovered = ideal > 0 ? (Math.abs(gain[b]! - gain[a]!) * (applied[a]! - applied[b]!)) / ideal : 0;
        if (zeroOnly && found.length >= limit) return;
        found.push({ aboveRow: rowAt(a), belowRow: rowAt(b), abovePosition: a + 1, belowPosition: b + 1, ndcgRecovered: recovered });
      }
      // Keep memory bounded on long lists: trim to the best `limit` now and then.
      if (!zeroOnly && found.length > 4 * limit) trim(found, limit);
    }
  };
  visit(false);
  trim(found, limit);
  if (found.length < limit) visit(true);
  return trim(found, limit);
}

function trim(pairs: InvertedPair[], limit: number): InvertedPair[] {
  pairs.sort((x, y) => y.ndcgRecovered - x.ndcgRecovered || x.abovePosition - y.abovePosition || x.belowPosition - y.belowPosition);
  if (pairs.length > limit) pairs.length = limit;
  return pairs;
}

/** The DCG arithmetic of one position, as every view (CLI JSON, editor) shows it, in one order. */
export function positionDcgParts(p: PositionRow) {
  return {
    gain: p.gain,
    discount: p.discount,
    contribution: p.contribution,
    cumulativeDcg: p.cumulativeDcg,
    idealCumulativeDcg: p.idealCumulativeDcg,
    idealPosition: p.idealPosition,
    tieGroupSize: p.tieGroupSize,
  };
}
