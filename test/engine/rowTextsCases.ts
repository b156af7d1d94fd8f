/**
 * Seeded random rows for the tests of item bytes per row (model/rowTexts.ts) and the slow obvious keys:
 * the first row of the query naming the item, from a Map of item text per query.
 */
import { hashBytes } from '../../extension/engine/model/bytePool';
import { RowTexts } from '../../extension/engine/model/rowTexts';
import { seededRandom } from '../reference/random';

const encoder = new TextEncoder();
// Short ids from a small set so that repeats within a query and across queries are common; some share
// a prefix, one is empty, some are not ASCII.
const ALPHABET = ['a', 'b', 'ab', 'ba', 'SKU-1', 'SKU-10', 'SKU-100', '', 'Schraube ø4', 'vis à bois', 'x'.repeat(40)];

export interface Case {
  readonly query: Uint32Array;
  readonly items: string[];
  readonly queryCount: number;
}

export function randomCase(seed: number, rows: number, grouped: boolean): Case {
  const rnd = seededRandom(seed);
  const queryCount = Math.max(1, Math.floor(rows / 7));
  const query = new Uint32Array(rows);
  const items: string[] = [];
  for (let r = 0; r < rows; r++) {
    // Grouped: query ids climb in first-seen order; scattered: any query at any row.
    query[r] = grouped ? Math.min(queryCount - 1, Math.floor((r * queryCount) / rows)) : Math.floor(rnd() * queryCount);
    items.push(rnd() < 0.7 ? ALPHABET[Math.floor(rnd() * ALPHABET.length)]! : `sku-${Math.floor(rnd() * 50)}`);
  }
  if (!grouped) {
    // Ids in first-seen order, as readers give them.
    const renumber = new Map<number, number>();
    for (let r = 0; r < rows; r++) {
      if (!renumber.has(query[r]!)) renumber.set(query[r]!, renumber.size);
      query[r] = renumber.get(query[r]!)!;
    }
    return { query, items, queryCount: renumber.size };
  }
  return { query, items, queryCount };
}

/** The records of `c`, split into `parts` parts joined as a parallel read joins its ranges. */
export function textsOf(c: Case, parts: number): RowTexts {
  if (parts === 1) {
    const texts = new RowTexts(4, 2);
    for (const item of c.items) {
      const bytes = encoder.encode(item);
      texts.add(bytes, 0, bytes.length);
    }
    return texts;
  }
  const states = [];
  for (let k = 0; k < parts; k++) {
    const part = new RowTexts(4, 2);
    const from = Math.floor((k * c.items.length) / parts);
    const to = Math.floor(((k + 1) * c.items.length) / parts);
    for (let r = from; r < to; r++) {
      const bytes = encoder.encode(c.items[r]!);
      part.add(bytes, 0, bytes.length);
    }
    states.push(part.exportState());
  }
  return RowTexts.concat(states);
}

export function slowKeys(c: Case): number[] {
  const firstRow = new Map<string, number>();
  return c.items.map((item, r) => {
    const key = `${c.query[r]}\u0000${item}`;
    if (!firstRow.has(key)) firstRow.set(key, r);
    return firstRow.get(key)!;
  });
}

export function hashes(c: Case): Uint32Array {
  return Uint32Array.from(c.items, (item) => {
    const bytes = encoder.encode(item);
    return hashBytes(bytes, 0, bytes.length);
  });
}

