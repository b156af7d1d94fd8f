/**
 * Series-wide query ids: one interning of query names across the checkpoints of a series, so every
 * checkpoint's per-query columns index one set of rows (the trajectories) by id.
 *
 * Checkpoints of one training job nearly always score the same queries in the same order (the
 * evaluation set is fixed, and each checkpoint's dump is written the same way). A checkpoint whose
 * names equal the first one's, position by position, takes the first one's ids as they are: one
 * string comparison per query and no table lookup. Any other checkpoint goes through the table, so a
 * query is the same id wherever it appears; new names get the next ids in order of first appearance.
 */
export class SeriesQueryIds {
  private readonly index = new Map<string, number>();
  private readonly names: string[] = [];
  /** The first checkpoint's names and ids (ids 0..n-1, as it came first). */
  private first: { readonly names: readonly string[]; readonly ids: Uint32Array } | undefined;

  /** Every name seen, by id. */
  get all(): readonly string[] {
    return this.names;
  }

  /** The ids of a checkpoint's query names, in its order (the returned array may be shared: do not write to it). */
  idsOf(names: readonly string[]): Uint32Array {
    const first = this.first;
    if (first !== undefined && sameNames(first.names, names)) return first.ids;
    const ids = new Uint32Array(names.length);
    for (let q = 0; q < names.length; q++) {
      const name = names[q]!;
      let id = this.index.get(name);
      if (id === undefined) {
        id = this.names.length;
        this.index.set(name, id);
        this.names.push(name);
      }
      ids[q] = id;
    }
    if (first === undefined) this.first = { names, ids };
    return ids;
  }
}

function sameNames(a: readonly string[], b: readonly string[]): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}
