/**
 * One query of a streamed dump in detail: its rows are read again from its byte range (the stream kept
 * no rows) into a small dump whose lines and byte offsets are the file's, and the in-memory detail is
 * computed on it. Row numbers are given as the whole file's (the rows of a grouped file are contiguous
 * by query), so a detail reads as the in-memory path's.
 */
import { InputError } from '../errors';
import { queryDetail, type QueryDetailOptions } from '../evaluate/detail';
import type { QueryDetail } from '../evaluate/types';
import type { Conventions } from '../metrics/conventions';
import type { RankedDump } from '../model/dump';
import { DelimitedParser } from '../readers/delimited';
import { pumpRange } from '../readers/source';
import type { StreamedDump } from './streamEvaluate';
import { joinQueryRows } from './streamJudgments';
import { labelOptional } from './sharedJudgments';

/** The rows of query `query` read again: a dump holding that one query. */
export async function readQueryRows(dump: StreamedDump, query: number): Promise<RankedDump> {
  const { start, end, line } = dump.locations;
  const parser = new DelimitedParser({ file: dump.path, delimiter: dump.format === 'csv' ? 44 : 9, ...(dump.judgments ? { columns: labelOptional(dump.columns) } : dump.columns ? { columns: dump.columns } : {}),
    firstLine: line[query]! }, { names: [...dump.names] });
  await pumpRange(dump.path, start[query]!, end[query]!, parser, () => undefined, Math.max(4096, end[query]! - start[query]!));
  const rows = parser.columns!;
  const read = rows.finish(dump.path, dump.format, dump.stamp);
  const name = dump.queries.get(query);
  // A judged query the run lacks (missing queries `zero`) has no rows: its detail is its judged items.
  const absent = dump.judgments !== undefined && dump.locations.rows[query] === 0 && read.rowCount === 0;
  if (!absent && (read.queries.size !== 1 || read.queries.get(0) !== name)) {
    throw new InputError(`the rows of query '${name}' where they were read (the file changed?)`, dump.path, line[query]);
  }
  return dump.judgments ? joinQueryRows(read, name, dump.judgments) : read;
}

export async function streamedQueryDetail(dump: StreamedDump, query: number, conventions: Conventions, k: number,
  options: Omit<QueryDetailOptions, 'groups' | 'gradeRange'> = {}): Promise<QueryDetail> {
  const rows = await readQueryRows(dump, query);
  const detail = queryDetail(rows, 0, conventions, k, { ...options, ...(dump.notes.gradeRange ? { gradeRange: dump.notes.gradeRange } : {}) });
  let first = 0;
  for (let q = 0; q < query; q++) first += dump.locations.rows[q]!;
  return {
    ...detail,
    positions: detail.positions.map((p) => ({ ...p, row: p.row + first })),
    idealOrder: detail.idealOrder.map((r) => r + first),
    invertedPairs: detail.invertedPairs.map((p) => ({ ...p, aboveRow: p.aboveRow + first, belowRow: p.belowRow + first })),
  };
}
