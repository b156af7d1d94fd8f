/**
 * Seeded material for the hostile-input corpus: logical rows, their encodings in every input format,
 * and the expected means from the slow reference implementation (test/reference/slowMetrics.ts), so a
 * case that must give a result is checked against a computation that shares no code with the engine.
 */
import { gzipSync } from 'node:zlib';
import { parquetWriteBuffer } from 'hyparquet-writer';
import { DEFAULT_CONVENTIONS, type Conventions } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { seededRandom, QUERY_NAMES } from '../reference/random';
import { slowQuery, type SlowItem } from '../reference/slowMetrics';

/** One (query, item) row as the user means it. NaN score = missing; NaN grade = unjudged (run files only). */
export interface Row {
  readonly query: string;
  readonly item: string;
  readonly grade: number;
  readonly score: number;
}

/** The metrics every result case asks for, named explicitly so a change of the default list cannot hide a case. */
export const METRICS = 'ndcg@10,err@10,ap,rr,p@5,r@10,rbp,tau';

/** Seeded random rows: up to `queries` queries of 1..8 items, grades 0..3, scores with ties, odd but valid ids. */
export function randomRows(seed: number, queries: number, idStyle: 'plain' | 'awkward' = 'plain'): Row[] {
  const rand = seededRandom(seed);
  const rows: Row[] = [];
  // Awkward but valid ids: non-ASCII, quotes, commas, spaces at the edges, a very long one.
  const awkward = ['tür "scharnier"', 'größe, 3', ' leading space', 'émail 5%', 'x'.repeat(5000), 'tab\there', '日本の釘'];
  for (let q = 0; q < queries; q++) {
    const name = idStyle === 'awkward' && q < awkward.length ? awkward[q]! : `${QUERY_NAMES[q % QUERY_NAMES.length]} #${seed}-${q}`;
    const n = 1 + Math.floor(rand() * 8);
    for (let i = 0; i < n; i++) {
      rows.push({ query: name, item: `sku-${q}-${i}`, grade: Math.floor(rand() * 4), score: Math.floor(rand() * 6) / 4 });
    }
  }
  return rows;
}

/** Quotes a field when it holds a quote, the delimiter, a line end or edge spaces (RFC 4180 doubling). */
function csvField(text: string, delimiter: string): string {
  const needs = text.includes('"') || text.includes(delimiter) || /[\n\r]/.test(text) || text !== text.trim();
  return needs ? `"${text.replace(/"/g, '""')}"` : text;
}

function numberText(v: number): string {
  return Number.isNaN(v) ? '' : String(v);
}

/** CSV or TSV with a header; `crlf` ends lines with CR LF, `bom` starts with the UTF-8 byte-order mark. */
export function delimited(rows: readonly Row[], options: { delimiter?: ',' | '\t'; crlf?: boolean; bom?: boolean } = {}): Buffer {
  const d = options.delimiter ?? ',';
  const end = options.crlf ? '\r\n' : '\n';
  const lines = [['query', 'item', 'score', 'grade'].join(d)];
  for (const r of rows) lines.push([csvField(r.query, d), csvField(r.item, d), numberText(r.score), numberText(r.grade)].join(d));
  const text = lines.join(end) + end;
  return Buffer.concat([options.bom ? Buffer.from([0xef, 0xbb, 0xbf]) : Buffer.alloc(0), Buffer.from(text, 'utf8')]);
}

export function jsonLines(rows: readonly Row[]): Buffer {
  return Buffer.from(rows.map((r) => JSON.stringify({ query: r.query, item: r.item, score: Number.isNaN(r.score) ? null : r.score, grade: r.grade })).join('\n') + '\n');
}

/** A run file (query Q0 item rank score tag) and its judgments (query 0 item grade); NaN grades are left unjudged. */
export function runAndJudgments(rows: readonly Row[]): { run: Buffer; judgments: Buffer } {
  const ranks = new Map<string, number>();
  const run = rows.map((r) => {
    const rank = (ranks.get(r.query) ?? 0) + 1;
    ranks.set(r.query, rank);
    return `${r.query} Q0 ${r.item} ${rank} ${r.score} hostile`;
  });
  const judged = rows.filter((r) => !Number.isNaN(r.grade)).map((r) => `${r.query} 0 ${r.item} ${r.grade}`);
  return { run: Buffer.from(run.join('\n') + '\n'), judgments: Buffer.from(judged.join('\n') + '\n') };
}

