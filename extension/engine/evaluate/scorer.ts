/**
 * Scores one loaded query under one set of conventions: every requested metric, the pair measures and the
 * headline NDCG parts. Shared by evaluate() (all queries) and queryDetail() (one query).
 *
 * Judged items the run never retrieved (`ranking.unretrieved`, labels from a judgments file) enter what
 * depends on the judged set: the ideal ranking (NDCG, the inversion cost's normaliser, over the list's
 * length plus theirs), the relevant count (recall's and AP's denominator) and the no-relevant test. What
 * describes the list itself stays over the retrieved items: DCG, ERR, precision@k (divided by k), RR, RBP and
 * its residual, Kendall's tau and the inversions (pairs of retrieved items). Common practice for judged
 * collections.
 */
import type { Conventions } from '../metrics/conventions';
import type { MetricSpec } from '../metrics/registry';
import { discountTable } from '../metrics/discount';
import { ErrCalculator, errStopProbability } from '../metrics/err';
import { gainFunction, isMonotone, type GainFunction } from '../metrics/gain';
import type { MetricContext, MetricDefinition } from '../metrics/definition';
import { dcg, idealDcg, type GroupedList } from '../metrics/listMetrics';
import { PairCounter, type PairInput, type PairResult } from '../metrics/pairs';
import { metricDefinition } from '../metrics/registry';
import { GradeIndex } from './grades';
import type { QueryRanking } from './ranking';

/** The cut-off of the first NDCG metric requested (whole list when it has none), else 10. */
export function headlineCutoff(metrics: readonly MetricSpec[]): number {
  const first = metrics.find((m) => m.name === 'ndcg');
  return first ? (first.k ?? Infinity) : 10;
}

/** Value of a metric the registry marks normalised, for a query with no relevant item under the policy (NaN = skipped). */
export function noRelevantValue(policy: Conventions['noRelevant']): number {
  return policy === 'zero' ? 0 : policy === 'one' ? 1 : NaN;
}

/** The configured gain's gain per grade rank and ideal DCG of one query, as its scorer made them (SensitivityPass.add). */
export interface ConfiguredGain {
  readonly gainOfRank: Float64Array;
  readonly idealDcg: number;
}

/** Ideal order gains: distinct gains, descending, with their item counts. */
export class IdealGains {
  gain = new Float64Array(16);
  count = new Uint32Array(16);
  distinct = 0;
  private ranks = new Uint32Array(16);

  build(gainOfRank: Float64Array, grades: GradeIndex, monotone: boolean): void {
    const d = grades.distinct;
    if (this.gain.length < d) {
      this.gain = new Float64Array(d * 2);
      this.count = new Uint32Array(d * 2);
      this.ranks = new Uint32Array(d * 2);
    }
    for (let i = 0; i < d; i++) this.ranks[i] = d - 1 - i;
    if (!monotone) {
      // Insertion sort of grade ranks by gain, descending (few distinct grades in practice).
      const r = this.ranks;
      for (let i = 1; i < d; i++) {
        const v = r[i]!;
        let j = i - 1;
        while (j >= 0 && gainOfRank[r[j]!]! < gainOfRank[v]!) {
          r[j + 1] = r[j]!;
          j--;
        }
        r[j + 1] = v;
      }
    }
    for (let i = 0; i < d; i++) {
      this.gain[i] = gainOfRank[this.ranks[i]!]!;
      this.count[i] = grades.count[this.ranks[i]!]!;
    }
    this.distinct = d;
  }
}

/** Scores one query at a time; also the MetricContext the registry's compute functions read. */
export class QueryScorer implements MetricContext {
  readonly headlineK: number;
  /** Distinct grades of the ranked list (pairs, DCG, ERR). */
  readonly grades = new GradeIndex();
  /**
   * Distinct grades of every judged item of the query: the list's plus those it never retrieved. Built
   * only for a query with unretrieved judged items; `idealGrades` is this or `grades`.
   */
  readonly judgedGrades = new GradeIndex();
  idealGrades: GradeIndex = this.grades;
  /** Items the ideal ranking draws from: the list's length plus the unretrieved judged items. */
  idealN = 0;
  readonly ideal = new IdealGains();
  /** Per metric, same order as `metrics`. */
  readonly values: Float64Array;
  rbpResidual = NaN;
  relevant = 0;
  noRelevant = false;
  dcgHeadline = 0;
  idealDcgHeadline = 0;
  readonly pairs: PairResult = { tau: NaN, discordant: 0, swapGain: 0 };
  /** Gain per arranged slot and grade rank per arranged slot. */
  gain = new Float64Array(16);
  arrangedRank = new Uint32Array(16);
  headlineDiscount = new Float64Array(16);
  gainOfRank = new Float64Array(16);
  /** Gain per rank of `judgedGrades`. */
  private judgedGainOfRank = new Float64Array(16);
  private judgedScratch = new Float64Array(16);

