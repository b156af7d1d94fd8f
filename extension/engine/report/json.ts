/** The evaluation as one JSON document, for scripts and notebooks. */
import { packNames, renderQueryRecords } from './jsonRecords';
import { conventionsAsJson, jsonNumber, type ReportInput } from './reportInput';

/**
 * The document `JSON.stringify(document, null, 1)` would write with a `queries` array of records last.
 * The records are rendered by jsonRecords.ts (or were already, while scoring: `queryRecords`) and spliced in,
 * so 100k query objects are never built only to be stringified.
 */
export function formatJson(input: ReportInput): string {
  const decoder = new TextDecoder();
  return [...formatJsonPieces(input)].map((piece) => (typeof piece === 'string' ? piece : decoder.decode(piece))).join('');
}

/** A piece of a report to write as it is: text, or text already encoded as UTF-8 (records rendered while scoring). */
export type ReportPiece = string | Uint8Array;

/** Records rendered here (none came rendered) are rendered this many queries at a time, each piece written before the next is made. */
const RECORDS_PER_PIECE = 16384;

/**
 * formatJson's text in pieces, to write one after another: on 100k queries the records are tens of MB,
 * and joining them into one string (then one buffer to write) held two more copies at the peak.
 */
export function* formatJsonPieces(input: ReportInput): Generator<ReportPiece> {
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
  if (ev.queryCount === 0) {
    yield `${headText.slice(0, -2)},\n "queries": []\n}\n`;
    return;
  }
  const notRetrieved = ev.judgments !== undefined;
  // headText ends with "\n}": the records go in before that closing brace.
  yield `${headText.slice(0, -2)},\n "queries": [\n`;
  if (input.facts === undefined && input.queryRecords !== undefined) {
    for (let k = 0; k < input.queryRecords.length; k++) {
      if (k > 0) yield ',\n';
      yield input.queryRecords[k]!;
    }
  } else {
    // Records rendered while scoring carry no query facts: with a queries table (or none rendered) they are rendered here.
    const spec = { metrics: ev.metrics, names: packNames(input.queryNames), facts: input.facts, notRetrieved };
    for (let from = 0; from < ev.queryCount; from += RECORDS_PER_PIECE) {
      if (from > 0) yield ',\n';
      yield renderQueryRecords(spec, ev.perQuery, from, Math.min(ev.queryCount, from + RECORDS_PER_PIECE));
    }
  }
  yield '\n ]\n}\n';
}
