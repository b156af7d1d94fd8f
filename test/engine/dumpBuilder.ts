/**
 * Builds RankedDump objects directly for engine tests, without going through a reader.
 * Rows are given per query in file order; `segments` adds named per-row columns.
 */
import { emptyNotes, type RankedDump, type SegmentColumn } from '../../extension/engine/model/dump';
import { MapStringPool } from '../../extension/engine/model/stringPool';

export interface TestRow {
  readonly query: string;
  readonly item: string;
  /** NaN = unjudged. */
  readonly label: number;
  /** NaN = missing score. */
  readonly score: number;
  readonly segments?: Readonly<Record<string, string>>;
}

export function buildDump(rows: readonly TestRow[], segmentNames: readonly string[] = []): RankedDump {
  const queries = new MapStringPool();
  const items = new MapStringPool();
  const n = rows.length;
  const query = new Uint32Array(n);
  const item = new Uint32Array(n);
  const label = new Float64Array(n);
  const score = new Float64Array(n);
  const line = new Uint32Array(n);
  const offset = new Float64Array(n);
  const segments: SegmentColumn[] = segmentNames.map((name) => ({ name, values: new MapStringPool(), ofRow: new Uint32Array(n) }));
  const notes = emptyNotes();
  rows.forEach((r, i) => {
    query[i] = queries.intern(r.query);
    item[i] = items.intern(r.item);
    label[i] = r.label;
    score[i] = r.score;
    line[i] = i + 2;
    offset[i] = -1;
    if (Number.isNaN(r.label)) notes.unjudgedRows++;
    if (Number.isNaN(r.score)) notes.missingScoreRows++;
    segments.forEach((s) => {
      (s.ofRow as Uint32Array)[i] = (s.values as MapStringPool).intern(r.segments?.[s.name] ?? '');
    });
  });
  return {
    path: 'test.tsv',
    format: 'tsv',
    stamp: { size: 0, mtimeMs: 0 },
    rowCount: n,
    query,
    item,
    label,
    score,
    line,
    offset,
    queries,
    items,
    segments,
    notes,
  };
}

/** One query's rows from parallel arrays of grades and scores; items are named i0, i1, ... */
export function queryRows(query: string, grades: readonly number[], scores: readonly number[]): TestRow[] {
  return grades.map((label, i) => ({ query, item: `i${i}`, label, score: scores[i]! }));
}
