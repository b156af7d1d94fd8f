/** The evaluation as one JSON document, for scripts and notebooks. */
import { QUERIES_PER_CHUNK } from '../evaluate/chunkOutput';
import { packNames, renderQueryRecords } from './jsonRecords';
import { conventionsAsJson, jsonNumber, type ReportInput } from './reportInput';

/**
 * The document `JSON.stringify(document, null, 1)` would write with a `queries` array of records last.
 * The records are rendered by jsonRecords.ts and spliced in, so 100k query objects are never built only
 * to be stringified.
 */
export function formatJson(input: ReportInput): string {
  const decoder = new TextDecoder();
  return [...formatJsonPieces(input)].map((piece) => (typeof piece === 'string' ? piece : decoder.decode(piece))).join('');
}

/** A piece of a report to write as it is: text, or text already encoded as UTF-8 (rendered records). */
export type ReportPiece = string | Uint8Array;

/**
 * formatJson's text in pieces, to write one after another: on 100k queries the records are tens of MB,
 * and joining them into one string (then one buffer to write) held two more copies at the peak. Records
 * are rendered QUERIES_PER_CHUNK at a time, each piece written before the next is made.
 */
export function* formatJsonPieces(input: ReportInput): Generator<ReportPiece> {
  const frame = jsonFrame(input);
  yield frame.before;
  const { evaluation: ev } = input;
  const spec = { metrics: ev.metrics, names: packNames(input.queryNames), facts: input.facts, notRetrieved: ev.judgments !== undefined };
  for (let from = 0; from < ev.queryCount; from += QUERIES_PER_CHUNK) {
    if (from > 0) yield RECORD_SEPARATOR;
    yield renderQueryRecords(spec, ev.perQuery, from, Math.min(ev.queryCount, from + QUERIES_PER_CHUNK));
  }
  yield frame.after;
}

/** Written between two pieces of records (each piece is records separated by the same). */
export const RECORD_SEPARATOR = ',\n';

/**
 * The document around its records: `before` ends just inside the `queries` array, `after` closes it and
 * the document. The records (two spaces deep, RECORD_SEPARATOR between them) go in between.
 */
export function jsonFrame(input: ReportInput): { readonly before: string; readonly after: string } {
  const { evaluation: ev } = input;
  const summary: Record<string, number | null> = {};
  const counted: Record<string, number> = {};
  for (const s of ev.summary) {
    summary[s.key] = jsonNumber(s.mean);
    counted[s.key] = s.counted;
  }
  const head = {
    source: input.source,
    rows: input.rowCount,
    queryCount: ev.queryCount,
    headline: ev.metrics[ev.headline]?.key ?? null,
    conventions: conventionsAsJson(ev.conventions),
    ...(ev.weighting ? { weights: ev.weighting.source } : {}),
    summary,
    counted,
    degenerate: ev.degenerate,
    sensitivity: ev.sensitivity.map((row) => ({
      label: row.label,
      mean: jsonNumber(row.mean),
      counted: row.counted,
      conventions: conventionsAsJson(row.conventions),
      ...(row.unavailable !== undefined ? { unavailable: row.unavailable } : {}),
    })),
    warnings: ev.warnings,
    ...(ev.judgments ? { judgments: ev.judgments } : {}),
  };
  const headText = JSON.stringify(head, null, 1);
  // headText ends with "\n}": the records go in before that closing brace.
  if (ev.queryCount === 0) return { before: `${headText.slice(0, -2)},\n "queries": [`, after: ']\n}\n' };
  return { before: `${headText.slice(0, -2)},\n "queries": [\n`, after: '\n ]\n}\n' };
}
