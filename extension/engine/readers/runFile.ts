/**
 * Whitespace-separated run files (`query unused item rank score [tag]`) joined with a judgments file
 * (`query unused item grade`). Lists are ranked by score; the rank column is only checked for form.
 */
import { InputError } from '../errors';
import { BytePool } from '../model/bytePool';
import type { RankedDump } from '../model/dump';
import { RowColumns } from './columns';
import type { ReadOptions } from './readOptions';
import { describeNonNumber, parseNumber } from './numbers';
import { LineSink, pumpText, splitWhitespace, throwIfCancelled } from './source';

/** Judgments kept columnar: one entry per distinct (query, item); a later line for the same pair wins. */
export interface Judgments {
  readonly queries: BytePool;
  readonly items: BytePool;
  /** (query id * items.size + item id) → entry index */
  readonly entryOf: Map<number, number>;
  readonly queryOfEntry: Uint32Array;
  readonly grade: Float64Array;
  /** Judgments query id of every line, duplicates included. */
  readonly queryOfLine: Uint32Array;
  readonly duplicates: number;
}

export async function readJudgments(path: string, options: ReadOptions): Promise<Judgments> {
  const queries = new BytePool();
  const items = new BytePool();
  let q = new Uint32Array(1024);
  let it = new Uint32Array(1024);
  let g = new Float64Array(1024);
  let n = 0;
  const starts = new Int32Array(4);
  const ends = new Int32Array(4);
  await pumpText(path, new LineSink((buf, s, e, line) => {
    const fields = splitWhitespace(buf, s, e, starts, ends);
    if (fields === 0) return;
    if (fields !== 4) {
      throw new InputError('4 whitespace-separated fields in the judgments file: query, unused, item, grade', path, line, buf.toString('utf8', s, e));
    }
    if (n === q.length) {
      q = growU32(q);
      it = growU32(it);
      const grown = new Float64Array(g.length * 2);
      grown.set(g);
      g = grown;
    }
    q[n] = queries.intern(buf, starts[0]!, ends[0]!);
    it[n] = items.intern(buf, starts[2]!, ends[2]!);
    const grade = parseNumber(buf, starts[3]!, ends[3]!);
    if (!Number.isFinite(grade)) {
      throw new InputError('a number for the grade (4th field)', path, line, buf.toString('utf8', starts[3]!, ends[3]!));
    }
    g[n++] = grade;
  }), { signal: options.signal });
  if (n === 0) throw new InputError('at least one judgment line (query unused item grade)', path);
  const entryOf = new Map<number, number>();
  const width = items.size;
  let duplicates = 0;
  const queryOfEntry = new Uint32Array(n);
  const grade = new Float64Array(n);
  let entries = 0;
  for (let i = 0; i < n; i++) {
    const key = q[i]! * width + it[i]!;
    const known = entryOf.get(key);
    if (known !== undefined) {
      duplicates++;
      grade[known] = g[i]!;
      continue;
    }
    entryOf.set(key, entries);
    queryOfEntry[entries] = q[i]!;
    grade[entries++] = g[i]!;
  }
  return { queries, items, entryOf, queryOfEntry: queryOfEntry.subarray(0, entries), grade: grade.subarray(0, entries), queryOfLine: q.subarray(0, n), duplicates };
}

