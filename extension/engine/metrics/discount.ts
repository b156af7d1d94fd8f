/**
 * The logarithmic position discount 1/log2(i+1) for 1-based position i (Järvelin & Kekäläinen 2002,
 * common practice), kept in a shared table with prefix sums so a tie group's total discount is one subtraction.
 */
/**
 * discount[i] for 0-based slot i; cumulative[i] = discount of slots 0..i-1 summed. One object, updated
 * when the table grows, so the per-query calls allocate nothing.
 */
const table = { discount: new Float64Array(0), cumulative: new Float64Array(1) };

function grow(slots: number): void {
  let size = Math.max(1024, table.discount.length);
  while (size < slots) size *= 2;
  const d = new Float64Array(size);
  const c = new Float64Array(size + 1);
  for (let i = 0; i < size; i++) {
    d[i] = 1 / Math.log2(i + 2);
    c[i + 1] = c[i]! + d[i]!;
  }
  table.discount = d;
  table.cumulative = c;
}

/** Make sure slots 0..slots-1 are in the table; call before a loop, then use the returned arrays. */
export function discountTable(slots: number): { readonly discount: Float64Array; readonly cumulative: Float64Array } {
  if (slots > table.discount.length) grow(slots);
  return table;
}

/** Discount of 1-based position `position` (no table). */
export function discountAt(position: number): number {
  return 1 / Math.log2(position + 1);
}
