/**
 * A table described once and used twice: to render cells and to export exactly what is shown.
 */
import type { ExportViewParams } from '../../../extension/protocol/messages';
import { MISSING } from './format';

export type Cell = string | number | null;

export interface ColumnDef<Row> {
  /** Sort key sent to the host (or used locally). */
  readonly key: string;
  readonly label: string;
  /** How the column is computed (header tooltip). */
  readonly title: string;
  readonly value: (row: Row) => Cell;
  /** Display text of a value; defaults to the raw string. */
  readonly format?: (value: Cell) => string;
  readonly numeric?: boolean;
  readonly sortable?: boolean;
  /** Share of the spare width (fr units); 0 keeps the column at its minimum. See columnLayout.ts. */
  readonly width?: number;
  /** Widest text the formatter produces for the expected range (sizes numeric columns), e.g. "-0.0000". */
  readonly sample?: string;
  /** Stays at the left edge while the grid scrolls sideways (leading columns only). */
  readonly sticky?: boolean;
  /** Show the value also as a bar of this fraction (0..1) of the cell. */
  readonly bar?: (row: Row) => number | null;
}

export function cellText<Row>(column: ColumnDef<Row>, row: Row): string {
  const v = column.value(row);
  if (column.format) return column.format(v);
  if (v === null || (typeof v === 'number' && Number.isNaN(v))) return MISSING;
  return String(v);
}

/** Raw values (numbers stay numbers, missing is null) so a CSV keeps full precision. */
export function exportParams<Row>(
  title: string,
  columns: readonly ColumnDef<Row>[],
  rows: readonly Row[],
  format: ExportViewParams['format'],
  destination: ExportViewParams['destination'],
): ExportViewParams {
  return {
    format,
    destination,
    title,
    columns: columns.map((c) => c.label),
    rows: rows.map((row) =>
      columns.map((c) => {
        const v = c.value(row);
        return typeof v === 'number' && !Number.isFinite(v) ? null : v;
      }),
    ),
  };
}
