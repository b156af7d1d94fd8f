/**
 * One query's list, loaded from the dump into reusable scratch arrays: duplicates dropped, sorted by score
 * (descending; file order among equal scores; items without a score last, in file order), cut into tie
 * groups, then arranged under the tie convention. Nothing here allocates per row.
 */
import type { RankedDump, UnretrievedJudged } from '../model/dump';
import type { GroupedValues } from '../model/groups';
import type { TieConvention } from '../metrics/conventions';
import type { GroupedList } from '../metrics/listMetrics';
import { IndexSorter } from './sortIndex';

/**
 * A faster sort giving IndexSorter's order, into whose memory the keys are written (the WebAssembly one,
 * keySortKernel.ts, which registers itself when a Node entry point loads it; this module also runs where
 * there is no Node).
 */
export interface KeyOrderSorter {
  readonly capacity: number;
  readonly keys: Float64Array;
  readonly order: Uint32Array;
  sort(n: number): void;
}
let kernelSorter: () => KeyOrderSorter | undefined = () => undefined;

export function useKernelSorter(make: () => KeyOrderSorter | undefined): void {
  kernelSorter = make;
}

/**
 * The items already met in the current query: a small open-addressing set, sized to the query and
 * emptied by moving to a new stamp. (One mark per item of the whole dump was simpler, but with
 * millions of items nearly every look-up missed the CPU caches.)
 */
export class SeenItems {
  keys = new Int32Array(256);
  stamps = new Int32Array(256);
  mask = 255;
  /** 32 − log2(table size): the multiplied id's top bits pick the slot. */
  shift = 24;
  stamp = 0;

  /** Empties the set for a query of up to n items; returns the stamp that marks its slots. */
  next(n: number): number {
    let size = 256;
    let shift = 24;
    while (size < 2 * n) {
      size *= 2;
      shift--;
    }
    if (size > this.keys.length) {
      this.keys = new Int32Array(size);
      this.stamps = new Int32Array(size);
      this.stamp = 0;
    }
    this.mask = size - 1;
    this.shift = shift;
    return ++this.stamp;
  }

  /** True when `item` is in the set under `stamp` already; otherwise adds it. */
  met(item: number, stamp: number): boolean {
    const { keys, stamps, mask } = this;
    let slot = Math.imul(item, SPREAD) >>> this.shift;
    while (stamps[slot] === stamp && keys[slot] !== item) slot = (slot + 1) & mask;
    if (stamps[slot] === stamp) return true;
    stamps[slot] = stamp;
    keys[slot] = item;
    return false;
  }
}

/** Fibonacci hashing (Knuth): the top bits of id × 2^32/φ spread nearby ids over the whole table. */
const SPREAD = 0x9e3779b1 | 0;

/** The arranged list; one object reused for every query. */
type Arranged = { -readonly [K in keyof GroupedList]: GroupedList[K] };

/**
 * Lists up to this long are ordered here rather than by the sort kernel: a call into WebAssembly costs more
 * than sorting a handful of keys. 1M queries of about 10 items, one thread: scored in 2.51-2.53 s against
 * 2.56-2.72 s (best of 4, two rounds). The kernel itself finishes runs of 16 by insertion.
 */
const SORTED_HERE_UP_TO = 16;

/**
 * idx[0..n) = 0..n-1 in descending key order, equal keys in index order: the kernel's order (a stable
 * sort's result is unique), by insertion.
 */
export function insertionOrder(key: Float64Array, idx: Uint32Array, n: number): void {
  for (let i = 0; i < n; i++) {
    const k = key[i]!;
    let j = i - 1;
    while (j >= 0 && key[idx[j]!]! < k) {
      idx[j + 1] = idx[j]!;
      j--;
    }
    idx[j + 1] = i;
  }
}

export class QueryRanking {
  n = 0;
  duplicates = 0;
  missingScores = 0;
  unjudgedRows = 0;
  tiedRows = 0;
  /** Items with a score (they occupy the first `scored` slots). */
  scored = 0;
  /**
   * Judged items of the query that the list lacks (labels from a judgments file): they count in the
   * ideal ranking and the judged-set denominators, never in the list itself. Set by `setUnretrieved`.
   */
  unretrieved = 0;
  unretrievedGrade: Float64Array = new Float64Array(0);

