/** The evaluation as one JSON document, for scripts and notebooks. */
import { conventionsAsJson, jsonNumber, queryColumns, type ReportInput } from './reportInput';

export function formatJson(input: ReportInput): string {
  const { evaluation: ev, queryNames } = input;
  const columns = queryColumns(ev);
  const summary: Record<string, number | null> = {};
  const counted: Record<string, number> = {};
  for (const s of ev.summary) {
    summary[s.key] = jsonNumber(s.mean);
    counted[s.key] = s.counted;
  }
  const queries: Record<string, unknown>[] = new Array(ev.queryCount);
  const { items, relevant, skipped } = ev.perQuery;
  for (let q = 0; q < ev.queryCount; q++) {
    const record: Record<string, unknown> = { query: queryNames.get(q), items: items[q], relevant: relevant[q] };
    for (const column of columns) record[column.key] = jsonNumber(column.valueOf(q));
    record.skipped = skipped[q] === 1;
    queries[q] = record;
  }
  const document = {
    source: input.source,
    rows: input.rowCount,
    queryCount: ev.queryCount,
    headline: ev.metrics[ev.headline]?.key ?? null,
    conventions: conventionsAsJson(ev.conventions),
    summary,
    counted,
    degenerate: ev.degenerate,
    sensitivity: ev.sensitivity.map((row) => ({
      label: row.label,
      mean: jsonNumber(row.mean),
      counted: row.counted,
      conventions: conventionsAsJson(row.conventions),
    })),
    warnings: ev.warnings,
    queries,
  };
  return JSON.stringify(document, null, 1) + '\n';
}
