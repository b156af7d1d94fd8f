/** Entry point of the comparison reports: one pure function of the comparison per format. */
import { formatCompareCsv } from './compareCsv';
import { formatCompareJson } from './compareJson';
import { formatCompareMarkdown } from './compareMarkdown';
import type { CompareReportInput, CompareReportOptions } from './compareShared';
import { formatCompareTable } from './compareTable';

export type CompareFormat = 'table' | 'json' | 'markdown' | 'csv';
export const COMPARE_FORMATS: readonly CompareFormat[] = ['table', 'json', 'markdown', 'csv'];

export function formatComparison(format: CompareFormat, input: CompareReportInput, options: CompareReportOptions): string {
  switch (format) {
    case 'table':
      return formatCompareTable(input, options);
    case 'json':
      return formatCompareJson(input, options);
    case 'markdown':
      return formatCompareMarkdown(input, options);
    case 'csv':
      return formatCompareCsv(input);
  }
}

export type { CompareReportInput, CompareReportOptions } from './compareShared';
