/**
 * Where an evaluation's per-query columns live: plain arrays, or views carved from one SharedArrayBuffer
 * that the scoring threads all write into.
 *
 * One buffer rather than one per column, because of when its memory is first touched. A buffer past the
 * C allocator's largest pooled size comes straight from the kernel, untouched: each page is faulted in by
 * the scoring thread that first writes it, on both threads at once. Some twenty-five buffers of a few MB
 * came from the allocator's pool instead and were zeroed here, on this thread, before either thread could
 * score: 1M queries asked 150 MB, 5 ms when the machine had fresh pages at hand but 0.25 s when it had to
 * find them (the first run after a pause, as a command line usually runs), with the other scoring thread
 * started and waiting.
 */

export interface ColumnMemory {
  f64(length: number): Float64Array;
  u32(length: number): Uint32Array;
  u8(length: number): Uint8Array;
}

export const PLAIN_COLUMNS: ColumnMemory = {
  f64: (length) => new Float64Array(length),
  u32: (length) => new Uint32Array(length),
  u8: (length) => new Uint8Array(length),
};

/** Columns start on 8-byte boundaries (a Float64Array view must). */
const align = (bytes: number) => (bytes + 7) & ~7;

/**
 * Views into one SharedArrayBuffer of the bytes `lay` asks for: `lay` is called once with memory that only
 * measures (its arrays are empty), then the columns are carved in turn from the buffer, as the caller asks
 * for them with the returned memory. Asking for more than `lay` did throws.
 */
export function sharedColumnMemory(lay: (memory: ColumnMemory) => void): ColumnMemory {
  let size = 0;
  const measure = (bytes: number) => {
    size = align(size) + bytes;
  };
  lay({
    f64: (length) => (measure(length * 8), new Float64Array(0)),
    u32: (length) => (measure(length * 4), new Uint32Array(0)),
    u8: (length) => (measure(length), new Uint8Array(0)),
  });
  const buffer = new SharedArrayBuffer(size);
  let at = 0;
  const take = (bytes: number): number => {
    const start = align(at);
    if (start + bytes > size) throw new RangeError(`per-query columns asked for more than the ${size} bytes laid out`);
    at = start + bytes;
    return start;
  };
  return {
    f64: (length) => new Float64Array(buffer, take(length * 8), length),
    u32: (length) => new Uint32Array(buffer, take(length * 4), length),
    u8: (length) => new Uint8Array(buffer, take(length), length),
  };
}
