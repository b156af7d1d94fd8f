/**
 * The metric registry: one entry per metric, and everything else derives from it — key parsing, the
 * scorer's dispatch, the no-relevant policy, warnings, labels and tooltips, the README's metric table
 * and the reference tests (test/reference/slowMetrics.ts must hold a slow reference per entry).
 *
 * Adding a metric: one entry here (compute from the MetricContext), one slow reference, then
 * `node test/support/metric-table.mjs --write` to refresh the README table.
 */
import { dcg, averagePrecision, rankBiasedPrecision, reciprocalRank, relevantInTop } from './listMetrics';
import { DEFAULT_METRIC_KEYS } from '../../presentation/defaults';
import type { ConventionNeed, MetricDefinition } from './definition';

const TIES_AVERAGE = 'ties: exact expectation over every order of each tied group (McSherry & Najork 2008)';

export const METRIC_DEFINITIONS = [
  {
    name: 'ndcg', cutoff: 'optional', normalised: true, label: 'NDCG', range: [0, 1],
    explain: (depth) => `DCG over ${depth} divided by the DCG of the ideal order over ${depth}. DCG = Σ gain(grade) / log2(position + 1) (Järvelin & Kekäläinen 2002).`,
    formula: 'DCG@k / ideal DCG@k, the ideal built from every judged item of the query',
    reference: 'Järvelin & Kekäläinen 2002',
    ties: `${TIES_AVERAGE}; undefined (no value) when the relevant items all have gain 0`,
    needs: ['gain', 'relevantFrom', 'noRelevant'],
    undefinedWhen: 'their ideal DCG is not above 0 (the gain convention gives their relevant items no positive gain)',
    compute: (c, k) => {
      const ideal = c.idealDcg(k);
      // A query with relevant items but an ideal DCG of 0 (a gain map giving them 0) has no defined NDCG.
      return ideal > 0 ? dcg(c.list, c.gain, k) / ideal : NaN;
    },
  },
  {
    name: 'dcg', cutoff: 'optional', normalised: false, label: 'DCG',
    explain: (depth) => `Σ gain(grade) / log2(position + 1) over ${depth}, not normalised.`,
    formula: 'Σ_{i≤k} gain(g_i) / log2(i+1)',
    reference: 'Järvelin & Kekäläinen 2002',
    ties: `${TIES_AVERAGE}; empty list 0`,
    needs: ['gain'],
    compute: (c, k) => dcg(c.list, c.gain, k),
  },
  {
    name: 'err', cutoff: 'optional', normalised: false, label: 'ERR', range: [0, 1],
    explain: (depth) => `Expected reciprocal rank over ${depth}: Σ (1/r) · R_r · Π_{i<r}(1 − R_i), R = (2^g − 1) / 2^gmax (Chapelle et al. 2009).`,
    formula: 'Σ_{r≤k} (1/r) R_r Π_{i<r}(1−R_i), R = (2^g−1)/2^gmax',
    reference: 'Chapelle, Metzler, Zhang & Grinspan 2009',
    ties: `${TIES_AVERAGE}; empty list 0`,
    needs: ['maxGrade'],
    compute: (c, k) => c.err.compute(c.errStops(), c.list.bounds, c.list.groups, c.list.n, k),
  },
  {
    name: 'p', cutoff: 'optional', normalised: false, label: 'P', range: [0, 1],
    explain: (depth) => `Share of ${depth} that is relevant (grade ≥ the relevance threshold).`,
    formula: 'relevant items in the top k / k (k = list length without a cut-off)',
    reference: 'common practice',
    ties: `${TIES_AVERAGE}; divided by k even when the list is shorter`,
    needs: ['relevantFrom'],
    compute: (c, k) => relevantInTop(c.list, c.conventions.relevantFrom, k) / (k === Infinity ? Math.max(c.list.n, 1) : k),
  },
  {
    name: 'r', cutoff: 'optional', normalised: true, label: 'R', range: [0, 1],
    explain: (depth) => `Share of the query's relevant items found in ${depth}.`,
    formula: 'relevant items in the top k / all relevant items of the query',
    reference: 'common practice',
    ties: TIES_AVERAGE,
    needs: ['relevantFrom', 'noRelevant'],
    compute: (c, k) => relevantInTop(c.list, c.conventions.relevantFrom, k) / c.relevant,
  },
  {
    name: 'ap', cutoff: 'optional', normalised: true, label: 'AP', range: [0, 1],
    explain: (depth) => `Average precision over ${depth}: Σ precision at each relevant position, divided by min(k, relevant items of the query).`,
    formula: 'Σ_{i≤k, item i relevant} P@i / min(k, R), R = relevant items of the query (unretrieved count 0)',
    reference: 'common practice (denominator min(k, R): a top k of only relevant items scores 1)',
    ties: TIES_AVERAGE,
    needs: ['relevantFrom', 'noRelevant'],
    note: (key, k) =>
      k === undefined ? undefined : `${key} divides the summed precision by min(${k}, relevant items of the query), so a top ${k} of only relevant items scores 1.`,
    compute: (c, k) => averagePrecision(c.list, c.conventions.relevantFrom, k, c.relevant),
  },
  {
    name: 'rr', cutoff: 'optional', normalised: true, label: 'RR', range: [0, 1],
    explain: (depth) => `Reciprocal rank: 1 / position of the first relevant item in ${depth} (0 when none is ranked there).`,
    formula: '1 / position of the first relevant item (0 if none in the top k)',
    reference: 'common practice',
    ties: TIES_AVERAGE,
    needs: ['relevantFrom', 'noRelevant'],
    compute: (c, k) => reciprocalRank(c.list, c.conventions.relevantFrom, k),
  },
  {
    name: 'rbp', cutoff: 'optional', cutoffWord: 'depth', normalised: false, label: 'RBP', residual: true, range: [0, 1],
    explain: (depth) => `Rank-biased precision over ${depth}: (1 − p) · Σ rel_i · p^(i−1), p = the persistence (Moffat & Zobel 2008).`,
    formula: '(1−p) Σ r_i p^{i−1}, binary relevance; `rbp_residual` = p^d plus the weight of unjudged items',
    reference: 'Moffat & Zobel 2008',
    ties: `${TIES_AVERAGE}; empty list 0 with residual 1`,
    needs: ['relevantFrom', 'rbpPersistence'],
    compute: (c, k) => {
      rankBiasedPrecision(c.list, c.conventions.relevantFrom, c.conventions.rbpPersistence, k, c.second);
      return c.second[0]!;
    },
  },
  {
    name: 'tau', cutoff: 'none', normalised: false, label: "Kendall's τ", pairMeasure: true, range: [-1, 1],
    explain: () => `Kendall's tau between the order by score and the order by grade (1 = same order, −1 = reversed).`,
    formula: "Kendall's tau-b between scores and grades; `inversions` = pairs with a lower score but a higher grade",
    reference: 'Kendall 1945',
    ties: 'tied scores are ties of tau-b; undefined when all scores or all grades are equal',
    needs: [],
    compute: (c) => c.pairs.tau,
  },
  {
    name: 'hit', cutoff: 'optional', normalised: true, label: 'Hit', range: [0, 1],
    explain: (depth) => `1 when ${depth} holds a relevant item, else 0.`,
    formula: '1 if any relevant item is in the top k, else 0',
    reference: 'common practice',
    ties: `${TIES_AVERAGE}: 1 − C(m−r, t) / C(m, t) for the tied group of m items (r relevant) cut by k after t slots`,
    needs: ['relevantFrom', 'noRelevant'],
    compute: ({ list, conventions }, k) => {
      const depth = Math.min(k, list.n);
      const b = list.bounds;
      for (let g = 0; g < list.groups && b[g]! < depth; g++) {
        const s = b[g]!;
        const m = b[g + 1]! - s;
        let r = 0;
        for (let i = s; i < s + m; i++) if (list.grade[i]! >= conventions.relevantFrom) r++;
        if (r === 0) continue;
        const inside = Math.min(m, depth - s);
        // P(no relevant item on the `inside` slots) = C(m−r, inside) / C(m, inside) = Π_{i<inside} (m−r−i)/(m−i).
        let none = 1;
        for (let i = 0; i < inside && none > 0; i++) none *= Math.max(0, m - r - i) / (m - i);
        return 1 - none;
      }
      return 0;
    },
  },
  {
    name: 'judged', cutoff: 'optional', normalised: false, label: 'Judged', range: [0, 1],
    explain: (depth) => `Share of ${depth} (or of the whole list when shorter) holding an item with a judgment.`,
    formula: 'judged items in the top min(k, list length) / min(k, list length); empty list 0',
    reference: 'common practice',
    ties: `${TIES_AVERAGE}: each slot of a tied group carries the group's judged share`,
    needs: [],
    compute: ({ list }, k) => {
      const depth = Math.min(k, list.n);
      if (depth === 0) return 0;
      const b = list.bounds;
      let judged = 0;
      for (let g = 0; g < list.groups && b[g]! < depth; g++) {
        const s = b[g]!;
        const m = b[g + 1]! - s;
        let unjudged = 0;
        for (let i = s; i < s + m; i++) unjudged += list.unjudged[i]!;
        judged += ((Math.min(m, depth - s)) * (m - unjudged)) / m;
      }
      return judged / depth;
    },
  },
] as const satisfies readonly MetricDefinition[];

