/**
 * Convention sensitivity: the headline mean NDCG@k of the same run under each alternative gain, tie and
 * no-relevant convention, one dimension changed at a time. Computed in the same pass as the main metrics,
 * reusing each query's sorted order; only the slots above the cut-off are revisited per variant.
 */
import type { Conventions, GainConvention, NoRelevantPolicy, TieConvention } from '../metrics/conventions';
import { discountTable } from '../metrics/discount';
import { gainFunction, isMonotone, type GainFunction } from '../metrics/gain';
import { idealDcg } from '../metrics/listMetrics';
import { formatGain } from '../metrics/parse';
import type { SensitivityRow } from './types';
import type { GradeIndex } from './grades';
import type { QueryRanking } from './ranking';
import { IdealGains, noRelevantValue, type ConfiguredGain } from './scorer';

const TIES: readonly TieConvention[] = ['average', 'pessimistic', 'optimistic', 'file-order'];
const POLICIES: readonly NoRelevantPolicy[] = ['skip', 'zero', 'one'];

/**
 * Per variant (in the pass's own order), per query: the value added to the variant's mean, NaN when none was
 * (a query with nothing relevant, or an ideal DCG of 0). A value added is a DCG over a positive ideal DCG,
 * both finite (gainLimits.ts keeps every gain's sums finite), so NaN marks nothing else. One column per
 * variant rather than a value and a flag: on 1M queries a flag column per variant was a tenth of the writes.
 */
export interface SensitivityColumns {
  readonly value: readonly Float64Array[];
}

interface Variant {
  readonly gain: GainConvention;
  readonly ties: TieConvention;
  readonly gainSlot: number;
  sum: number;
  counted: number;
  /** Σ weights of the counted queries (= counted when unweighted). */
  weight: number;
}

export class SensitivityPass {
  private readonly gains: GainConvention[] = [];
  private readonly gainFns: GainFunction[] = [];
  private readonly monotone: boolean[] = [];
  private readonly variants: Variant[] = [];
  /** Alternative gains left out, with the reason shown in their row. */
  private readonly unavailable: { gain: GainConvention; why: string }[] = [];
  private readonly ideal = new IdealGains();
  private gainOfRank: Float64Array[] = [];
  /** Per gain, the gain per grade rank of the query being added: this pass's own table, or the scorer's for the configured gain. */
  private tables: Float64Array[] = [];
  private idealOfGain = new Float64Array(0);
  /** The query's DCG under each gain, shared by the tie conventions when no score above the cut-off is tied (NaN: not yet). */
  private dcgOfGain = new Float64Array(0);
  private sortedRanks = new Uint32Array(16);
  /** Gain per rank of the judged set's grades (queries with unretrieved judged items). */
  private judgedTable = new Float64Array(16);
  /** Queries with no relevant item (the policy decides their value). */
  noRelevantQueries = 0;
  /** Their total weight (= noRelevantQueries when unweighted). */
  private noRelevantWeight = 0;
  /** When set, each variant's per-query value is kept too, so ranges scored apart can be summed in query order. */
  private record?: SensitivityColumns;

  constructor(
    private readonly base: Conventions,
    /** The NDCG cut-off this pass scores at (the headline's). */
    readonly k: number,
    /** Why an alternative gain cannot score this data (negative grades, gains beyond a double); undefined when it can. */
    gainProblem: (gain: GainConvention) => string | undefined,
  ) {
    const candidates: GainConvention[] = [base.gain, { kind: 'exponential' }, { kind: 'linear' }];
    const seen = new Set<string>();
    for (const g of candidates) {
      const name = formatGain(g);
      if (seen.has(name)) continue;
      seen.add(name);
      const problem = g === base.gain ? undefined : gainProblem(g);
      if (problem !== undefined) {
        this.unavailable.push({ gain: g, why: problem });
        continue;
      }
      this.gains.push(g);
      this.gainFns.push(gainFunction(g));
      this.monotone.push(isMonotone(g));
      this.gainOfRank.push(new Float64Array(16));
    }
    this.tables = [...this.gainOfRank];
    this.idealOfGain = new Float64Array(this.gains.length);
    this.dcgOfGain = new Float64Array(this.gains.length);
    for (const ties of TIES) this.variants.push({ gain: base.gain, ties, gainSlot: 0, sum: 0, counted: 0, weight: 0 });
    for (let i = 1; i < this.gains.length; i++) {
      this.variants.push({ gain: this.gains[i]!, ties: base.ties, gainSlot: i, sum: 0, counted: 0, weight: 0 });
    }
  }

  get variantCount(): number {
    return this.variants.length;
  }

  /** Each variant's gain and ties in the pass's order, to match the recorded columns of two passes built differently. */
  variantKeys(): string[] {
    return this.variants.map((v) => `${formatGain(v.gain)}|${v.ties}`);
  }

