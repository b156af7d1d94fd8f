/**
 * Per-query metric expressions, written once for both dialects as sums of per-row terms.
 *
 * Each dialect first gives every ranked row these fields (see duckdb.ts / clickhouse.ts):
 *   pos   1-based position in the ranked list (within a tied group under `average`: file order)
 *   s     items before the row's group (0-based start of the group)
 *   m     size of the row's group (1 unless ties are `average` and the score is tied)
 *   r     relevant items in the group;  bef  relevant items in earlier groups
 *   gsum  summed gain of the group;     usum unjudged items in the group
 *   rel   1 when the row is relevant (grade >= relevant-from)
 *   igain, ipos  a gain of the ideal order and its 1-based position (the query's gains sorted descending)
 *   err_r ERR's stop probability (2^g − 1)/2^gmax;  surv  Π(1 − err_r) over earlier positions
 * Group formulas are those of metrics/listMetrics.ts (McSherry & Najork 2008 for ties): a sum over the
 * group's slots s+1..s+m equals a sum over its rows at their positions, so every group formula becomes a
 * plain per-row sum. Without `average` ties every group has one row and the same terms give the plain values.
 */
import type { Conventions } from '../metrics/conventions';
import type { MetricSpec } from '../metrics/registry';

export type RowField = 'pos' | 's' | 'm' | 'r' | 'bef' | 'gsum' | 'usum' | 'rel' | 'igain' | 'ipos' | 'err_r' | 'surv';

/** How a dialect sums row terms per query and spells the few functions that differ. */
export interface TermDialect {
  /** A row field inside a summed term. */
  readonly field: (name: RowField) => string;
  /** Sum of a per-row term over the query's rows. */
  readonly sum: (term: string) => string;
  /** Items of the query (after dropping repeated rows), as a double (ClickHouse's least() will not mix types). */
  readonly items: string;
  readonly nan: string;
}

/** A number as an SQL literal of type double. */
export function literal(x: number): string {
  if (!Number.isFinite(x)) throw new Error(`no SQL literal for ${x}`);
  const text = String(x);
  return /[.eE]/.test(text) ? text : `${text}.0`;
}

