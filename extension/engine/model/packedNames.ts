/**
 * Names (or any texts) as UTF-8 bytes one after another: name i is bytes[ends[i - 1] (0 for i = 0), ends[i]).
 * A stream block hands its query names to the per-query table so (stream/streamColumns.ts): as strings, the
 * clone between threads and the encoding again for the table's pool cost that thread about 2 µs a query
 * (1M queries of ten rows). The record writer's escaped names take the same form (report/recordTextKernel.ts).
 */
export interface PackedNames {
  readonly bytes: Uint8Array;
  readonly ends: Uint32Array;
}

/** Names packed one after another. */
export function packNames(names: readonly Uint8Array[]): PackedNames {
  const ends = new Uint32Array(names.length);
  let total = 0;
  names.forEach((name, i) => (ends[i] = total += name.length));
  const bytes = new Uint8Array(total);
  names.forEach((name, i) => bytes.set(name, i === 0 ? 0 : ends[i - 1]!));
  return { bytes, ends };
}

const encoder = new TextEncoder();

/** Names given as text, packed. */
export function packTexts(names: readonly string[]): PackedNames {
  return packNames(names.map((name) => encoder.encode(name)));
}
