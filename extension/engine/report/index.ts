/** Report formats for one evaluated dump; every one is a pure function of the evaluation. */
import { formatCsv } from './csv';
import { formatJson, formatJsonPieces, type ReportPiece } from './json';
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

export type { ReportInput } from './reportInput';
export type { ReportPiece } from './json';