/** The per-query SQL expressions of every metric column (see request.ts metricColumns), in order. */
export function metricExpressions(d: TermDialect, metrics: readonly MetricSpec[], c: Conventions): string[] {
  const f = d.field;
  const relevantCount = d.sum(f('rel'));
  const noRelevant = `${relevantCount} = 0`;
  const policy = c.noRelevant === 'zero' ? '0.0' : c.noRelevant === 'one' ? '1.0' : d.nan;
  const within = (k: number | undefined, position: string) => (k === undefined ? '1 = 1' : `${position} <= ${k}`);
  // 1 / log2(i + 1): the logarithmic discount (Järvelin & Kekäläinen 2002, common practice).
  const discount = (position: string) => `(1.0 / log2(${position} + 1.0))`;
  const share = `(${f('r')} / ${f('m')})`;
  const dcg = (k?: number) => d.sum(`CASE WHEN ${within(k, f('pos'))} THEN ${f('gsum')} / ${f('m')} * ${discount(f('pos'))} ELSE 0.0 END`);
  const idealDcg = (k?: number) => d.sum(`CASE WHEN ${within(k, f('ipos'))} THEN ${f('igain')} * ${discount(f('ipos'))} ELSE 0.0 END`);
  const relevantInTop = (k?: number) => d.sum(`CASE WHEN ${within(k, f('pos'))} THEN ${share} ELSE 0.0 END`);
  // Normalised metrics take the no-relevant policy's value when nothing is relevant.
  const normalised = (value: string) => `CASE WHEN ${noRelevant} THEN ${policy} ELSE ${value} END`;
  const p = literal(c.rbpPersistence);

  const out: string[] = [];
  const firstRbp = metrics.findIndex((m) => m.name === 'rbp');
  metrics.forEach((spec, i) => {
    const k = spec.k;
    let value: string;
    switch (spec.name) {
      case 'ndcg': {
        const ideal = idealDcg(k);
        value = normalised(`CASE WHEN ${ideal} > 0 THEN ${dcg(k)} / ${ideal} ELSE ${d.nan} END`);
        break;
      }
      case 'dcg':
        value = dcg(k);
        break;
      case 'p':
        value = `${relevantInTop(k)} / ${k === undefined ? `greatest(${d.items}, 1.0)` : literal(k)}`;
        break;
      case 'r':
        value = normalised(`${relevantInTop(k)} / ${relevantCount}`);
        break;
      case 'ap': {
        // (r/m) Σ_u (bef + 1 + u(r−1)/(m−1)) / (s+u+1) over the group's slots, u = pos − s − 1.
        const inner = `CASE WHEN ${f('m')} > 1 THEN (${f('r')} - 1.0) / (${f('m')} - 1.0) ELSE 0.0 END`;
        // With a cut-off only the slots within it count, and the sum is divided by min(k, R).
        const term = `CASE WHEN ${f('r')} > 0 AND ${within(k, f('pos'))} THEN ${share} * (${f('bef')} + 1.0 + (${f('pos')} - ${f('s')} - 1.0) * ${inner}) / ${f('pos')} ELSE 0.0 END`;
        value = normalised(`${d.sum(term)} / ${k === undefined ? relevantCount : `least(${relevantCount}, ${literal(k)})`}`);
        break;
      }
      case 'rr': {
        // First group holding a relevant item (bef = 0, r > 0): P(first relevant at its j-th slot) =
        // C(m−j, r−1) / C(m, r), by log-gamma; j = pos − s runs to m − r + 1.
        const m = f('m');
        const r = f('r');
        const j = `(${f('pos')} - ${f('s')})`;
        const lg = (x: string) => `lgamma(greatest(${x}, 1.0))`;
        const chance = `exp(${lg(`${m} - ${j} + 1.0`)} - ${lg(r)} - ${lg(`${m} - ${j} - ${r} + 2.0`)} - ${lg(`${m} + 1.0`)} + ${lg(`${r} + 1.0`)} + ${lg(`${m} - ${r} + 1.0`)})`;
        const term = `CASE WHEN ${r} > 0 AND ${f('bef')} = 0 AND ${within(k, f('pos'))} AND ${j} <= ${m} - ${r} + 1.0 THEN ${chance} / ${f('pos')} ELSE 0.0 END`;
        value = normalised(d.sum(term));
        break;
      }
      case 'rbp': {
        // (1−p) Σ r_i p^(i−1) to depth d (Moffat & Zobel 2008); a group's slots carry its relevant share.
        const weight = `(1.0 - ${p}) * pow(${p}, ${f('pos')} - 1.0)`;
        value = d.sum(`CASE WHEN ${within(k, f('pos'))} THEN ${share} * ${weight} ELSE 0.0 END`);
        if (i === firstRbp) {
          const depth = k === undefined ? d.items : `least(${d.items}, ${literal(k)})`;
          const residual = `pow(${p}, ${depth}) + ${d.sum(`CASE WHEN ${within(k, f('pos'))} THEN ${f('usum')} / ${f('m')} * ${weight} ELSE 0.0 END`)}`;
          out.push(value, residual);
          return;
        }
        break;
      }
      case 'err':
        // Σ R_i Π_{j<i}(1 − R_j) / i (Chapelle et al. 2009); only without average ties (request.ts).
        value = d.sum(`CASE WHEN ${within(k, f('pos'))} THEN ${f('err_r')} * ${f('surv')} / ${f('pos')} ELSE 0.0 END`);
        break;
      case 'hit': {
        // First group holding a relevant item, if it starts within the cut-off: t = its slots inside;
        // P(no relevant item on them) = C(m−r, t) / C(m, t), by log-gamma. Spread over the group's m rows.
        const m = f('m');
        const r = f('r');
        const t = k === undefined ? m : `least(${m}, ${literal(k)} - ${f('s')})`;
        const lg = (x: string) => `lgamma(greatest(${x}, 1.0))`;
        const none = `CASE WHEN ${m} - ${r} < ${t} THEN 0.0 ELSE exp(${lg(`${m} - ${r} + 1.0`)} + ${lg(`${m} - ${t} + 1.0`)} - ${lg(`${m} - ${r} - ${t} + 1.0`)} - ${lg(`${m} + 1.0`)}) END`;
        value = normalised(d.sum(`CASE WHEN ${r} > 0 AND ${f('bef')} = 0 AND ${k === undefined ? '1 = 1' : `${f('s')} < ${literal(k)}`} THEN (1.0 - ${none}) / ${m} ELSE 0.0 END`));
        break;
      }
      case 'judged': {
        // Each slot within the cut-off carries its group's judged share; divided by min(k, list length).
        const depth = k === undefined ? d.items : `least(${d.items}, ${literal(k)})`;
        value = `${d.sum(`CASE WHEN ${within(k, f('pos'))} THEN (${f('m')} - ${f('usum')}) / ${f('m')} ELSE 0.0 END`)} / ${depth}`;
        break;
      }
      case 'tau':
        throw new Error('tau is refused by checkExpressible before any SQL is written');
    }
    out.push(value);
  });
  if (c.noRelevant !== 'skip') return out;
  // Skip policy: a query with nothing relevant is left out of every mean (NaN in every column).
  return out.map((v) => `CASE WHEN ${noRelevant} THEN ${d.nan} ELSE ${v} END`);
}

/** Grade → gain as SQL (metrics/gain.ts): exponential with floating-point power, never integer 2^g. */
export function gainExpression(c: Conventions, grade: string, unknownGrade: (grade: string) => string): string {
  switch (c.gain.kind) {
    case 'exponential':
      return `(pow(2.0, ${grade}) - 1.0)`;
    case 'linear':
      return grade;
    case 'map': {
      const cases = [...c.gain.gains].sort((a, b) => a[0] - b[0]).map(([g, v]) => `WHEN ${grade} = ${literal(g)} THEN ${literal(v)}`);
      return `(CASE ${cases.join(' ')} ELSE ${unknownGrade(grade)} END)`;
    }
  }
}