  // Ranked order: score descending, file order within equal scores, unscored last (score −Infinity here).
  row = new Uint32Array(0);
  score = new Float64Array(0);
  grade = new Float64Array(0);
  unjudged = new Uint8Array(0);
  /** Tie groups of the ranked order: equal scores together; every unscored item alone. */
  tieBounds = new Uint32Array(0);
  tieGroups = 0;
  /** Score classes for pair counting: like tie groups but all unscored items form one class. */
  classBounds = new Uint32Array(0);
  classes = 0;

  /** The list under the tie convention; `order[slot]` = ranked slot placed there. */
  order = new Uint32Array(0);
  readonly arranged: Arranged = { n: 0, grade: this.grade, unjudged: this.unjudged, bounds: this.tieBounds, groups: 0 };

  private key = new Float64Array(0);
  private localRow = new Uint32Array(0);
  private localGrade = new Float64Array(0);
  private idx = new Uint32Array(0);
  private arrangedGrade = new Float64Array(0);
  private arrangedUnjudged = new Uint8Array(0);
  private singletons = new Uint32Array(0);
  private readonly sorter = new IndexSorter();
  /** The WebAssembly sort of this thread, when it can run (the same order, faster). */
  private readonly kernel = kernelSorter();

  private ensure(n: number): void {
    if (this.row.length >= n) return;
    const size = Math.max(n, this.row.length * 2, 64);
    this.row = new Uint32Array(size);
    this.score = new Float64Array(size);
    this.grade = new Float64Array(size);
    this.unjudged = new Uint8Array(size);
    this.tieBounds = new Uint32Array(size + 1);
    this.classBounds = new Uint32Array(size + 1);
    this.order = new Uint32Array(size);
    this.key = new Float64Array(size);
    this.localRow = new Uint32Array(size);
    this.localGrade = new Float64Array(size);
    this.idx = new Uint32Array(size);
    this.arrangedGrade = new Float64Array(size);
    this.arrangedUnjudged = new Uint8Array(size);
    this.singletons = new Uint32Array(size + 1);
    for (let i = 0; i <= size; i++) this.singletons[i] = i;
  }

  /**
   * Loads rows[from..to) (one query's rows in file order; without `rows`, rows from..to themselves). A
   * repeated item keeps its first row. With query-scoped keys (`itemKey`: a row's key is the first row of
   * its query naming the same item) a row is a repeat exactly when its key is not itself, so no set of
   * the query's items is needed.
   */
  load(dump: Pick<RankedDump, 'item' | 'itemKey' | 'score' | 'label'>, rows: Uint32Array | undefined, from: number, to: number, seen: SeenItems,
    inOrder?: GroupedValues): void {
    this.ensure(to - from);
    this.unretrieved = 0;
    const scores = dump.score;
    const labels = dump.label;
    // The kernel's arrays are views of its memory: the keys go straight in and the order comes straight out.
    const kernel = this.kernel !== undefined && to - from <= this.kernel.capacity ? this.kernel : undefined;
    const key = kernel?.keys ?? this.key;
    const localRow = this.localRow;
    const localGrade = this.localGrade;
    const idx = kernel?.order ?? this.idx;
    const firstRows = dump.itemKey;
    // Without keys, the query's items go through the set (a new stamp empties it). With them, `item` is
    // not even read: a reader that keeps item bytes per row makes it on first use, at a cost.
    const items = firstRows === undefined ? dump.item : undefined;
    const stamp = firstRows === undefined ? seen.next(to - from) : 0;
    let n = 0;
    if (inOrder !== undefined && rows !== undefined) n = this.collectInOrder(inOrder, rows, from, to, key);
    else for (let p = from; p < to; p++) {
      const r = rows === undefined ? p : rows[p]!;
      if (firstRows !== undefined ? firstRows[r] !== r : seen.met(items![r]! | 0, stamp)) continue;
      const s = scores[r]!;
      key[n] = s === s ? s : -Infinity;
      localRow[n] = r;
      localGrade[n] = labels[r]!;
      n++;
    }
    this.n = n;
    this.duplicates = to - from - n;
    if (kernel !== undefined) {
      if (n > SORTED_HERE_UP_TO) kernel.sort(n);
      else insertionOrder(key, idx, n);
    } else {
      for (let i = 0; i < n; i++) idx[i] = i;
      this.sorter.sortDescending(idx, key, n);
    }

    const row = this.row;
    const score = this.score;
    const grade = this.grade;
    const unjudged = this.unjudged;
    let missing = 0;
    let unjudgedRows = 0;
    for (let i = 0; i < n; i++) {
      const j = idx[i]!;
      row[i] = localRow[j]!;
      const s = key[j]!;
      score[i] = s;
      if (s === -Infinity) missing++;
      const g = localGrade[j]!;
      if (g === g) {
        grade[i] = g;
        unjudged[i] = 0;
      } else {
        grade[i] = 0;
        unjudged[i] = 1;
        unjudgedRows++;
      }
    }
    this.missingScores = missing;
    this.unjudgedRows = unjudgedRows;
    this.scored = n - missing;
    this.cutGroups();
  }

