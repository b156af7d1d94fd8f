/**
 * Interned strings: each distinct string gets a dense id 0..size-1 in first-seen order.
 * Readers may implement this over raw bytes (hashing slices of the file buffer) to avoid
 * creating a JS string per row; consumers only see this interface.
 */
export interface StringPool {
  readonly size: number;
  /** The string for an id; ids are dense from 0. */
  get(id: number): string;
  /** The id of a string, or -1 when it was never interned. */
  find(text: string): number;
}

/** A simple pool backed by a Map; fine for queries and segment values, and for tests. */
export class MapStringPool implements StringPool {
  private readonly ids = new Map<string, number>();
  private readonly texts: string[] = [];

  get size(): number {
    return this.texts.length;
  }

  intern(text: string): number {
    let id = this.ids.get(text);
    if (id === undefined) {
      id = this.texts.length;
      this.ids.set(text, id);
      this.texts.push(text);
    }
    return id;
  }

  get(id: number): string {
    const t = this.texts[id];
    if (t === undefined) throw new RangeError(`string id ${id} out of range 0..${this.texts.length - 1}`);
    return t;
  }

  find(text: string): number {
    return this.ids.get(text) ?? -1;
  }
}
