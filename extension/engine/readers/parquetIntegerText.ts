/**
 * Integer ids of a Parquet column (INT32 or INT64, item and query ids are often numbers) as the decimal text
 * the decoder's values print as: String(number) for INT32 and String(bigint) for INT64, a minus sign and the
 * digits. Written for a whole page at once into one byte array, so the typed pages (parquetTypedPages.ts)
 * read them as text ranges like any string column.
 */

const TWO_32 = 4294967296;
/** The most bytes one value prints as: a minus and 10 digits for INT32 (-2147483648), 19 for INT64. */
const MOST_BYTES_32 = 11;
const MOST_BYTES_64 = 20;

/**
 * PLAIN INT32 or INT64 values from bytes[at..] (`width` 4 or 8), `count` of them, printed one after another
 * into a new array; value v is out[starts[v], ends[v]). Throws when the page ends first.
 */
export function integerTexts(bytes: Uint8Array, at: number, count: number, width: 4 | 8, starts: Int32Array, ends: Int32Array): Uint8Array {
  if (at + count * width > bytes.length) throw new Error('a page ends inside its values');
  const view = new DataView(bytes.buffer, bytes.byteOffset + at, count * width);
  // Sized for the widest value of the type: a page of millions of values should not reserve twice what it needs.
  const out = new Uint8Array(count * (width === 4 ? MOST_BYTES_32 : MOST_BYTES_64));
  let p = 0;
  for (let v = 0; v < count; v++) {
    starts[v] = p;
    const n = width === 4 ? view.getInt32(4 * v, true) : view.getInt32(8 * v + 4, true) * TWO_32 + view.getUint32(8 * v, true);
    // hi × 2^32 + lo is exact below 2^53 in size; beyond, the value is printed from its two halves as a bigint.
    if (Number.isSafeInteger(n)) p = printInteger(n, out, p);
    else {
      const big = (BigInt(view.getInt32(8 * v + 4, true)) << 32n) | BigInt(view.getUint32(8 * v, true));
      for (const c of big.toString()) out[p++] = c.charCodeAt(0);
    }
    ends[v] = p;
  }
  return out;
}

/** The decimal digits of a safe integer at out[p..]; returns the end. Division by ten is exact below 2^53 (floor of a quotient off by less than 0.1). */
function printInteger(n: number, out: Uint8Array, p: number): number {
  if (n < 0) {
    out[p++] = 45;
    n = -n;
  }
  let digits = 1;
  for (let t = n; t >= 10; t = Math.floor(t / 10)) digits++;
  for (let d = digits - 1; d >= 0; d--) {
    const next = Math.floor(n / 10);
    out[p + d] = 48 + (n - next * 10);
    n = next;
  }
  return p + digits;
}
