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

/** `seen` with one more line, `line`, holding the keys `extra` (none when every key is the shape's). */
export function addUnreadLine(seen: UnreadFields | undefined, line: number, extra: readonly string[]): UnreadFields | undefined {
  if (extra.length === 0) return seen;
  if (seen === undefined) return { lines: 1, firstLine: line, keys: extra.slice(0, KEYS_NAMED) };
  const keys = seen.keys.length >= KEYS_NAMED ? seen.keys : [...new Set([...seen.keys, ...extra])].slice(0, KEYS_NAMED);
  return { lines: seen.lines + 1, firstLine: Math.min(seen.firstLine, line), keys };
}

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
