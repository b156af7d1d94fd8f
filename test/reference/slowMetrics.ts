/**
 * A slow, obviously-correct implementation of every per-query number, written straight from the
 * definitions with no grouping tricks, for seeded random comparisons against the engine.
 * Ties under `average` are handled by enumerating every ordering of every tied group and averaging.
 * Only for small lists (the number of orderings grows factorially).
 */
import type { Conventions } from '../../extension/engine/metrics/conventions';
import { metricDefinition, type MetricName, type MetricSpec } from '../../extension/engine/metrics/registry';

export interface SlowItem {
  readonly item: string;
  /** NaN = unjudged. */
  readonly label: number;
  /** NaN = no score. */
  readonly score: number;
}

interface Placed {
  readonly grade: number;
  readonly unjudged: boolean;
  readonly score: number;
  readonly fileIndex: number;
}

const gainOf = (c: Conventions, g: number): number =>
  c.gain.kind === 'exponential' ? 2 ** g - 1 : c.gain.kind === 'linear' ? g : c.gain.gains.get(g)!;

function permutations<T>(xs: readonly T[]): T[][] {
  if (xs.length <= 1) return [xs.slice()];
  const out: T[][] = [];
  xs.forEach((x, i) => {
    for (const rest of permutations([...xs.slice(0, i), ...xs.slice(i + 1)])) out.push([x, ...rest]);
  });
  return out;
}

/** Every ordering the tie convention allows, each equally likely. */
export function orderings(items: readonly SlowItem[], c: Conventions): Placed[][] {
  const seen = new Set<string>();
  const placed: Placed[] = [];
  items.forEach((it, fileIndex) => {
    if (seen.has(it.item)) return; // duplicates: the first row counts
    seen.add(it.item);
    placed.push({ grade: Number.isNaN(it.label) ? 0 : it.label, unjudged: Number.isNaN(it.label), score: it.score, fileIndex });
  });
  const scored = placed.filter((p) => !Number.isNaN(p.score)).sort((a, b) => b.score - a.score || a.fileIndex - b.fileIndex);
  const unscored = placed.filter((p) => Number.isNaN(p.score));
  const groups: Placed[][] = [];
  for (const p of scored) {
    const last = groups[groups.length - 1];
    if (last && last[0]!.score === p.score) last.push(p);
    else groups.push([p]);
  }
  for (const p of unscored) groups.push([p]);
  let choices: Placed[][][];
  if (c.ties === 'average') choices = groups.map((g) => permutations(g));
  else if (c.ties === 'file-order') choices = groups.map((g) => [g]);
  else {
    const dir = c.ties === 'pessimistic' ? 1 : -1;
    choices = groups.map((g) => [g.slice().sort((a, b) => dir * (a.grade - b.grade) || a.fileIndex - b.fileIndex)]);
  }
  let lists: Placed[][] = [[]];
  for (const options of choices) lists = lists.flatMap((prefix) => options.map((o) => [...prefix, ...o]));
  return lists;
}

function dcgOf(list: readonly Placed[], c: Conventions, k: number): number {
  let total = 0;
  for (let i = 0; i < Math.min(k, list.length); i++) total += gainOf(c, list[i]!.grade) / Math.log2(i + 2);
  return total;
}

function idealOf(list: readonly Placed[], c: Conventions, k: number): number {
  const gains = list.map((p) => gainOf(c, p.grade)).sort((a, b) => b - a);
  let total = 0;
  for (let i = 0; i < Math.min(k, gains.length); i++) total += gains[i]! / Math.log2(i + 2);
  return total;
}

type Plain = (list: readonly Placed[], k: number, c: Conventions, gmax: number) => number[];

const relevanceOf = (list: readonly Placed[], c: Conventions): number[] => list.map((p) => (p.grade >= c.relevantFrom ? 1 : 0));
const sumOf = (xs: readonly number[]): number => xs.reduce((a, b) => a + b, 0);

/**
 * Plain value of each metric on one fully ordered list (no-relevant policy not applied), straight from
 * its published or common-practice definition. One entry per registry metric (a test holds them equal).
 */
