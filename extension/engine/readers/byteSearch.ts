/**
 * Byte search bounded by the data's end. `Buffer.indexOf` has no end argument and scans to the end of
 * the buffer; a reader's buffer is usually larger than the bytes read into it, and what lies past them
 * is the previous chunk's (or file's) text, so an unbounded search for a byte the data lacks (a NUL,
 * a quote) scans megabytes of stale bytes per chunk and can even report a hit that is not data.
 */

/** Below this many bytes a plain loop beats making a view for the native search. */
const LOOP_BYTES = 64;

/** Index of the first `byte` in buf[start, end), or -1. */
export function indexOfByte(buf: Uint8Array, byte: number, start: number, end: number): number {
  if (end - start <= LOOP_BYTES) {
    for (let i = start; i < end; i++) if (buf[i] === byte) return i;
    return -1;
  }
  const found = buf.subarray(start, end).indexOf(byte);
  return found < 0 ? -1 : start + found;
}