/** Metric names as users write them, before any `@k`. */
export type MetricName = (typeof METRIC_DEFINITIONS)[number]['name'];

export interface MetricSpec {
  readonly name: MetricName;
  /** Cut-off depth; undefined means the whole list. */
  readonly k?: number;
  /** The key used in outputs, exactly as written: `ndcg@10`, `ap`, ... */
  readonly key: string;
}

const BY_NAME: ReadonlyMap<string, MetricDefinition> = new Map(METRIC_DEFINITIONS.map((d) => [d.name, d]));

export function isMetricName(name: string): name is MetricName {
  return BY_NAME.has(name);
}

export function metricDefinition(name: MetricName): MetricDefinition {
  return BY_NAME.get(name)!;
}

/** "ndcg@10" → NDCG's definition and k = 10; undefined for a key that is no metric (e.g. "rbp_residual"). */
export function definitionOfKey(key: string): { definition: MetricDefinition; k: number | undefined } | undefined {
  const m = /^([a-z]+)(?:@(\d+))?$/.exec(key.toLowerCase());
  const definition = m ? BY_NAME.get(m[1]!) : undefined;
  if (!m || !definition) return undefined;
  return { definition, k: m[2] === undefined ? undefined : Number(m[2]) };
}

/** The one default metric list of the command line and the editor, comma-separated; the first is the headline. */
export const DEFAULT_METRICS = DEFAULT_METRIC_KEYS.join(',');