export const SLOW_REFERENCES: Readonly<Record<MetricName, Plain>> = {
  ndcg: (list, k, c) => [dcgOf(list, c, k) / idealOf(list, c, k)],
  dcg: (list, k, c) => [dcgOf(list, c, k)],
  // Chapelle et al. 2009, the cascade written out.
  err: (list, k, _c, gmax) => {
    let total = 0;
    let reach = 1;
    for (let i = 0; i < Math.min(k, list.length); i++) {
      const r = (2 ** list[i]!.grade - 1) / 2 ** gmax;
      total += (reach * r) / (i + 1);
      reach *= 1 - r;
    }
    return [total];
  },
  p: (list, k, c) => [sumOf(relevanceOf(list, c).slice(0, Math.min(k, list.length))) / (k === Infinity ? Math.max(list.length, 1) : k)],
  r: (list, k, c) => {
    const rel = relevanceOf(list, c);
    return [sumOf(rel.slice(0, Math.min(k, list.length))) / sumOf(rel)];
  },
  // Precision at each relevant position within the top k, over min(k, R) (the registry's stated denominator).
  ap: (list, k, c) => {
    const rel = relevanceOf(list, c);
    let hits = 0;
    let sum = 0;
    rel.forEach((r, i) => {
      if (r) hits++;
      if (r && i < k) sum += hits / (i + 1);
    });
    return [sum / Math.min(k, sumOf(rel))];
  },
  rr: (list, k, c) => {
    const first = relevanceOf(list, c).indexOf(1);
    return [first >= 0 && first < k ? 1 / (first + 1) : 0];
  },
  // Moffat & Zobel 2008, with the residual bound.
  rbp: (list, k, c) => {
    const rel = relevanceOf(list, c);
    const p = c.rbpPersistence;
    const d = Math.min(k, list.length);
    let value = 0;
    let residual = p ** d;
    for (let i = 0; i < d; i++) {
      value += (1 - p) * p ** i * rel[i]!;
      if (list[i]!.unjudged) residual += (1 - p) * p ** i;
    }
    return [value, residual];
  },
  tau: () => [NaN], // filled from tauAndDiscordant, which needs the scores
  hit: (list, k, c) => [relevanceOf(list, c).slice(0, Math.min(k, list.length)).includes(1) ? 1 : 0],
  judged: (list, k) => {
    const top = list.slice(0, Math.min(k, list.length));
    return [top.length === 0 ? 0 : top.filter((p) => !p.unjudged).length / top.length];
  },
};

export interface SlowQuery {
  readonly values: Record<string, number>;
  readonly noRelevant: boolean;
  readonly tau: number;
  readonly discordant: number;
  /** Expected Σ over discordant pairs of |ΔNDCG@hk| found by swapping the pair and recomputing DCG. */
  readonly inversionCost: number;
}

/** Tau-b by the O(n²) pair definition; unscored items are tied with each other, below every scored one. */
function tauAndDiscordant(items: readonly Placed[]): { tau: number; discordant: number } {
  const s = items.map((p) => (Number.isNaN(p.score) ? -Infinity : p.score));
  let conc = 0;
  let disc = 0;
  let tiesX = 0;
  let tiesY = 0;
  const n = items.length;
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const dx = Math.sign(s[i]! - s[j]!) || 0;
      const dy = Math.sign(items[i]!.grade - items[j]!.grade);
      if (Number.isNaN(dx)) throw new Error('unexpected');
      if (dx === 0 && dy === 0) continue;
      if (dx === 0) tiesX++;
      else if (dy === 0) tiesY++;
      else if (dx === dy) conc++;
      else disc++;
    }
  }
  const denom = Math.sqrt((conc + disc + tiesX) * (conc + disc + tiesY));
  return { tau: denom > 0 ? (conc - disc) / denom : NaN, discordant: disc };
}

export function slowQuery(items: readonly SlowItem[], specs: readonly MetricSpec[], c: Conventions, gmax: number, hk: number): SlowQuery {
  const lists = orderings(items, c);
  const base = lists[0]!;
  const noRelevant = !base.some((p) => p.grade >= c.relevantFrom);
  const policy = c.noRelevant === 'zero' ? 0 : c.noRelevant === 'one' ? 1 : NaN;
  const values: Record<string, number> = {};
  for (const spec of specs) {
    const sums = [0, 0];
    for (const list of lists) SLOW_REFERENCES[spec.name](list, spec.k ?? Infinity, c, gmax).forEach((v, i) => (sums[i] += v));
    let v = sums[0]! / lists.length;
    if (noRelevant && metricDefinition(spec.name).normalised) v = policy;
    values[spec.key] = v;
    if (spec.name === 'rbp') values[`${spec.key}_residual`] = sums[1]! / lists.length;
  }
  const { tau, discordant } = tauAndDiscordant(base);
  for (const spec of specs) if (spec.name === 'tau') values[spec.key] = tau;
  // Inversion cost: in each ordering, swap every discordant pair and measure the NDCG change.
  let cost = 0;
  for (const list of lists) {
    const ideal = idealOf(list, c, hk);
    if (!(ideal > 0)) continue;
    const before = dcgOf(list, c, hk);
    for (let i = 0; i < list.length; i++) {
      for (let j = i + 1; j < list.length; j++) {
        const a = list[i]!;
        const b = list[j]!;
        const aScore = Number.isNaN(a.score) ? -Infinity : a.score;
        const bScore = Number.isNaN(b.score) ? -Infinity : b.score;
        if (!(aScore > bScore && a.grade < b.grade)) continue;
        const swapped = list.slice();
        swapped[i] = b;
        swapped[j] = a;
        cost += Math.abs(dcgOf(swapped, c, hk) - before) / ideal;
      }
    }
  }
  if (noRelevant && c.noRelevant === 'skip') for (const key of Object.keys(values)) values[key] = NaN;
  return { values, noRelevant, tau, discordant, inversionCost: cost / lists.length };
}
