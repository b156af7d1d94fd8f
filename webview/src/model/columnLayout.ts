/**
 * Column widths for the grids, so no number and no header is ever cut short.
 *
 * Every numeric column gets a minimum width that fits its widest formatted value and its header;
 * text columns (query texts, segment values) fit the texts seen up to `TEXT_MAX_CH`, take the
 * remaining space and are the only ones allowed to end in an ellipsis. When the minimums add up to more than the panel is wide, the grid scrolls
 * sideways instead of squeezing.
 *
 * Widths are in `ch` (the advance of "0" in the grid's font). Digits are exactly 1ch under
 * `font-variant-numeric: tabular-nums`; every other character is given a width that errs wide for
 * the usual UI fonts (proportional sans-serifs, where capitals, "@", "%" and "m" are wider than "0").
 * A column may also grow after the fact when a value wider than its template shows up (`observe`),
 * but never shrinks while the same columns are shown, so rows do not jitter while scrolling.
 */

/** Horizontal padding of a cell (8px each side, see styles.css: .gl-vt-cell / .gl-vt-hcell). */
export const CELL_PADDING_PX = 16;
/** Text columns never get narrower than this (room for a recognisable query id). */
export const TEXT_MIN_CH = 18;
/**
 * Text columns grow to fit the texts seen, up to this: a query's whole text is worth more than spare
 * room spread over number columns (which only scroll sideways, never cut, when the room runs out).
 * Longer texts end in an ellipsis and show in full in the tooltip.
 */
export const TEXT_MAX_CH = 48;
/** The sort arrow shown after a header label; always reserved so sorting never moves columns. */
export const SORT_ARROW = ' ▲';
/** Headers are semibold: wider than the regular "0" that `ch` is measured on. */
const BOLD_FACTOR = 1.08;

const NARROW = new Set([...'.,:;\'|!ijlfrtI()[]/']);
const WIDE_LOWER = new Set([...'mw']);
const WIDE_UPPER = new Set([...'MW']);
const SIGNS = new Set([...'+−<>=×±']);
const SPECIFIC: Readonly<Record<string, number>> = {
  ' ': 0.6,
  '\u202f': 0.5, // narrow no-break space: the thousands separator of formatCount
  '\u2009': 0.5,
  '-': 0.7,
  '%': 1.6,
  '—': 1.8, // the missing-value marker
  '∞': 1.6,
  '@': 1.8,
  '▲': 1.5,
  '▼': 1.5,
  'Δ': 1.4,
  'τ': 1.1,
  '…': 1.8,
};

/** Width of one character in ch, erring wide. */
export function charWidthCh(ch: string): number {
  if (ch >= '0' && ch <= '9') return 1;
  const specific = SPECIFIC[ch];
  if (specific !== undefined) return specific;
  if (NARROW.has(ch)) return 0.7;
  if (SIGNS.has(ch)) return 1.4;
  if (WIDE_LOWER.has(ch)) return 1.6;
  if (WIDE_UPPER.has(ch)) return 1.8;
  if (ch >= 'a' && ch <= 'z') return 1.05;
  if (ch >= 'A' && ch <= 'Z') return 1.35;
  return 1.8; // anything else (other scripts, symbols): assume wide
}

/** Width of a text in ch, erring wide; `bold` for header weight. Rounded up to a tenth. */
export function textWidthCh(text: string, bold = false): number {
  let w = 0;
  for (const ch of text) w += charWidthCh(ch);
  if (bold) w *= BOLD_FACTOR;
  return w === 0 ? 0 : Math.ceil(w * 10 - 1e-9) / 10;
}

export interface ColumnSizing {
  readonly label: string;
  readonly numeric?: boolean;
  readonly sortable?: boolean;
  /** The widest text the column's formatter produces for its expected range, e.g. "-0.0000". */
  readonly sample?: string;
  /** Share of the spare width (fr). 0: exactly the minimum, never wider. Default 1. */
  readonly width?: number;
  /** Stays at the left edge while the grid scrolls sideways (only leading columns). */
  readonly sticky?: boolean;
}

/** Minimum width in ch of a column's content (padding excluded): header and widest value. */
export function minColumnCh(column: ColumnSizing): number {
  const header = textWidthCh(column.label + (column.sortable ? SORT_ARROW : ''), true);
  if (!column.numeric) return Math.max(header, TEXT_MIN_CH);
  return Math.max(header, column.sample === undefined ? 0 : textWidthCh(column.sample));
}

export interface GridTemplate {
  /** The value of `grid-template-columns`. */
  readonly columns: string;
  /** The whole row's minimum width (CSS length): wider than the panel means sideways scrolling. */
  readonly minWidth: string;
  /** CSS `left` of each sticky column (undefined for the others). */
  readonly stickyLeft: readonly (string | undefined)[];
}