export async function readRunFile(path: string, judgmentsPath: string, options: ReadOptions): Promise<RankedDump> {
  const judged = await readJudgments(judgmentsPath, options);
  throwIfCancelled(options.signal);
  const rows = new RowColumns();
  /** run query id → judgments query id (-1 when unjudged); same for items. */
  let judgedQueryOf = new Int32Array(1024);
  let judgedItemOf = new Int32Array(1024);
  const used = new Uint8Array(judged.grade.length);
  const queryInRun = new Uint8Array(judged.queries.size);
  const starts = new Int32Array(6);
  const ends = new Int32Array(6);
  const width = judged.items.size;
  const stamp = await pumpText(path, new LineSink((buf, s, e, line, offset) => {
    const fields = splitWhitespace(buf, s, e, starts, ends);
    if (fields === 0) return;
    if (fields < 5 || fields > 6) {
      throw new InputError('6 whitespace-separated fields in the run file: query, unused, item, rank, score, tag', path, line, buf.toString('utf8', s, e));
    }
    const row = rows.next();
    const queriesBefore = rows.queries.size;
    const query = rows.queries.intern(buf, starts[0]!, ends[0]!);
    if (query === queriesBefore) {
      if (query === judgedQueryOf.length) judgedQueryOf = growI32(judgedQueryOf);
      const jq = judged.queries.findBytes(buf, starts[0]!, ends[0]!);
      judgedQueryOf[query] = jq;
      if (jq >= 0) queryInRun[jq] = 1;
    }
    const itemsBefore = rows.items.size;
    const item = rows.items.intern(buf, starts[2]!, ends[2]!);
    if (item === itemsBefore) {
      if (item === judgedItemOf.length) judgedItemOf = growI32(judgedItemOf);
      judgedItemOf[item] = judged.items.findBytes(buf, starts[2]!, ends[2]!);
    }
    const jq = judgedQueryOf[query]!;
    const ji = judgedItemOf[item]!;
    const entry = jq >= 0 && ji >= 0 ? judged.entryOf.get(jq * width + ji) : undefined;
    let label = NaN;
    if (entry !== undefined) {
      label = judged.grade[entry]!;
      used[entry] = 1;
    }
    if (!Number.isFinite(parseNumber(buf, starts[3]!, ends[3]!))) {
      throw new InputError('a number for the rank (4th field)', path, line, buf.toString('utf8', starts[3]!, ends[3]!));
    }
    let score = parseNumber(buf, starts[4]!, ends[4]!);
    if (!Number.isFinite(score)) {
      const kind = Number.isNaN(score) ? describeNonNumber(buf, starts[4]!, ends[4]!) : 'infinite';
      if (kind === 'invalid') throw new InputError('a number for the score (5th field)', path, line, buf.toString('utf8', starts[4]!, ends[4]!));
      score = NaN;
    }
    rows.set(row, query, item, label, score, line, offset);
  }), { signal: options.signal, onProgress: options.onProgress });
  if (rows.count === 0) throw new InputError('at least one run line (query unused item rank score tag)', path);
  summarise(rows, judged, used, queryInRun, judgmentsPath);
  rows.countGaps();
  return rows.finish(path, 'run', stamp);
}

function summarise(rows: RowColumns, judged: Judgments, used: Uint8Array, queryInRun: Uint8Array, judgmentsPath: string): void {
  const notes = rows.notes;
  let matchedQueries = 0;
  for (let jq = 0; jq < queryInRun.length; jq++) if (queryInRun[jq] === 1) matchedQueries++;
  if (matchedQueries === 0) {
    throw new InputError(`a judgments file sharing queries with the run (none of its ${judged.queries.size} queries appear in the run)`, judgmentsPath);
  }
  let withoutRun = 0;
  let unrankedJudgments = 0;
  for (const jq of judged.queryOfLine) if (queryInRun[jq] === 0) withoutRun++;
  for (let entry = 0; entry < judged.grade.length; entry++) {
    if (queryInRun[judged.queryOfEntry[entry]!] === 1 && used[entry] === 0) unrankedJudgments++;
  }
  notes.judgmentsWithoutRun = withoutRun;
  notes.judgedQueriesWithoutRun = judged.queries.size - matchedQueries;
  notes.messages.push('ranked by score; the rank column is ignored');
  if (unrankedJudgments > 0) notes.messages.push(`${unrankedJudgments} judgments are for items the run does not return; they are not ranked`);
  if (judged.duplicates > 0) notes.messages.push(`${judged.duplicates} judgment lines repeat a (query, item) pair; the last grade was kept`);
}

function growU32(a: Uint32Array): Uint32Array<ArrayBuffer> {
  const b = new Uint32Array(a.length * 2);
  b.set(a);
  return b;
}

function growI32(a: Int32Array): Int32Array<ArrayBuffer> {
  const b = new Int32Array(a.length * 2);
  b.set(a);
  return b;
}
