/**
 * Sparse feature lines (`grade qid:Q index:value ... # docid = X`), the text form learning-to-rank
 * toolkits commonly train on, with model scores in a separate file, one per line in the same order. Features are skipped; only the label, the query,
 * and the item id from the comment are kept. Without a docid, the item id is the row's position
 * within its query (1, 2, ...). Blank lines and lines starting with '#' are skipped in both files.
 */
import { InputError } from '../errors';
import type { RankedDump } from '../model/dump';
import { RowColumns } from './columns';
import { indexOfByte } from './byteSearch';
import type { ReadOptions } from './readOptions';
import { describeNonNumber, parseNumber } from './numbers';
import { LineSink, pumpText, throwIfCancelled } from './source';

const HASH = 35;
const DOCID = /\bdoc_?id\s*[=:]?\s*(\S+)/i;
const encoder = new TextEncoder();

export async function readScoresFile(path: string, options: ReadOptions): Promise<Float64Array> {
  let scores = new Float64Array(1024);
  let n = 0;
  await pumpText(path, new LineSink((buf, s, e, line) => {
    const [from, to] = trim(buf, s, e);
    if (from === to || buf[from] === HASH) return;
    let v = parseNumber(buf, from, to);
    if (!Number.isFinite(v)) {
      const kind = Number.isNaN(v) ? describeNonNumber(buf, from, to) : 'infinite';
      if (kind === 'invalid') throw new InputError('one number per line in the scores file', path, line, buf.toString('utf8', from, to));
      v = NaN;
    }
    if (n === scores.length) {
      const grown = new Float64Array(n * 2);
      grown.set(scores);
      scores = grown;
    }
    scores[n++] = v;
  }), { signal: options.signal });
  return scores.subarray(0, n);
}

export async function readSparseFeatures(path: string, scoresPath: string, options: ReadOptions): Promise<RankedDump> {
  const scores = await readScoresFile(scoresPath, options);
  throwIfCancelled(options.signal);
  const rows = new RowColumns();
  let positionInQuery = new Uint32Array(1024);
  let sawDocid = false;
  const stamp = await pumpText(path, new LineSink((buf, s, e, line, offset) => {
    const [from, to] = trim(buf, s, e);
    if (from === to || buf[from] === HASH) return;
    let hash = indexOfByte(buf, HASH, from, to);
    if (hash < 0) hash = to;
    const labelEnd = tokenEnd(buf, from, hash);
    let label = parseNumber(buf, from, labelEnd);
    if (!Number.isFinite(label)) {
      if (describeNonNumber(buf, from, labelEnd) !== 'missing') {
        throw new InputError('a number for the label (first field)', path, line, buf.toString('utf8', from, labelEnd));
      }
      label = NaN;
    }
    const qidStart = skipSpace(buf, labelEnd, hash);
    if (!(hash - qidStart > 4 && buf.toString('latin1', qidStart, qidStart + 4).toLowerCase() === 'qid:')) {
      throw new InputError("'qid:QUERY' as the second field", path, line, buf.toString('utf8', from, Math.min(to, from + 80)));
    }
    const row = rows.next();
    const query = rows.queries.intern(buf, qidStart + 4, tokenEnd(buf, qidStart, hash));
    if (query >= positionInQuery.length) {
      const grown = new Uint32Array(positionInQuery.length * 2);
      grown.set(positionInQuery);
      positionInQuery = grown;
    }
    const position = ++positionInQuery[query]!;
    const docid = hash < to ? DOCID.exec(buf.toString('utf8', hash + 1, to)) : null;
    let item: number;
    if (docid) {
      sawDocid = true;
      item = rows.items.internString(docid[1]!);
    } else {
      const bytes = encoder.encode(String(position));
      item = rows.items.intern(bytes, 0, bytes.length);
    }
    rows.set(row, query, item, label, row < scores.length ? scores[row]! : NaN, line, offset);
  }), { signal: options.signal, onProgress: options.onProgress });
  if (rows.count === 0) throw new InputError('at least one feature line (label qid:QUERY ...)', path);
  if (rows.count !== scores.length) {
    throw new InputError(`as many scores as feature rows: ${path} has ${rows.count} rows but the scores file has ${scores.length} scores`, scoresPath);
  }
  if (!sawDocid) rows.notes.messages.push('no docid comments: items are named by their position within the query (1, 2, ...)');
  rows.countGaps();
  return rows.finish(path, 'sparse', stamp);
}

function trim(buf: Buffer, s: number, e: number): [number, number] {
  while (s < e && (buf[s] === 32 || buf[s] === 9)) s++;
  while (e > s && (buf[e - 1] === 32 || buf[e - 1] === 9)) e--;
  return [s, e];
}

function skipSpace(buf: Buffer, pos: number, end: number): number {
  while (pos < end && (buf[pos] === 32 || buf[pos] === 9)) pos++;
  return pos;
}

function tokenEnd(buf: Buffer, pos: number, end: number): number {
  while (pos < end && buf[pos] !== 32 && buf[pos] !== 9) pos++;
  return pos;
}