  /** Keeps every later query's variant values in `columns` (indexed by the `query` passed to add). */
  recordInto(columns: SensitivityColumns): void {
    this.record = columns;
  }

  /**
   * Replaces the running sums by sums over recorded columns, added in query order exactly as add() does,
   * so a dump scored in ranges gives bit-identical means.
   */
  sumColumns(columns: SensitivityColumns, noRelevantQueries: number): void {
    this.noRelevantQueries = noRelevantQueries;
    this.noRelevantWeight = noRelevantQueries;
    this.variants.forEach((v, i) => {
      const value = columns.value[i]!;
      let sum = 0;
      let counted = 0;
      for (let q = 0; q < value.length; q++) {
        const x = value[q]!;
        if (x === x) {
          sum += x;
          counted++;
        }
      }
      v.sum = sum;
      v.counted = counted;
      v.weight = counted;
    });
  }

  /**
   * Weighted means Σ w·x / Σ w from recorded columns, as the summary's: queries whose weight is NaN are left
   * out; `relevant` (per query) tells which queries had nothing relevant (they take the policy's value).
   */
  weighColumns(columns: SensitivityColumns, weights: Float64Array, relevant: Uint32Array): void {
    let noRelevant = 0;
    let noRelevantWeight = 0;
    for (let q = 0; q < weights.length; q++) {
      if (relevant[q] === 0 && weights[q] === weights[q]) {
        noRelevant++;
        noRelevantWeight += weights[q]!;
      }
    }
    this.noRelevantQueries = noRelevant;
    this.noRelevantWeight = noRelevantWeight;
    this.variants.forEach((v, i) => {
      const value = columns.value[i]!;
      let sum = 0;
      let counted = 0;
      let weight = 0;
      for (let q = 0; q < value.length; q++) {
        const w = weights[q]!;
        const x = value[q]!;
        if (x === x && w === w) {
          sum += w * x;
          weight += w;
          counted++;
        }
      }
      v.sum = sum;
      v.counted = counted;
      v.weight = weight;
    });
  }

  /**
   * Adds a judged query the run has no row for (missing queries `zero`): 0 under every variant, as in the
   * main means, so the rows under other conventions cover the same queries as the headline.
   */
  addAbsent(query: number): void {
    const record = this.record;
    for (let i = 0; i < this.variants.length; i++) {
      const v = this.variants[i]!;
      v.counted++;
      v.weight++;
      if (record) record.value[i]![query] = 0;
    }
  }

  /**
   * Adds one query; `grades` indexes the ranked (not arranged) order of `ranking`. `idealGrades` are the
   * grades of the whole judged set when it is larger than the list (unretrieved judged items); the ideal
   * DCG is built from them over the list's length plus `ranking.unretrieved`. `configured`, when given, is
   * what the query's scorer already made under the configured gain at this pass's cut-off: its gain per
   * rank of `grades` and its ideal DCG, the very values this pass would compute for that gain (the same
   * gain function, grades and cut-off), so they are taken rather than made again: one of the pass's gains
   * then costs nothing per query.
   */
  add(ranking: QueryRanking, grades: GradeIndex, noRelevant: boolean, query = 0, idealGrades: GradeIndex = grades,
    configured?: ConfiguredGain): void {
    const record = this.record;
    if (noRelevant) {
      if (record) for (let i = 0; i < this.variants.length; i++) record.value[i]![query] = NaN;
      this.noRelevantQueries++;
      this.noRelevantWeight++;
      return;
    }
    const n = ranking.n;
    const d = grades.distinct;
    const tables = this.tables;
    for (let i = 0; i < this.gains.length; i++) {
      if (i === 0 && configured !== undefined) {
        tables[0] = configured.gainOfRank;
        this.idealOfGain[0] = configured.idealDcg;
        continue;
      }
      if (this.gainOfRank[i]!.length < d) this.gainOfRank[i] = new Float64Array(d * 2);
      const table = this.gainOfRank[i]!;
      tables[i] = table;
      for (let r = 0; r < d; r++) table[r] = this.gainFns[i]!(grades.values[r]!);
      if (idealGrades === grades) {
        this.ideal.build(table, grades, this.monotone[i]!);
      } else {
        const jd = idealGrades.distinct;
        if (this.judgedTable.length < jd) this.judgedTable = new Float64Array(jd * 2);
        for (let r = 0; r < jd; r++) this.judgedTable[r] = this.gainFns[i]!(idealGrades.values[r]!);
        this.ideal.build(this.judgedTable, idealGrades, this.monotone[i]!);
      }
      this.idealOfGain[i] = idealDcg(this.ideal.gain, this.ideal.count, this.ideal.distinct, this.k, n + ranking.unretrieved);
    }
    // With no tied scores above the cut-off every tie convention takes the same path: one DCG per gain.
    const untied = this.untiedTop(ranking);
    // A loop, not fill(): a call into the runtime cost more than the few slots.
    for (let i = 0; i < this.gains.length; i++) this.dcgOfGain[i] = NaN;
    for (let i = 0; i < this.variants.length; i++) {
      const v = this.variants[i]!;
      const ideal = this.idealOfGain[v.gainSlot]!;
      if (!(ideal > 0)) {
        if (record) record.value[i]![query] = NaN;
        continue;
      }
      let dcg = untied ? this.dcgOfGain[v.gainSlot]! : NaN;
      if (Number.isNaN(dcg)) {
        dcg = this.dcgUnder(ranking, grades, tables[v.gainSlot]!, v.ties);
        if (untied) this.dcgOfGain[v.gainSlot] = dcg;
      }
      const value = dcg / ideal;
      v.sum += value;
      v.counted++;
      v.weight++;
      if (record) record.value[i]![query] = value;
    }
  }

