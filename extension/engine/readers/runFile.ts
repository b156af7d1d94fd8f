/**
 * Whitespace-separated run files (`query unused item rank score [tag]`). They carry no labels: those come
 * from a judgments file, joined afterwards like for every format (judgments.ts). Lists are ranked by
 * score; the rank column is only checked for form.
 */
import { InputError } from '../errors';
import type { RankedDump } from '../model/dump';
import { RowColumns } from './columns';
import type { ReadOptions } from './readOptions';
import { describeNonNumber, parseNumber } from './numbers';
import { LineSink, pumpText, splitWhitespace } from './source';

export async function readRunFile(path: string, options: ReadOptions): Promise<RankedDump> {
  const rows = new RowColumns();
  const starts = new Int32Array(6);
  const ends = new Int32Array(6);
  const stamp = await pumpText(path, new LineSink((buf, s, e, line, offset) => {
    const fields = splitWhitespace(buf, s, e, starts, ends);
    if (fields === 0) return;
    if (fields < 5 || fields > 6) {
      throw new InputError('6 whitespace-separated fields in the run file: query, unused, item, rank, score, tag', path, line, buf.toString('utf8', s, e));
    }
    const row = rows.next();
    const query = rows.queries.intern(buf, starts[0]!, ends[0]!);
    const item = rows.items.intern(buf, starts[2]!, ends[2]!);
    if (!Number.isFinite(parseNumber(buf, starts[3]!, ends[3]!))) {
      throw new InputError('a number for the rank (4th field)', path, line, buf.toString('utf8', starts[3]!, ends[3]!));
    }
    let score = parseNumber(buf, starts[4]!, ends[4]!);
    if (!Number.isFinite(score)) {
      const kind = Number.isNaN(score) ? describeNonNumber(buf, starts[4]!, ends[4]!) : 'infinite';
      if (kind === 'invalid') throw new InputError('a number for the score (5th field)', path, line, buf.toString('utf8', starts[4]!, ends[4]!));
      score = NaN;
    }
    rows.set(row, query, item, NaN, score, line, offset);
  }), { signal: options.signal, onProgress: options.onProgress });
  if (rows.count === 0) throw new InputError('at least one run line (query unused item rank score tag)', path);
  rows.notes.messages.push('ranked by score; the rank column is ignored');
  rows.countGaps();
  return rows.finish(path, 'run', stamp);
}
