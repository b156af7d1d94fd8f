/** One row per query, for spreadsheets: query (with its text and segments from a queries table), counts, skipped flag and every metric column. */
import { queryColumns, type ReportInput } from './reportInput';

/** RFC 4180 quoting: only when the field holds a comma, quote or line break. */
export function csvField(text: string): string {
  return /[",\r\n]/.test(text) ? `"${text.replaceAll('"', '""')}"` : text;
}

export function formatCsv(input: ReportInput): string {
  const { evaluation: ev, queryNames } = input;
  const columns = queryColumns(ev);
  // With a judgments file, each query's judged items the run never retrieved (they count in the ideal).
  const notRetrieved = ev.judgments !== undefined ? ev.perQuery.unretrieved : undefined;
  // With a queries table, each query's text and segment values, as the JSON records carry them.
  const text = input.facts?.text;
  const segments = input.facts?.segments ?? [];
  const lines: string[] = [['query', ...(text ? ['text'] : []), ...segments.map((s) => s.name), 'items', 'relevant',
    ...(notRetrieved ? ['notRetrieved'] : []), 'skipped', ...columns.map((c) => c.key)].map(csvField).join(',')];
  const { items, relevant, skipped } = ev.perQuery;
  for (let q = 0; q < ev.queryCount; q++) {
    const cells = [csvField(queryNames.get(q)), ...(text ? [csvField(text[q]!)] : []), ...segments.map((s) => csvField(s.values[q]!)), String(items[q]), String(relevant[q]), ...(notRetrieved ? [String(notRetrieved[q])] : []), skipped[q] ? 'true' : 'false'];
    for (const column of columns) {
      const v = column.valueOf(q);
      cells.push(Number.isFinite(v) ? String(v) : '');
    }
    lines.push(cells.join(','));
  }
  return lines.join('\n') + '\n';
}
