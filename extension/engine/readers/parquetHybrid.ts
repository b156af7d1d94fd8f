/**
 * The RLE/bit-packed hybrid of the Parquet format (Encodings.md), in which definition levels and dictionary
 * indices are written, decoded into a typed array.
 */

export function readUint32(bytes: Uint8Array, at: number): number {
  return (bytes[at]! | (bytes[at + 1]! << 8) | (bytes[at + 2]! << 16) | (bytes[at + 3]! << 24)) >>> 0;
}

/**
 * `count` values of the RLE/bit-packed hybrid (Encodings.md): runs, each a ULEB128 header whose low bit says
 * bit-packed (header >> 1 groups of 8 values, `width` bits each, least significant bit first) or repeated
 * (header >> 1 copies of one value in ceil(width / 8) little-endian bytes). Throws when bytes[from, to)
 * ends first; values past `count` in the last run are padding.
 */
export function readHybrid(bytes: Uint8Array, from: number, to: number, width: number, out: Int32Array | Uint8Array, count: number): void {
  if (width > 24) throw new Error('a bit width over 24');
  const mask = (1 << width) - 1;
  const valueBytes = (width + 7) >> 3;
  let at = from;
  let seen = 0;
  while (seen < count) {
    let header = 0;
    let factor = 1;
    for (;;) {
      if (at >= to) throw new Error('levels or indices end early');
      const b = bytes[at++]!;
      header += (b & 0x7f) * factor;
      factor *= 128;
      if (b < 0x80) break;
    }
    const runs = Math.floor(header / 2);
    if (header % 2 === 1) {
      const runEnd = at + runs * width;
      if (runEnd > to) throw new Error('a bit-packed run past the end');
      const n = Math.min(runs * 8, count - seen);
      let data = 0;
      let bits = 0;
      for (let i = 0; i < n; i++) {
        while (bits < width) {
          data |= bytes[at++]! << bits;
          bits += 8;
        }
        out[seen++] = data & mask;
        data >>>= width;
        bits -= width;
      }
      at = runEnd;
    } else {
      if (at + valueBytes > to) throw new Error('a repeated run past the end');
      let value = 0;
      for (let i = 0; i < valueBytes; i++) value += bytes[at++]! * 2 ** (8 * i);
      if (value > mask) throw new Error('a repeated value wider than its bit width');
      const n = Math.min(runs, count - seen);
      out.fill(value, seen, seen + n);
      seen += n;
    }
  }
}
