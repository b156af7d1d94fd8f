/**
 * (query id, item id) → entry index, for joining judgments to a dump: open addressing in one typed array,
 * sized once for the entries it will hold. A Map keyed by query × items + item was three to four times
 * slower on a million judgments (its keys pass 2^31 and become heap numbers).
 */
export class PairIndex {
  /** Three ints per slot, side by side so one probe touches one cache line: query, item, entry + 1 (0 = empty). */
  private readonly slots: Int32Array;
  private readonly mask: number;

  constructor(entries: number) {
    let size = 16;
    while (size < entries * 2) size *= 2;
    this.slots = new Int32Array(size * 3);
    this.mask = size - 1;
  }

  /** Stores `entry` for the pair unless it is there already; returns the earlier entry, or -1. */
  add(query: number, item: number, entry: number): number {
    const slots = this.slots;
    let at = this.slotOf(query, item) * 3;
    while (slots[at + 2] !== 0) {
      if (slots[at] === query && slots[at + 1] === item) return slots[at + 2]! - 1;
      at = at + 3 === slots.length ? 0 : at + 3;
    }
    slots[at] = query;
    slots[at + 1] = item;
    slots[at + 2] = entry + 1;
    return -1;
  }

  /** The entry of the pair, or -1. */
  find(query: number, item: number): number {
    const slots = this.slots;
    let at = this.slotOf(query, item) * 3;
    while (slots[at + 2] !== 0) {
      if (slots[at] === query && slots[at + 1] === item) return slots[at + 2]! - 1;
      at = at + 3 === slots.length ? 0 : at + 3;
    }
    return -1;
  }

  private slotOf(query: number, item: number): number {
    // Both ids combined, then MurmurHash3's 32-bit finaliser, so that runs of consecutive ids (the usual
    // case: ids are interned in file order) spread over the whole table instead of clustering.
    let h = (Math.imul(query, 0x9e3779b1) + item) | 0;
    h ^= h >>> 16;
    h = Math.imul(h, 0x85ebca6b);
    h ^= h >>> 13;
    h = Math.imul(h, 0xc2b2ae35);
    h ^= h >>> 16;
    return h & this.mask;
  }
}