  readonly err = new ErrCalculator();
  private readonly configured: { gainOfRank: Float64Array; idealDcg: number } = { gainOfRank: this.gainOfRank, idealDcg: 0 };
  readonly second = new Float64Array(2);
  /** The arranged list of the query being scored. */
  list!: GroupedList;

  private readonly gainOf: GainFunction;
  private readonly monotone: boolean;
  private readonly stopOf: (grade: number) => number;
  /** ERR's stop probability per arranged slot, filled on first use per query. */
  private stop = new Float64Array(16);
  private stopOfRank = new Float64Array(16);
  private stopsReady = false;
  private readonly pairCounter = new PairCounter();
  /** Reused for every query. */
  private readonly pairInput: { -readonly [K in keyof PairInput]: PairInput[K] };
  private readonly definitions: readonly MetricDefinition[];
  /** The first metric with a second figure (RBP's residual); -1 when none. */
  private readonly residualIndex: number;

  constructor(
    readonly conventions: Conventions,
    readonly metrics: readonly MetricSpec[],
    /** ERR's g_max. */
    gmax: number,
    /** Cut-off of the headline NDCG (inversion cost, sensitivity); defaults to headlineCutoff(metrics). */
    headlineK?: number,
  ) {
    this.headlineK = headlineK ?? headlineCutoff(metrics);
    this.values = new Float64Array(metrics.length);
    this.gainOf = gainFunction(conventions.gain);
    this.monotone = isMonotone(conventions.gain);
    this.stopOf = errStopProbability(gmax);
    this.definitions = metrics.map((m) => metricDefinition(m.name));
    this.residualIndex = this.definitions.findIndex((d) => d.residual === true);
    this.pairInput = {
      n: 0,
      rank: this.arrangedRank,
      distinct: 0,
      rankCount: this.grades.count,
      classBounds: new Uint32Array(1),
      classes: 0,
      gain: this.gain,
      discount: this.headlineDiscount,
      gainOfRank: this.gainOfRank,
      gainIncreasing: this.monotone,
    };
  }

  score(ranking: QueryRanking): void {
    const c = this.conventions;
    ranking.arrange(c.ties);
    const list = ranking.arranged;
    const n = list.n;
    const grades = this.grades;
    grades.build(ranking.grade, n);
    this.ensure(n, grades.distinct);
    const d = grades.distinct;
    for (let r = 0; r < d; r++) this.gainOfRank[r] = this.gainOf(grades.values[r]!);
    const order = ranking.order;
    for (let i = 0; i < n; i++) {
      const r = grades.rank[order[i]!]!;
      this.arrangedRank[i] = r;
      this.gain[i] = this.gainOfRank[r]!;
    }
    this.stopsReady = false;
    this.list = list;
    this.buildIdeal(ranking);
    // Relevant items of the whole judged set: recall and AP divide by it, and a query whose only relevant
    // items were never retrieved is not a no-relevant query (it scores 0, common practice).
    const relevant = this.idealGrades.atLeast(c.relevantFrom);
    this.relevant = relevant;
    this.noRelevant = relevant === 0;
    const skipAll = this.noRelevant && c.noRelevant === 'skip';
    const policyValue = noRelevantValue(c.noRelevant);
    // The pair pass first: tau is read from it like any other metric.
    this.headline(ranking);

    for (let m = 0; m < this.metrics.length; m++) {
      const definition = this.definitions[m]!;
      const v = definition.normalised && this.noRelevant ? policyValue : definition.compute(this, this.metrics[m]!.k ?? Infinity);
      if (m === this.residualIndex) this.rbpResidual = this.second[1]!;
      this.values[m] = skipAll ? NaN : v;
    }
  }

  idealDcg(k: number): number {
    return idealDcg(this.ideal.gain, this.ideal.count, this.ideal.distinct, k, this.idealN);
  }

