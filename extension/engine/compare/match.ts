/**
 * Lines two runs up query by query and item by item. The runs were read separately, so their interned
 * ids are unrelated: strings are matched once per distinct query and item, then everything else works
 * on ids. Nothing is dropped silently: queries found in only one run, and common queries whose candidate
 * items differ, are counted with a few examples for the report.
 */
import type { RankedDump } from '../model/dump';
import { groupByQuery, rowOf, type QueryGroups } from '../model/groups';

/** How many example names each kind of mismatch keeps for display. */
const EXAMPLES = 5;

export interface ItemSetDifference {
  readonly query: string;
  readonly itemsOnlyInA: number;
  readonly itemsOnlyInB: number;
}

export interface RunMatch {
  /** Queries with at least one row, per run. */
  readonly queriesInA: number;
  readonly queriesInB: number;
  /** Common queries as parallel arrays of interned ids (A's id, B's id), in A's query order. */
  readonly commonA: Uint32Array;
  readonly commonB: Uint32Array;
  readonly onlyInA: number;
  readonly onlyInB: number;
  readonly onlyInAExamples: readonly string[];
  readonly onlyInBExamples: readonly string[];
  /** Per common query (same index as commonA): distinct items ranked only by A, only by B. */
  readonly itemsOnlyInA: Uint32Array;
  readonly itemsOnlyInB: Uint32Array;
  /** Common queries whose candidate item sets differ. */
  readonly differingItemSets: number;
  readonly differingExamples: readonly ItemSetDifference[];
  /** Plain sentences for the report. */
  readonly notes: readonly string[];
}

export function matchRuns(a: RankedDump, b: RankedDump, groupsA?: QueryGroups, groupsB?: QueryGroups): RunMatch {
  const ga = groupsA ?? groupByQuery(a);
  const gb = groupsB ?? groupByQuery(b);
  const hasRows = (g: QueryGroups, q: number): boolean => g.start[q + 1]! > g.start[q]!;

  const bOfA = new Int32Array(a.queries.size).fill(-1);
  const matchedInB = new Uint8Array(b.queries.size);
  const commonA: number[] = [];
  const commonB: number[] = [];
  let queriesInA = 0;
  const onlyInAExamples: string[] = [];
  for (let qa = 0; qa < a.queries.size; qa++) {
    if (!hasRows(ga, qa)) continue;
    queriesInA++;
    const name = a.queries.get(qa);
    const qb = b.queries.find(name);
    if (qb >= 0 && hasRows(gb, qb)) {
      bOfA[qa] = qb;
      matchedInB[qb] = 1;
      commonA.push(qa);
      commonB.push(qb);
    } else if (onlyInAExamples.length < EXAMPLES) onlyInAExamples.push(name);
  }
  let queriesInB = 0;
  const onlyInBExamples: string[] = [];
  for (let qb = 0; qb < b.queries.size; qb++) {
    if (!hasRows(gb, qb)) continue;
    queriesInB++;
    if (!matchedInB[qb] && onlyInBExamples.length < EXAMPLES) onlyInBExamples.push(b.queries.get(qb));
  }

  const items = compareItemSets(a, b, ga, gb, commonA, commonB);
  const onlyInA = queriesInA - commonA.length;
  const onlyInB = queriesInB - commonB.length;
  const notes: string[] = [];
  notes.push(`Compared on the ${commonA.length} queries present in both runs.`);
  if (onlyInA > 0) notes.push(`${onlyInA} queries appear only in run A and are left out of the comparison (e.g. ${quoteList(onlyInAExamples)}).`);
  if (onlyInB > 0) notes.push(`${onlyInB} queries appear only in run B and are left out of the comparison (e.g. ${quoteList(onlyInBExamples)}).`);
  if (items.differing > 0) {
    notes.push(
      `${items.differing} common queries have different candidate items in the two runs ` +
        `(${sum(items.onlyInA)} items only in A, ${sum(items.onlyInB)} only in B); each run is scored on its own items.`,
    );
  }
  return {
    queriesInA,
    queriesInB,
    commonA: Uint32Array.from(commonA),
    commonB: Uint32Array.from(commonB),
    onlyInA,
    onlyInB,
    onlyInAExamples,
    onlyInBExamples,
    itemsOnlyInA: items.onlyInA,
    itemsOnlyInB: items.onlyInB,
    differingItemSets: items.differing,
    differingExamples: items.examples,
    notes,
  };
}

interface ItemComparison {
  onlyInA: Uint32Array;
  onlyInB: Uint32Array;
  differing: number;
  examples: ItemSetDifference[];
}

/**
 * Per common query, counts distinct items on one side only. A's item ids are translated to B's once
 * (lazily, only for items of common queries); membership uses a per-query stamp array instead of sets.
 */
function compareItemSets(
  a: RankedDump,
  b: RankedDump,
  ga: QueryGroups,
  gb: QueryGroups,
  commonA: readonly number[],
  commonB: readonly number[],
): ItemComparison {
  const UNKNOWN = -2;
  const bItemOfA = new Int32Array(a.items.size).fill(UNKNOWN);
  const stampB = new Int32Array(b.items.size).fill(-1); // = common index when B's item is in that query
  const seenA = new Int32Array(a.items.size).fill(-1); // de-duplicates repeated rows of one item
  const seenBInA = new Int32Array(b.items.size).fill(-1);
  const onlyInA = new Uint32Array(commonA.length);
  const onlyInB = new Uint32Array(commonA.length);
  const examples: ItemSetDifference[] = [];
  let differing = 0;
  for (let c = 0; c < commonA.length; c++) {
    const qa = commonA[c]!;
    const qb = commonB[c]!;
    let distinctB = 0;
    for (let k = gb.start[qb]!; k < gb.start[qb + 1]!; k++) {
      const item = b.item[rowOf(gb, k)]!;
      if (stampB[item] !== c) {
        stampB[item] = c;
        distinctB++;
      }
    }
    let inBoth = 0;
    let aOnly = 0;
    for (let k = ga.start[qa]!; k < ga.start[qa + 1]!; k++) {
      const item = a.item[rowOf(ga, k)]!;
      if (seenA[item] === c) continue;
      seenA[item] = c;
      let mapped = bItemOfA[item]!;
      if (mapped === UNKNOWN) mapped = bItemOfA[item] = b.items.find(a.items.get(item));
      if (mapped >= 0 && stampB[mapped] === c && seenBInA[mapped] !== c) {
        seenBInA[mapped] = c;
        inBoth++;
      } else aOnly++;
    }
    onlyInA[c] = aOnly;
    onlyInB[c] = distinctB - inBoth;
    if (aOnly > 0 || distinctB > inBoth) {
      differing++;
      if (examples.length < EXAMPLES) examples.push({ query: a.queries.get(qa), itemsOnlyInA: aOnly, itemsOnlyInB: distinctB - inBoth });
    }
  }
  return { onlyInA, onlyInB, differing, examples };
}

function sum(values: Uint32Array): number {
  let total = 0;
  for (let i = 0; i < values.length; i++) total += values[i]!;
  return total;
}

function quoteList(names: readonly string[]): string {
  return names.map((n) => JSON.stringify(n)).join(', ');
}
