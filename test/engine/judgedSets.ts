/**
 * Test helpers for dumps whose labels come from a judgments file: a judgments table built in memory and
 * joined to a dump exactly as the readers do (readers/judgments.ts).
 */
import type { MissingQueriesPolicy, RankedDump } from '../../extension/engine/model/dump';
import { joinJudgments, type JudgmentTable } from '../../extension/engine/readers/judgments';
import { MapStringPool } from '../../extension/engine/model/stringPool';
import { buildDump, type TestRow } from './dumpBuilder';
import { QUERY_NAMES, seededRandom } from '../reference/random';

export interface Judgment {
  readonly query: string;
  readonly item: string;
  readonly grade: number;
}

export function judgmentTable(judgments: readonly Judgment[], path = 'judged/grades.tsv'): JudgmentTable {
  const queries = new MapStringPool();
  const items = new MapStringPool();
  const n = judgments.length;
  const table = { path, queries, items, query: new Uint32Array(n), item: new Uint32Array(n), grade: new Float64Array(n), line: new Uint32Array(n) };
  judgments.forEach((j, i) => {
    table.query[i] = queries.intern(j.query);
    table.item[i] = items.intern(j.item);
    table.grade[i] = j.grade;
    table.line[i] = i + 1;
  });
  return table;
}

/** The retrieved rows (their own labels ignored) joined with the judgments. */
export function joined(rows: readonly TestRow[], judgments: readonly Judgment[], policy: MissingQueriesPolicy = 'skip'): RankedDump {
  return joinJudgments(buildDump(rows.map((r) => ({ ...r, label: NaN }))), judgmentTable(judgments), policy);
}

export interface JudgedCollection {
  /** The run: retrieved rows, labels inline where judged (NaN otherwise). */
  readonly rows: TestRow[];
  /** Every judgment: the retrieved rows' plus judged items the run lacks and whole queries it lacks. */
  readonly judgments: Judgment[];
}

/**
 * Seeded queries of 0–30 retrieved items with tied scores, unjudged rows, judged items that were never
 * retrieved (some queries only those relevant), and judged queries with no row in the run.
 */
export function judgedCollection(seed: number, queries: number): JudgedCollection {
  const rand = seededRandom(seed);
  const rows: TestRow[] = [];
  const judgments: Judgment[] = [];
  for (let q = 0; q < queries; q++) {
    const query = `${QUERY_NAMES[q % QUERY_NAMES.length]} ${q}`;
    const absent = rand() < 0.06;
    const n = absent ? 0 : 1 + Math.floor(rand() * 30);
    const onlyUnretrievedRelevant = rand() < 0.1;
    for (let i = 0; i < n; i++) {
      const item = `sku-${q}-${i}`;
      const grade = onlyUnretrievedRelevant ? 0 : Math.floor(rand() * 4);
      const judged = rand() > 0.05;
      const score = Math.round(rand() * 16) / 4;
      rows.push({ query, item, label: judged ? grade : NaN, score });
      if (judged) judgments.push({ query, item, grade });
    }
    const unretrieved = absent ? 1 + Math.floor(rand() * 5) : Math.floor(rand() * 6);
    for (let i = 0; i < unretrieved; i++) judgments.push({ query, item: `sku-${q}-x${i}`, grade: Math.floor(rand() * 4) });
  }
  return { rows, judgments };
}
