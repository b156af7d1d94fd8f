/** Column-aligned plain text and Markdown tables. */

export type Align = 'left' | 'right';

/** Pads every column to its widest cell; two spaces between columns, indented by `indent`. */
export function alignedTable(header: readonly string[], rows: readonly (readonly string[])[], align: readonly Align[], indent = '  '): string {
  const widths = header.map((h, c) => Math.max(width(h), ...rows.map((r) => width(r[c] ?? ''))));
  const line = (cells: readonly string[]) =>
    indent +
    cells
      .map((cell, c) => (align[c] === 'right' ? pad(cell, widths[c]!, true) : pad(cell, widths[c]!, false)))
      .join('  ')
      .trimEnd();
  return [line(header), ...rows.map(line)].join('\n');
}

export function markdownTable(header: readonly string[], rows: readonly (readonly string[])[], align: readonly Align[]): string {
  const escape = (cell: string) => cell.replaceAll('|', '\\|').replace(/[\r\n]+/g, ' ');
  const rule = align.map((a) => (a === 'right' ? '---:' : '---'));
  return [header, rule, ...rows].map((cells) => `| ${cells.map(escape).join(' | ')} |`).join('\n');
}

/** Shortens long text with an ellipsis so one query name cannot stretch the whole table. */
export function clip(text: string, max: number): string {
  const chars = [...text];
  return chars.length <= max ? text : chars.slice(0, max - 1).join('') + '…';
}

function width(text: string): number {
  return [...text].length;
}

function pad(text: string, to: number, right: boolean): string {
  const fill = ' '.repeat(Math.max(0, to - width(text)));
  return right ? fill + text : text + fill;
}