  /** True when every tie group that starts above the cut-off holds one item (dcgUnder is then the same under every tie convention). */
  private untiedTop(ranking: QueryRanking): boolean {
    const depth = Math.min(this.k, ranking.n);
    const b = ranking.tieBounds;
    for (let g = 0; g < ranking.tieGroups && b[g]! < depth; g++) if (b[g + 1]! - b[g]! !== 1) return false;
    return true;
  }

  /** DCG@k of the ranked list under a tie convention, from the ranked order and its tie groups. */
  private dcgUnder(ranking: QueryRanking, grades: GradeIndex, gainOfRank: Float64Array, ties: TieConvention): number {
    const depth = Math.min(this.k, ranking.n);
    const { discount, cumulative } = discountTable(depth);
    const b = ranking.tieBounds;
    const rank = grades.rank;
    let total = 0;
    for (let g = 0; g < ranking.tieGroups; g++) {
      const s = b[g]!;
      if (s >= depth) break;
      const e = b[g + 1]!;
      if (e - s === 1 || ties === 'file-order') {
        for (let i = s; i < Math.min(e, depth); i++) total += gainOfRank[rank[i]!]! * discount[i]!;
      } else if (ties === 'average') {
        let sum = 0;
        for (let i = s; i < e; i++) sum += gainOfRank[rank[i]!]!;
        total += (sum / (e - s)) * (cumulative[Math.min(e, depth)]! - cumulative[s]!);
      } else {
        if (this.sortedRanks.length < e - s) this.sortedRanks = new Uint32Array((e - s) * 2);
        const sorted = this.sortedRanks.subarray(0, e - s);
        sorted.set(rank.subarray(s, e));
        sorted.sort(); // grade rank ascending = pessimistic order
        const last = Math.min(e, depth);
        for (let i = s; i < last; i++) {
          const r = ties === 'pessimistic' ? sorted[i - s]! : sorted[e - 1 - i]!;
          total += gainOfRank[r]! * discount[i]!;
        }
      }
    }
    return total;
  }

  rows(): SensitivityRow[] {
    const base = this.base;
    const mark = (configured: boolean) => (configured ? ' (as configured)' : '');
    const rowOf = (v: Variant, policy: NoRelevantPolicy, label: string): SensitivityRow => {
      const extra = policy === 'skip' ? 0 : this.noRelevantQueries;
      const extraWeight = policy === 'skip' ? 0 : this.noRelevantWeight;
      const counted = v.counted + extra;
      const total = v.weight + extraWeight;
      const sum = v.sum + (policy === 'skip' ? 0 : noRelevantValue(policy) * extraWeight);
      return {
        label,
        conventions: { ...base, gain: v.gain, ties: v.ties, noRelevant: policy },
        mean: total > 0 ? sum / total : NaN,
        counted,
      };
    };
    const out: SensitivityRow[] = [];
    const configured = this.variants.find((v) => v.ties === base.ties && v.gainSlot === 0)!;
    out.push(rowOf(configured, base.noRelevant, `gain: ${formatGain(base.gain)}${mark(true)}`));
    for (const v of this.variants) {
      if (v.gainSlot !== 0) out.push(rowOf(v, base.noRelevant, `gain: ${formatGain(v.gain)}`));
    }
    for (const u of this.unavailable) {
      out.push({
        label: `gain: ${formatGain(u.gain)}`,
        conventions: { ...base, gain: u.gain },
        mean: NaN,
        counted: 0,
        unavailable: `not computed: ${u.why}`,
      });
    }
    for (const v of this.variants) {
      if (v.gainSlot === 0) out.push(rowOf(v, base.noRelevant, `ties: ${v.ties}${mark(v.ties === base.ties)}`));
    }
    for (const p of POLICIES) out.push(rowOf(configured, p, `no relevant: ${p}${mark(p === base.noRelevant)}`));
    return out;
  }
}
