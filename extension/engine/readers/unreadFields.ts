/**
 * JSON Lines fields the file's shape lacks. The shape (its keys, so its segments) is learnt from the first
 * lines (jsonLines.ts, SHAPE_LINES); a key first written on a later line has no column to go to. Such
 * lines are read for the roles they have, and the keys left over are counted and named in the notes,
 * never dropped unsaid.
 */

import { formatCountInText } from '../../presentation/numbers';

/** The lines holding keys the shape lacks: how many, the first of them, and the first few keys. */
export interface UnreadFields {
  readonly lines: number;
  readonly firstLine: number;
  readonly keys: readonly string[];
}

/** Keys named in the note; the count says how many lines there are. */
const KEYS_NAMED = 3;

/**
 * The count kept while a file is read: a line at a time, with no object made per line (on a file where
 * most lines hold such a key, a new count per line and each line's keys decoded cost more than reading
 * the rest of the line). A key's name is decoded only while fewer than KEYS_NAMED are named, and only when
 * its bytes are not those of a key named already.
 */
export class UnreadFieldsTally {
  private lines = 0;
  private firstLine = Infinity;
  private readonly keys: string[] = [];
  private readonly keyBytes: Uint8Array[] = [];

  /** One more line holding keys the shape lacks; then each of its keys in the line's order (addKey, addKeyBytes). */
  addLine(line: number): void {
    this.lines++;
    if (line < this.firstLine) this.firstLine = line;
  }

  /** True while the note names fewer keys than it may: the line's keys are wanted. */
  get wantsKeys(): boolean {
    return this.keys.length < KEYS_NAMED;
  }

  /** A key of the line last added, named when new and the note has room. */
  addKey(name: string): void {
    if (!this.wantsKeys || this.keys.includes(name)) return;
    this.keys.push(name);
    this.keyBytes.push(encoder.encode(name));
  }

  /** addKey for a key's UTF-8 bytes, buf[start, end) (valid UTF-8: the reader checked), decoded only when new. */
  addKeyBytes(buf: Uint8Array, start: number, end: number): void {
    if (!this.wantsKeys) return;
    const len = end - start;
    for (const known of this.keyBytes) {
      if (known.length !== len) continue;
      let i = 0;
      while (i < len && known[i] === buf[start + i]) i++;
      if (i === len) return;
    }
    this.addKey(decoder.decode(buf.subarray(start, end)));
  }

  /** The count so far; undefined when no line held such a key. */
  get counted(): UnreadFields | undefined {
    return this.lines === 0 ? undefined : { lines: this.lines, firstLine: this.firstLine, keys: [...this.keys] };
  }
}

const encoder = new TextEncoder();
const decoder = new TextDecoder();

/** The ranges' counts as one file's: range k's lines are shifted by lineOffsets[k]. */
export function mergeUnread(parts: readonly (UnreadFields | undefined)[], lineOffsets: readonly number[]): UnreadFields | undefined {
  let merged: UnreadFields | undefined;
  parts.forEach((part, k) => {
    if (part === undefined) return;
    const shifted = { ...part, firstLine: part.firstLine + lineOffsets[k]! };
    merged = merged === undefined ? shifted
      : { lines: merged.lines + shifted.lines, firstLine: Math.min(merged.firstLine, shifted.firstLine),
        keys: [...new Set([...merged.keys, ...shifted.keys])].slice(0, KEYS_NAMED) };
  });
  return merged;
}

/** The note for the report; `shapeLines`: how many lines the shape is learnt from, at most. */
export function unreadFieldsMessage(unread: UnreadFields, shapeLines: number): string {
  const keys = unread.keys.map((k) => `'${k}'`).join(', ');
  const lines = unread.lines === 1 ? '1 line holds' : `${formatCountInText(unread.lines)} lines hold`;
  return `${lines} fields the file's first lines do not (${keys}; the first on line ${unread.firstLine}): those fields are not read `
    + `(a file's fields are learnt from its first ${shapeLines} lines)`;
}