  /**
   * load's first loop over values in grouped order (GroupedValues, made with the grouping): the same rows,
   * keys and grades, read side by side at positions from..to instead of at rows anywhere in the dump.
   */
  private collectInOrder(inOrder: GroupedValues, rows: Uint32Array, from: number, to: number, key: Float64Array): number {
    const { score, label, first } = inOrder;
    const { localRow, localGrade } = this;
    let n = 0;
    for (let p = from; p < to; p++) {
      if (first[p] === 0) continue;
      const s = score[p]!;
      key[n] = s === s ? s : -Infinity;
      localRow[n] = rows[p]!;
      localGrade[n] = label[p]!;
      n++;
    }
    return n;
  }

  /** Takes the query's judged-but-unretrieved grades from the side table (none when it is absent). */
  setUnretrieved(side: UnretrievedJudged | undefined, query: number): void {
    if (side === undefined) {
      this.unretrieved = 0;
      return;
    }
    const s = side.start[query]!;
    const e = side.start[query + 1]!;
    this.unretrieved = e - s;
    this.unretrievedGrade = side.grade.subarray(s, e);
  }

  private cutGroups(): void {
    const n = this.n;
    const scored = this.scored;
    const score = this.score;
    const tb = this.tieBounds;
    let groups = 0;
    let tied = 0;
    for (let i = 0; i < scored; ) {
      let e = i + 1;
      while (e < scored && score[e] === score[i]) e++;
      tb[groups++] = i;
      if (e - i > 1) tied += e - i;
      i = e;
    }
    const classes = groups;
    const cb = this.classBounds;
    for (let g = 0; g < groups; g++) cb[g] = tb[g]!;
    for (let i = scored; i < n; i++) tb[groups++] = i;
    tb[groups] = n;
    this.tieGroups = groups;
    let c = classes;
    if (scored < n) this.classBounds[c++] = scored;
    this.classBounds[c] = n;
    this.classes = c;
    this.tiedRows = tied;
  }

  /** Orders each tie group under the convention; afterwards `arranged` and `order` describe the list. */
  arrange(ties: TieConvention): void {
    const n = this.n;
    const order = this.order;
    for (let i = 0; i < n; i++) order[i] = i;
    if (ties === 'average') {
      this.setArranged(n, this.grade, this.unjudged, this.tieBounds, this.tieGroups);
      return;
    }
    if (ties === 'file-order' || this.tiedRows === 0) {
      this.setArranged(n, this.grade, this.unjudged, this.singletons, n);
      return;
    }
    // Pessimistic: lower grades first; optimistic: higher first. Stable, so file order breaks equal grades.
    const sign = ties === 'optimistic' ? 1 : -1;
    const key = this.key;
    for (let i = 0; i < n; i++) key[i] = sign * this.grade[i]!;
    const tb = this.tieBounds;
    for (let g = 0; g < this.tieGroups; g++) {
      const s = tb[g]!;
      const e = tb[g + 1]!;
      if (e - s > 1) this.sorter.sortDescending(order.subarray(s, e), key, e - s);
    }
    const grade = this.arrangedGrade;
    const unjudged = this.arrangedUnjudged;
    for (let i = 0; i < n; i++) {
      grade[i] = this.grade[order[i]!]!;
      unjudged[i] = this.unjudged[order[i]!]!;
    }
    this.setArranged(n, grade, unjudged, this.singletons, n);
  }

  private setArranged(n: number, grade: Float64Array, unjudged: Uint8Array, bounds: Uint32Array, groups: number): void {
    const a = this.arranged;
    a.n = n;
    a.grade = grade;
    a.unjudged = unjudged;
    a.bounds = bounds;
    a.groups = groups;
  }
}