export function parquet(rows: readonly Row[], queryBytes?: readonly Uint8Array[]): Buffer {
  const buf = parquetWriteBuffer({
    columnData: [
      queryBytes === undefined
        ? { name: 'query', data: rows.map((r) => r.query), type: 'STRING' }
        : { name: 'query', data: queryBytes as Uint8Array[], type: 'BYTE_ARRAY' },
      { name: 'item', data: rows.map((r) => r.item), type: 'STRING' },
      { name: 'score', data: rows.map((r) => r.score), type: 'DOUBLE' },
      { name: 'grade', data: rows.map((r) => r.grade), type: 'DOUBLE' },
    ],
    rowGroupSize: 3,
  });
  return Buffer.from(buf);
}

/**
 * Rows as a Parquet part with the named columns in that order (of query, item, score, grade and a text
 * column `shelf`): the parts of a folder whose columns differ.
 */
export function parquetColumns(rows: readonly Row[], names: readonly ('query' | 'item' | 'score' | 'grade' | 'shelf')[]): Buffer {
  const column = (name: (typeof names)[number]) => name === 'score' || name === 'grade'
    ? { name, data: rows.map((r) => r[name]), type: 'DOUBLE' as const }
    : { name, data: rows.map((r, i) => (name === 'shelf' ? `aisle ${i % 4}` : r[name])), type: 'STRING' as const };
  return Buffer.from(parquetWriteBuffer({ columnData: names.map(column), rowGroupSize: 3 }));
}

export const gzip = (b: Buffer): Buffer => gzipSync(b);

/** Per-query values and means of METRICS over `rows`, by the slow reference. */
export function slowExpectation(rows: readonly Row[], conventions: Partial<Conventions> = {}) {
  const c: Conventions = { ...DEFAULT_CONVENTIONS, ...conventions };
  const specs = parseMetricList(METRICS);
  const byQuery = new Map<string, SlowItem[]>();
  for (const r of rows) {
    const list = byQuery.get(r.query) ?? [];
    list.push({ item: r.item, label: r.grade, score: r.score });
    byQuery.set(r.query, list);
  }
  let gmax = 0;
  for (const r of rows) if (!Number.isNaN(r.grade)) gmax = Math.max(gmax, r.grade);
  gmax = c.maxGrade ?? gmax;
  const perQuery = new Map<string, Record<string, number>>();
  for (const [query, items] of byQuery) perQuery.set(query, slowQuery(items, specs, c, gmax, 10).values);
  const means: Record<string, number> = {};
  for (const spec of specs) {
    const values = [...perQuery.values()].map((v) => v[spec.key]!).filter((v) => !Number.isNaN(v));
    means[spec.key] = values.reduce((a, b) => a + b, 0) / values.length;
  }
  return { perQuery, means, queryCount: byQuery.size };
}

/**
 * Seeded hostile bytes: a valid CSV with one bad byte sequence (not UTF-8, or NUL) put into a random id
 * line. The expected line is found by an independent scan: split at LF, decode each line strictly.
 */
export function csvWithBadByte(seed: number): { bytes: Buffer; line: number } {
  const rand = seededRandom(seed);
  const rows = randomRows(seed, 12);
  const lines = delimited(rows).toString('utf8').split('\n');
  const target = 1 + Math.floor(rand() * (lines.length - 2));
  const bad = [[0xe9], [0xff], [0xc3], [0xed, 0xa0, 0x80], [0x00], [0xf8, 0x88]][Math.floor(rand() * 6)]!;
  const parts = lines.map((l) => Buffer.from(l, 'utf8'));
  const at = Math.floor(rand() * (parts[target]!.indexOf(44) + 1));
  parts[target] = Buffer.concat([parts[target]!.subarray(0, at), Buffer.from(bad), parts[target]!.subarray(at)]);
  const bytes = Buffer.concat(parts.flatMap((p, i) => (i < parts.length - 1 ? [p, Buffer.from('\n')] : [p])));
  const decoder = new TextDecoder('utf-8', { fatal: true });
  const line = 1 + bytes.toString('latin1').split('\n').findIndex((text) => {
    const raw = Buffer.from(text, 'latin1');
    if (raw.includes(0)) return true;
    try {
      decoder.decode(raw);
      return false;
    } catch {
      return true;
    }
  });
  return { bytes, line };
}
