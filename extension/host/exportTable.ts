/**
 * Turns the table the webview shows into Markdown or CSV text, and suggests a file name. The host
 * then saves it (save dialog) or copies it. Reuses the engine's report cell rules.
 */
import { csvField } from '../engine/report/csv';
import { markdownTable, type Align } from '../engine/report/textTable';
import type { ExportViewParams } from '../protocol/messages';
import { formatDelta, formatFixed, MISSING } from '../presentation/numbers';

type Cell = string | number | null;

/** Numbers keep full precision in CSV (for spreadsheets) and 4 decimals in Markdown (for reading). */
function cellText(cell: Cell, format: 'markdown' | 'csv'): string {
  if (cell === null) return '';
  if (typeof cell === 'number') {
    if (!Number.isFinite(cell)) return '';
    return format === 'markdown' && !Number.isInteger(cell) ? formatFixed(cell, 4) : String(cell);
  }
  return cell;
}

export function formatExport(params: Pick<ExportViewParams, 'format' | 'title' | 'columns' | 'rows'>, conventions?: string): string {
  const { format, columns, rows } = params;
  if (format === 'csv') {
    const lines = [columns.map(csvField).join(',')];
    for (const row of rows) lines.push(columns.map((_, c) => csvField(cellText(row[c] ?? null, 'csv'))).join(','));
    return lines.join('\n') + '\n';
  }
  // A column is right-aligned when every non-empty cell in it is a number.
  const align: Align[] = columns.map((_, c) =>
    rows.length > 0 && rows.every((r) => r[c] === null || r[c] === undefined || typeof r[c] === 'number') ? 'right' : 'left',
  );
  const body = markdownTable(columns, rows.map((r) => columns.map((_, c) => cellText(r[c] ?? null, 'markdown'))), align);
  const heading = `## ${params.title.replace(/[\r\n]+/g, ' ')}\n\n`;
  const footer = conventions ? `\n\n_Conventions: ${conventions}_` : '';
  return `${heading}${body}${footer}\n`;
}

/** "Worst queries — model-a.csv" → "worst-queries-model-a.md". */
export function suggestedFileName(title: string, format: 'markdown' | 'csv'): string {
  const stem =
    title
      .toLowerCase()
      .replace(/\.(csv|tsv|jsonl|parquet|run|gz)\b/g, '')
      .replace(/[^a-z0-9]+/g, '-')
      .replace(/^-+|-+$/g, '')
      .slice(0, 80) || 'gainline-export';
  return `${stem}.${format === 'csv' ? 'csv' : 'md'}`;
}

/** "NDCG@10 0.6123" — four decimals like the overview; "—" when no query counted; signed for a difference. */
export function formatHeadline(label: string, value: number | null, signed = false): string {
  if (value === null || !Number.isFinite(value)) return `${label} ${MISSING}`;
  return `${label} ${signed ? formatDelta(value) : formatFixed(value, 4)}`;
}
