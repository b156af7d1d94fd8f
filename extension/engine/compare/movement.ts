/**
 * One query seen in both runs: how each item moved, which inverted pairs run B fixed or introduced,
 * and how each position's DCG contribution changed. Built from the metrics module's query detail of
 * each run, so every number matches what the detail view shows for A and for B.
 */
import { queryDetail, type GradeRange } from '../evaluate/detail';
import type { InvertedPair, QueryDetail } from '../evaluate/types';
import type { Conventions } from '../metrics/conventions';
import type { RankedDump } from '../model/dump';
import type { QueryGroups } from '../model/groups';

/** Inverted pairs listed per run; the totals are always exact. */
const MAX_PAIRS = 20_000;

export interface ItemMove {
  readonly item: string;
  /** 1-based positions; 0 when the item is not a candidate in that run. */
  readonly positionA: number;
  readonly positionB: number;
  /** positionA − positionB: positive when B ranks the item higher; NaN when it is missing on one side. */
  readonly change: number;
  /** Grade as each run's data has it (NaN when missing on that side). */
  readonly gradeA: number;
  readonly gradeB: number;
}

export interface PairChange {
  /** The item graded higher but ranked below the other. */
  readonly higherGraded: string;
  readonly lowerGraded: string;
  /** |ΔNDCG@k| a swap recovers in the run where the pair is inverted (Burges 2010). */
  readonly ndcgRecovered: number;
}

export interface PositionChange {
  readonly position: number;
  /** Item at the position in each run ('' when the list is shorter). */
  readonly itemA: string;
  readonly itemB: string;
  readonly contributionA: number;
  readonly contributionB: number;
  readonly change: number;
}

export interface QueryMovement {
  readonly query: string;
  readonly k: number;
  readonly dcgA: number;
  readonly dcgB: number;
  readonly ndcgA: number;
  readonly ndcgB: number;
  /** Items in B's order, then items only A ranks. */
  readonly items: readonly ItemMove[];
  /** Inverted in A and no longer in B (both items still present in B). */
  readonly fixedPairs: readonly PairChange[];
  /** Inverted in B but not in A. */
  readonly introducedPairs: readonly PairChange[];
  /** Inverted in both runs. */
  readonly keptPairs: number;
  /** Inverted in A with an item that B does not rank. */
  readonly droppedPairs: number;
  readonly invertedTotalA: number;
  readonly invertedTotalB: number;
  /** True when a run had more inverted pairs than are listed, so the pair lists are partial. */
  readonly pairsTruncated: boolean;
  /** Positions 1..k (or to the longer list's end when k exceeds both). */
  readonly positions: readonly PositionChange[];
}

/** What a caller holding a loaded run already knows about it; each spares a scan of the whole dump per call. */
export interface LoadedRun {
  readonly groups?: QueryGroups;
  readonly gradeRange?: GradeRange;
}

export function queryMovement(
  a: RankedDump,
  b: RankedDump,
  queryIdA: number,
  queryIdB: number,
  conventions: Conventions,
  k: number,
  known: { readonly a?: LoadedRun; readonly b?: LoadedRun } = {},
): QueryMovement {
  const detailA = queryDetail(a, queryIdA, conventions, k, { ...known.a, maxPairs: MAX_PAIRS });
  const detailB = queryDetail(b, queryIdB, conventions, k, { ...known.b, maxPairs: MAX_PAIRS });
  const positionInA = new Map(detailA.positions.map((p) => [p.item, p]));
  const positionInB = new Map(detailB.positions.map((p) => [p.item, p]));

  const items: ItemMove[] = detailB.positions.map((pb) => {
    const pa = positionInA.get(pb.item);
    return {
      item: pb.item,
      positionA: pa?.position ?? 0,
      positionB: pb.position,
      change: pa ? pa.position - pb.position : Number.NaN,
      gradeA: pa?.label ?? Number.NaN,
      gradeB: pb.label,
    };
  });
  for (const pa of detailA.positions) {
    if (!positionInB.has(pa.item)) {
      items.push({ item: pa.item, positionA: pa.position, positionB: 0, change: Number.NaN, gradeA: pa.label, gradeB: Number.NaN });
    }
  }

  const pairsA = pairMap(detailA);
  const pairsB = pairMap(detailB);
  const fixedPairs: PairChange[] = [];
  let keptPairs = 0;
  let droppedPairs = 0;
  for (const [key, pair] of pairsA) {
    if (pairsB.has(key)) keptPairs++;
    else if (positionInB.has(pair.higherGraded) && positionInB.has(pair.lowerGraded)) fixedPairs.push(pair);
    else droppedPairs++;
  }
  const introducedPairs = [...pairsB].filter(([key]) => !pairsA.has(key)).map(([, pair]) => pair);
  const byRecovered = (x: PairChange, y: PairChange) => y.ndcgRecovered - x.ndcgRecovered;

  const depth = Math.min(k, Math.max(detailA.positions.length, detailB.positions.length));
  const positions: PositionChange[] = [];
  for (let i = 0; i < depth; i++) {
    const pa = detailA.positions[i];
    const pb = detailB.positions[i];
    const contributionA = pa?.contribution ?? 0;
    const contributionB = pb?.contribution ?? 0;
    positions.push({ position: i + 1, itemA: pa?.item ?? '', itemB: pb?.item ?? '', contributionA, contributionB, change: contributionB - contributionA });
  }

  return {
    query: detailA.query,
    k,
    dcgA: detailA.dcg,
    dcgB: detailB.dcg,
    ndcgA: detailA.ndcg,
    ndcgB: detailB.ndcg,
    items,
    fixedPairs: fixedPairs.sort(byRecovered),
    introducedPairs: introducedPairs.sort(byRecovered),
    keptPairs,
    droppedPairs,
    invertedTotalA: detailA.invertedPairsTotal,
    invertedTotalB: detailB.invertedPairsTotal,
    pairsTruncated: detailA.invertedPairsTotal > detailA.invertedPairs.length || detailB.invertedPairsTotal > detailB.invertedPairs.length,
    positions,
  };
}

/** Inverted pairs keyed by (higher-graded item, lower-graded item), which identifies them across runs. */
function pairMap(detail: QueryDetail): Map<string, PairChange> {
  const itemOfRow = new Map(detail.positions.map((p) => [p.row, p.item]));
  const pairs = new Map<string, PairChange>();
  detail.invertedPairs.forEach((pair: InvertedPair) => {
    const higherGraded = itemOfRow.get(pair.belowRow)!;
    const lowerGraded = itemOfRow.get(pair.aboveRow)!;
    pairs.set(`${higherGraded}\u0000${lowerGraded}`, { higherGraded, lowerGraded, ndcgRecovered: pair.ndcgRecovered });
  });
  return pairs;
}