/** "ndcg@k, dcg@k, …, tau" for messages and help: every metric's key syntax. */
export function metricSyntax(): string {
  return METRIC_DEFINITIONS.map((d: MetricDefinition) =>
    d.cutoff === 'none' ? d.name : `${d.name} or ${d.name}@${d.cutoffWord ?? 'k'}`).join(', ');
}

/** Whether any of the metrics depends on the convention (e.g. 'maxGrade': ERR's g_max must be known). */
export function anyNeeds(metrics: readonly MetricSpec[], need: ConventionNeed): boolean {
  return metrics.some((m) => metricDefinition(m.name).needs.includes(need));
}

/** The values a metric of this key can take; undefined when unbounded (DCG). */
export function metricRange(spec: MetricSpec): readonly [number, number] | undefined {
  return metricDefinition(spec.name).range;
}

/** Index of the first metric with a second figure (RBP's residual), -1 when none; only its figure is kept. */
export function residualMetricIndex(metrics: readonly MetricSpec[]): number {
  return metrics.findIndex((m) => metricDefinition(m.name).residual === true);
}

/** Whether the metric is a pair measure, followed by the inversion count in reports. */
export function isPairMeasure(spec: MetricSpec): boolean {
  return metricDefinition(spec.name).pairMeasure === true;
}

/** 'ndcg@10' → 'NDCG@10', 'tau' → "Kendall's τ"; a key that is no metric is returned as it is. */
export function metricLabel(key: string): string {
  const found = definitionOfKey(key);
  if (!found) return key;
  return found.k === undefined ? found.definition.label : `${found.definition.label}@${found.k}`;
}

/** How the metric of `key` is computed, in one or two sentences (tooltips); a plain note for unknown keys. */
export function explainMetricKey(key: string): string {
  const found = definitionOfKey(key);
  if (!found) return `Metric '${key}' (no description available).`;
  return found.definition.explain(found.k === undefined ? 'the whole list' : `the top ${found.k}`);
}
