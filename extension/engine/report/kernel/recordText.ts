// AssemblyScript, compiled to WebAssembly by build.mjs (not part of the TypeScript program).
//
// Writes the JSON report's per-query records as UTF-8 bytes: the text `JSON.stringify(…, null, 1)`
// gives them, to the byte; and the CSV report's rows the same way. The host (../recordTextKernel.ts) lays
// out a record as a list of fields, each a literal (keys, punctuation, indentation, made by
// JSON.stringify on the host; for CSV a comma) followed by a value from a column: a query name (already
// escaped by the host), an unsigned integer, a number (the host's text for one not finite: JSON's null,
// CSV's empty cell) or a flag. Rendering records as objects and stringifying them cost V8 about
// 3 µs a record; most of that was building the objects, the rest printing the numbers.
//
// Numbers are printed as JavaScript prints them (numberText.ts).
//
// Memory layout (byte offsets passed by the host): static data (the power-of-five tables) first, then
// whatever the host places after `dataEnd()`.

import { copyDigits, DIGITS, writeDigits, writeNumber } from './numberText';

export { writeNumber };

export function dataEnd(): usize {
  return __heap_base;
}

// Value kinds of a record field, as the host numbers them (recordTextKernel.ts).
const KIND_NAME: i32 = 0; // bytes names[ends[q-1], ends[q]) (escaped by the host)
const KIND_UINT: i32 = 1; // u32 column
const KIND_NUMBER: i32 = 2; // f64 column, null when not finite
const KIND_FLAG: i32 = 3; // u8 column: true when 1

/** Copies `length` bytes 16 at a time: the host leaves 16 bytes of room after every source and the output. */
@inline function copyBytes(to: usize, from: usize, length: usize): usize {
  for (let i: usize = 0; i < length; i += 16) v128.store(to + i, v128.load(from + i));
  return to + length;
}

/**
 * Writes `count` records at `out`, `separator` between them; returns the end. `fields` holds four i32 per
 * field: kind, literal address, literal length, column address (for names: the ends' address, with the
 * bytes at `names`). `tail` is written after each record's last field, `notFinite` for a number that is not.
 */
export function writeRecords(count: i32, fields: usize, fieldCount: i32, names: usize, tail: usize, tailLength: usize, out: usize,
  separator: usize, separatorLength: usize, notFinite: usize, notFiniteLength: usize): usize {
  let p = out;
  for (let q = 0; q < count; q++) {
    if (q > 0) p = copyBytes(p, separator, separatorLength);
    for (let f = 0; f < fieldCount; f++) {
      const field = fields + (<usize>f << 4);
      const kind = load<i32>(field);
      p = copyBytes(p, <usize>load<u32>(field, 4), <usize>load<u32>(field, 8));
      const column = <usize>load<u32>(field, 12);
      if (kind == KIND_NUMBER) {
        const v = load<f64>(column + (<usize>q << 3));
        if (v - v == 0) p = writeNumber(v, p);
        else p = copyBytes(p, notFinite, notFiniteLength);
      } else if (kind == KIND_UINT) {
        const count = writeDigits(<u64>load<u32>(column + (<usize>q << 2)), DIGITS + 32);
        p = copyDigits(p, DIGITS + 32 - <usize>count, count);
      } else if (kind == KIND_NAME) {
        const from = q == 0 ? 0 : load<u32>(column + (<usize>(q - 1) << 2));
        const to = load<u32>(column + (<usize>q << 2));
        p = copyBytes(p, names + <usize>from, <usize>(to - from));
      } else if (kind == KIND_FLAG) {
        if (load<u8>(column + <usize>q) == 1) {
          store<u32>(p, 0x65757274); // "true"
          p += 4;
        } else {
          store<u32>(p, 0x736c6166); // "fals"
          store<u8>(p + 4, 0x65); // "e"
          p += 5;
        }
      }
    }
    p = copyBytes(p, tail, tailLength);
  }
  return p;
}