const track = (ch: number): string => `calc(${ch}ch + ${CELL_PADDING_PX}px)`;

/**
 * The grid template for columns with the given minimum content widths (ch). A sticky column is
 * honoured only while every column before it is sticky too, and only a fixed-width (width 0)
 * sticky column can have another sticky column after it, so each `left` is a known length.
 */
export function gridTemplate(columns: readonly ColumnSizing[], minCh: readonly number[]): GridTemplate {
  const tracks: string[] = [];
  const stickyLeft: (string | undefined)[] = [];
  let stickyOpen = true;
  let leftCh = 0;
  let leftPx = 0;
  let totalCh = 0;
  columns.forEach((c, i) => {
    const ch = minCh[i] ?? minColumnCh(c);
    const grow = c.width ?? 1;
    tracks.push(grow === 0 ? track(ch) : `minmax(${track(ch)}, ${grow}fr)`);
    totalCh += ch;
    if (c.sticky && stickyOpen) {
      stickyLeft.push(leftCh === 0 && leftPx === 0 ? '0px' : `calc(${round(leftCh)}ch + ${leftPx}px)`);
      leftCh += ch;
      leftPx += CELL_PADDING_PX;
      if (grow !== 0) stickyOpen = false;
    } else {
      stickyLeft.push(undefined);
      stickyOpen = false;
    }
  });
  return {
    columns: tracks.join(' '),
    minWidth: `calc(${round(totalCh)}ch + ${columns.length * CELL_PADDING_PX}px)`,
    stickyLeft,
  };
}

const round = (x: number): number => Math.round(x * 10) / 10;

/** Minimum widths that start from the columns' templates and grow to fit values seen on screen. */
export class ColumnWidths {
  private readonly mins: number[];

  constructor(private readonly columns: readonly ColumnSizing[]) {
    this.mins = columns.map((c) => minColumnCh(c));
  }

  /** A value shown in column `index`; true when the column had to grow for it. */
  observe(index: number, text: string): boolean {
    const c = this.columns[index];
    if (!c) return false;
    const w = c.numeric ? textWidthCh(text) : Math.min(TEXT_MAX_CH, textWidthCh(text));
    if (w <= this.mins[index]!) return false;
    this.mins[index] = w;
    return true;
  }

  minCh(index: number): number {
    return this.mins[index] ?? 0;
  }

  template(): GridTemplate {
    return gridTemplate(this.columns, this.mins);
  }
}

/** Columns of a list whose rows are all known when it is drawn (the query detail's ranked lists). */
export interface FittedColumn {
  readonly header: string;
  /** Every text the column shows. */
  readonly texts: readonly string[];
  /** number: exactly as wide as its widest text; bar: text plus room for a bar, then grows; text: grows, ellipsis. */
  readonly kind: 'number' | 'bar' | 'text';
  /** Share of the spare width for bar and text columns (fr). */
  readonly grow?: number;
}

/** Room beside a number for its bar (at least this wide) and the gap before it. */
export const BAR_ROOM_CH = 6;
/** Text columns in the ranked lists stay at least this wide. */
export const LIST_TEXT_MIN_CH = 8;

/** Grid template fitted to the texts a list actually shows; `paddingPx` is a cell's horizontal padding. */
export function fittedTemplate(columns: readonly FittedColumn[], paddingPx: number): { columns: string; minWidth: string } {
  let totalCh = 0;
  const tracks = columns.map((c) => {
    const header = textWidthCh(c.header, true);
    const widest = c.texts.reduce((w, t) => Math.max(w, textWidthCh(t)), 0);
    const ch =
      c.kind === 'number' ? Math.max(header, widest) : c.kind === 'bar' ? Math.max(header, widest + BAR_ROOM_CH) : Math.max(header, LIST_TEXT_MIN_CH);
    totalCh += ch;
    const min = `calc(${ch}ch + ${paddingPx}px)`;
    return c.kind === 'number' ? min : `minmax(${min}, ${c.grow ?? (c.kind === 'text' ? 3 : 2)}fr)`;
  });
  return { columns: tracks.join(' '), minWidth: `calc(${round(totalCh)}ch + ${columns.length * paddingPx}px)` };
}

/** Widest-value templates for the formatters in format.ts. */
export const SAMPLES = {
  /** A metric in [-1, 1] with four decimals, sign included (formatFixed). */
  unitFixed: '-0.0000',
  /** A signed difference of such metrics (formatDelta). */
  unitDelta: '+0.0000',
  /** A share as a percentage (formatShare): "100.0%". */
  share: '100.0%',
  /** p-values (formatP). */
  p: '<0.0001',
  /** A row position up to 6 digits (100k queries). */
  rank: '000000',
  /** Counts below 100 000 with grouping (formatCount); larger ones widen the column when seen. */
  count: '99\u202f999',
} as const;
