/** Report formats for one evaluated dump; every one is a pure function of the evaluation. */
import { renderInOrder } from '../threads/renderInOrder';
import { csvRowsWork, formatCsv } from './csv';
import { formatJson, formatJsonPieces, jsonFrame, RECORD_SEPARATOR, type ReportPiece } from './json';
import { queryRecordsWork } from './jsonRecords';
import { formatMarkdown } from './markdown';
import type { ReportInput, WorstOrder } from './reportInput';
import { formatTable } from './table';

export type ReportFormat = 'table' | 'json' | 'csv' | 'markdown';
export const REPORT_FORMATS: readonly ReportFormat[] = ['table', 'json', 'csv', 'markdown'];

export function formatReport(format: ReportFormat, input: ReportInput, options: { readonly worst: number; readonly worstOrder?: WorstOrder }): string {
  switch (format) {
    case 'table':
      return formatTable(input, options);
    case 'json':
      return formatJson(input);
    case 'csv':
      return formatCsv(input);
    case 'markdown':
      return formatMarkdown(input, options);
  }
}

/** formatReport's text in pieces to write in turn, each made as it is asked for (JSON splices its records rather than joining them). */
export function formatReportPieces(format: ReportFormat, input: ReportInput, options: { readonly worst: number; readonly worstOrder?: WorstOrder }): Iterable<ReportPiece> {
  return format === 'json' ? formatJsonPieces(input) : [formatReport(format, input, options)];
}

/**
 * Writes formatReport's text piece by piece. The JSON report's records and the CSV report's rows are
 * rendered on this thread and, for many queries, a score thread at once (threads/renderInOrder.ts; rows
 * with query facts on this thread only), and written in query order as they come; `threads` as
 * renderInOrder takes them.
 */
export async function writeReport(format: ReportFormat, input: ReportInput, options: { readonly worst: number; readonly worstOrder?: WorstOrder },
  write: (piece: ReportPiece) => void, threads?: number): Promise<void> {
  const renderOptions = threads !== undefined ? { threads } : {};
  if (format === 'csv') {
    const workAfterHeader = () => {
      const { header, work } = csvRowsWork(input);
      write(`${header}\n`);
      return work;
    };
    await renderInOrder(workAfterHeader, input.evaluation.perQuery, input.evaluation.queryCount, (utf8, chunk) => {
      if (chunk > 0) write('\n');
      write(utf8);
    }, renderOptions);
    if (input.evaluation.queryCount > 0) write('\n');
    return;
  }
  if (format !== 'json' || input.facts !== undefined) {
    for (const piece of formatReportPieces(format, input, options)) write(piece);
    return;
  }
  const ev = input.evaluation;
  const frame = jsonFrame(input);
  write(frame.before);
  await renderInOrder(() => queryRecordsWork(ev.metrics, input.queryNames, ev.judgments !== undefined), ev.perQuery, ev.queryCount, (utf8, chunk) => {
    if (chunk > 0) write(RECORD_SEPARATOR);
    write(utf8);
  }, renderOptions);
  write(frame.after);
}

export type { ReportInput } from './reportInput';
export type { ReportPiece } from './json';
