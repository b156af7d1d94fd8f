/**
 * Score diagnostics: do the grades separate in score (the distribution of scores per grade), and where
 * in the list is the DCG lost (each position's contribution, averaged over queries, against the ideal's).
 */
import { quantileSorted } from '../compare/bootstrap';
import type { Conventions } from '../metrics/conventions';
import type { MetricSpec } from '../metrics/registry';
import { discountTable } from '../metrics/discount';
import type { RankedDump } from '../model/dump';
import { groupByQuery, type QueryGroups } from '../model/groups';
import { checkConventions } from './evaluate';
import { QueryRanking, SeenItems } from './ranking';
import { headlineCutoff, QueryScorer } from './scorer';

export interface GradeScores {
  /** The grade; null for rows without a judgment. */
  readonly grade: number | null;
  /** Rows with a finite score. */
  readonly count: number;
  /** Rows of this grade whose score is missing or not finite (left out of the statistics). */
  readonly missing: number;
  readonly mean: number;
  readonly min: number;
  /** Quartiles, type-7 (linear interpolation between order statistics; numpy.percentile's default). */
  readonly q1: number;
  readonly median: number;
  readonly q3: number;
  readonly max: number;
  /** Rows per histogram bin (bins shared by every grade, see ScoresByGrade.edges). */
  readonly bins: readonly number[];
}

export interface ScoresByGrade {
  /** bins + 1 equal-width edges from the lowest to the highest finite score; the last bin includes its right edge. */
  readonly edges: readonly number[];
  /** Ascending grade, unjudged rows last. */
  readonly grades: readonly GradeScores[];
}

/**
 * The score distribution of each grade over `rows` (default every row of the dump, repeats included: this
 * describes the file). One query's rows show whether its grades separate; all rows, whether the model's
 * scores do overall (scores of different queries may sit on different scales).
 */
export function scoresByGrade(dump: RankedDump, rows?: ArrayLike<number>, binCount = 20): ScoresByGrade {
  const count = rows ? rows.length : dump.rowCount;
  const byGrade = new Map<number, number[]>();
  const missingByGrade = new Map<number, number>();
  let low = Infinity;
  let high = -Infinity;
  for (let k = 0; k < count; k++) {
    const r = rows ? rows[k]! : k;
    const label = dump.label[r]!;
    const grade = label === label ? label : NaN;
    const key = grade === grade ? grade : Infinity; // unjudged sort last
    const score = dump.score[r]!;
    if (!Number.isFinite(score)) {
      missingByGrade.set(key, (missingByGrade.get(key) ?? 0) + 1);
      if (!byGrade.has(key)) byGrade.set(key, []);
      continue;
    }
    let list = byGrade.get(key);
    if (!list) byGrade.set(key, (list = []));
    list.push(score);
    if (score < low) low = score;
    if (score > high) high = score;
  }
  const edges: number[] = [];
  if (low <= high) {
    const width = (high - low) / binCount;
    for (let b = 0; b <= binCount; b++) edges.push(b === binCount ? high : low + b * width);
  }
  const grades = [...byGrade.keys()].sort((a, b) => a - b).map((key): GradeScores => {
    const scores = Float64Array.from(byGrade.get(key)!).sort();
    const bins = new Array<number>(edges.length > 0 ? binCount : 0).fill(0);
    let sum = 0;
    for (const s of scores) {
      sum += s;
      if (bins.length > 0) bins[binOf(s, low, high, binCount)]!++;
    }
    const n = scores.length;
    return {
      grade: key === Infinity ? null : key,
      count: n,
      missing: missingByGrade.get(key) ?? 0,
      mean: n > 0 ? sum / n : NaN,
      min: n > 0 ? scores[0]! : NaN,
      q1: quantileSorted(scores, 0.25),
      median: quantileSorted(scores, 0.5),
      q3: quantileSorted(scores, 0.75),
      max: n > 0 ? scores[n - 1]! : NaN,
      bins,
    };
  });
  return { edges, grades };
}

/** numpy.histogram's rule: half-open bins [e_b, e_b+1), the last one closed. */
function binOf(score: number, low: number, high: number, binCount: number): number {
  if (high === low) return 0;
  return Math.min(binCount - 1, Math.floor(((score - low) / (high - low)) * binCount));
}

export interface DcgByPosition {
  /** Positions listed one by one (1..depth); later positions are summed into the last entry. */
  readonly depth: number;
  /**
   * Mean over queries of contribution_i / ideal DCG@k: position i's share of the query's ideal DCG that the
   * model's list earned; depth + 1 entries, the last for positions beyond `depth`. They sum to the mean NDCG@k
   * over the same queries.
   */
  readonly predicted: readonly number[];
  /** The same for the ideal order; sums to 1. The gap at a position is the NDCG lost there. */
  readonly ideal: readonly number[];
  /** Queries averaged (those with an ideal DCG above 0). */
  readonly queries: number;
  /** The headline cut-off k the contributions are taken at. */
  readonly k: number;
}

export interface DcgByPositionOptions {
  groups?: QueryGroups;
  /** Positions shown one by one (default: the cut-off k, at most 20). */
  depth?: number;
  /** Query weights (by query id): weighted means as in the summary; queries with a NaN weight are left out. */
  weights?: Float64Array;
}

/**
 * Each position's DCG@k contribution (gain × the discount applied under the tie convention, as in the query
 * detail), divided by the query's ideal DCG@k and averaged over queries, beside the ideal order's.
 */
export function dcgByPosition(dump: RankedDump, metrics: readonly MetricSpec[], conventions: Conventions,
  options: DcgByPositionOptions = {}): DcgByPosition {
  const k = headlineCutoff(metrics);
  const depth = Math.max(1, Math.floor(options.depth ?? Math.min(Number.isFinite(k) ? k : 20, 20)));
  const gmax = checkConventions(dump, metrics, conventions);
  const groups = options.groups ?? groupByQuery(dump);
  const ranking = new QueryRanking();
  const seen = new SeenItems();
  const scorer = new QueryScorer(conventions, metrics, gmax, k);
  const predicted = new Float64Array(depth + 1);
  const ideal = new Float64Array(depth + 1);
  let total = 0;
  let queries = 0;
  for (let q = 0; q + 1 < groups.start.length; q++) {
    const weight = options.weights ? options.weights[q]! : 1;
    if (!(weight === weight)) continue;
    ranking.load(dump, groups.rowsOfQuery, groups.start[q]!, groups.start[q + 1]!, seen);
    scorer.score(ranking);
    const idcg = scorer.idealDcgHeadline;
    if (!(idcg > 0)) continue;
    const n = ranking.n;
    const scale = weight / idcg;
    for (let i = 0; i < n; i++) predicted[Math.min(i, depth)] += scorer.gain[i]! * scorer.headlineDiscount[i]! * scale;
    const slots = Math.min(n, k);
    const { discount } = discountTable(slots);
    let position = 0;
    for (let g = 0; g < scorer.ideal.distinct && position < slots; g++) {
      for (let c = 0; c < scorer.ideal.count[g]! && position < slots; c++, position++) {
        ideal[Math.min(position, depth)] += scorer.ideal.gain[g]! * discount[position]! * scale;
      }
    }
    total += weight;
    queries++;
  }
  const mean = (x: Float64Array) => Array.from(x, (v) => (total > 0 ? v / total : NaN));
  return { depth, predicted: mean(predicted), ideal: mean(ideal), queries, k };
}