  errStops(): Float64Array {
    if (!this.stopsReady) {
      const d = this.grades.distinct;
      for (let r = 0; r < d; r++) this.stopOfRank[r] = this.stopOf(this.grades.values[r]!);
      for (let i = 0; i < this.list.n; i++) this.stop[i] = this.stopOfRank[this.arrangedRank[i]!]!;
      this.stopsReady = true;
    }
    return this.stop;
  }

  /** Headline NDCG parts and the pair pass (tau, inversions, Σ|ΔNDCG|). */
  private headline(ranking: QueryRanking): void {
    const list = ranking.arranged;
    const n = list.n;
    const hk = this.headlineK;
    const depth = Math.min(n, hk);
    const { discount, cumulative } = discountTable(depth);
    const applied = this.headlineDiscount;
    const b = list.bounds;
    for (let g = 0; g < list.groups; g++) {
      const s = b[g]!;
      const e = b[g + 1]!;
      if (e - s === 1) {
        applied[s] = s < depth ? discount[s]! : 0;
        continue;
      }
      const mean = s < depth ? (cumulative[Math.min(e, depth)]! - cumulative[s]!) / (e - s) : 0;
      for (let i = s; i < e; i++) applied[i] = mean;
    }
    this.dcgHeadline = dcg(list, this.gain, hk);
    this.idealDcgHeadline = this.idealDcg(hk);
    const input = this.pairInput;
    input.n = n;
    input.rank = this.arrangedRank;
    input.distinct = this.grades.distinct;
    input.rankCount = this.grades.count;
    input.classBounds = ranking.classBounds;
    input.classes = ranking.classes;
    input.gain = this.gain;
    input.discount = applied;
    input.gainOfRank = this.gainOfRank;
    this.pairCounter.compute(input, this.pairs);
  }

  /**
   * The ideal order's gains. Without unretrieved judged items they are the list's own grades (the common
   * case, no extra work); otherwise the list's grades (unjudged rows as 0) plus the unretrieved ones.
   */
  private buildIdeal(ranking: QueryRanking): void {
    const n = ranking.n;
    const u = ranking.unretrieved;
    this.idealN = n + u;
    if (u === 0) {
      this.idealGrades = this.grades;
      this.ideal.build(this.gainOfRank, this.grades, this.monotone);
      return;
    }
    if (this.judgedScratch.length < n + u) this.judgedScratch = new Float64Array((n + u) * 2);
    const all = this.judgedScratch;
    all.set(ranking.grade.subarray(0, n), 0);
    all.set(ranking.unretrievedGrade.subarray(0, u), n);
    const judged = this.judgedGrades;
    judged.build(all, n + u);
    if (this.judgedGainOfRank.length < judged.distinct) this.judgedGainOfRank = new Float64Array(judged.distinct * 2);
    for (let r = 0; r < judged.distinct; r++) this.judgedGainOfRank[r] = this.gainOf(judged.values[r]!);
    this.idealGrades = judged;
    this.ideal.build(this.judgedGainOfRank, judged, this.monotone);
  }

  /**
   * The query's gain per rank of `grades` and ideal DCG at the headline cut-off, under the configured gain:
   * what the sensitivity pass needs for that gain (SensitivityPass.add). Valid until the next `score`.
   */
  get configuredGain(): ConfiguredGain {
    const c = this.configured;
    c.gainOfRank = this.gainOfRank;
    c.idealDcg = this.idealDcgHeadline;
    return c;
  }

  /** Σ over inverted pairs of |ΔNDCG@headline| (0 when the ideal DCG is 0). */
  get inversionCost(): number {
    return this.idealDcgHeadline > 0 ? this.pairs.swapGain / this.idealDcgHeadline : 0;
  }

  private ensure(n: number, distinct: number): void {
    if (this.gain.length < n) {
      const size = Math.max(n, this.gain.length * 2);
      this.gain = new Float64Array(size);
      this.arrangedRank = new Uint32Array(size);
      this.headlineDiscount = new Float64Array(size);
      this.stop = new Float64Array(size);
    }
    if (this.gainOfRank.length < distinct) {
      this.gainOfRank = new Float64Array(Math.max(distinct, this.gainOfRank.length * 2));
      this.stopOfRank = new Float64Array(this.gainOfRank.length);
    }
  }
}
