/**
 * The columnar in-memory form of one prediction dump.
 *
 * Every reader produces exactly this shape. One row of the file is one (query, item) pair; the
 * row's fields live at the same index in every column. No JS object is made per row: a 10M-row
 * dump is a handful of typed arrays plus two interned string pools.
 */
import type { StringPool } from './stringPool';

export type DumpFormat = 'csv' | 'tsv' | 'jsonl' | 'run' | 'sparse' | 'parquet';

/**
 * Judged items of each query that the run never retrieved (labels from a separate judgments file).
 * They take no place in the ranked list but count in the ideal ranking and in every denominator that
 * depends on the judged set (recall, AP, the no-relevant test): common practice for judged collections.
 * Columnar: one offsets column by query, one grade and one item column by entry.
 */
export interface UnretrievedJudged {
  /** queries.size + 1 entries: query q's unretrieved judged items are entries start[q] .. start[q+1). */
  readonly start: Uint32Array;
  /** Grade of each entry (finite). */
  readonly grade: Float64Array;
  /** Item id of each entry in `items` (or the dump's `items` pool, which then also holds items that have no row). */
  readonly item: Uint32Array;
  /**
   * The pool the entries' `item` ids index; absent: the dump's `items` (a join that did not make the dump's
   * item ids keeps the judgments' own, readers/judgments.ts).
   */
  readonly items?: StringPool;
  /** Line of each entry in the judgments file (0 for Parquet judgments), for errors about its grade. */
  readonly line: Uint32Array;
  /**
   * Queries with an id at or above this have no row in the run: judged queries added under the
   * `zero` policy for queries missing from the run (equal to queries.size when none were added).
   */
  readonly firstAbsentQuery: number;
}

/** What to do with judged queries the run has no row for. */
export type MissingQueriesPolicy = 'skip' | 'zero';

/** How labels were joined from a judgments file, for notes and reports. */
export interface JudgmentsJoin {
  readonly path: string;
  /** Judged (query, item) pairs that the run does not return, in queries the run does have. */
  readonly unretrieved: number;
  /** Judged queries with no row in the run, and a few of their ids. */
  readonly absentQueries: number;
  readonly absentExamples: readonly string[];
  readonly missingQueries: MissingQueriesPolicy;
  /** Rows of the dump that had a label of their own, and how many of them the judgments contradict. */
  readonly inlineLabelRows: number;
  readonly disagreements: number;
  readonly disagreementExamples: readonly string[];
}

/** An extra column kept for slicing results (locale, device, ...): one interned value per row. */
export interface SegmentColumn {
  readonly name: string;
  readonly values: StringPool;
  /** Interned value id per row. */
  readonly ofRow: Uint32Array;
}

/** Size and modification time seen when reading started; used to detect a file rewritten mid-read. */
export interface FileStamp {
  readonly size: number;
  readonly mtimeMs: number;
}

/** What the reader noticed but did not treat as an error. All counts, never silently dropped rows. */
export interface ReaderNotes {
  /** Rows whose label is absent (run file item with no judgment): counted as grade 0 by metrics. */
  unjudgedRows: number;
  /** Rows whose score was empty, NaN or infinite. Stored as NaN in `score`. */
  missingScoreRows: number;
  /** Judgment lines whose query never appears in the run (only for run + judgments input). */
  judgmentsWithoutRun: number;
  /** Distinct queries in the judgments file that have no row in the run. */
  judgedQueriesWithoutRun: number;
  /** Free-form, human-readable notes (for example "ranked by score; rank column ignored"). */
  messages: string[];
  /**
   * Lowest and highest judged grade, with unjudged rows counted as grade 0 (0 and 0 when nothing is
   * judged). Readers fill it in the same pass that counts gaps, so scoring need not scan every row again.
   */
  gradeRange?: { readonly lowest: number; readonly highest: number };
  /** Set when the labels were taken from a judgments file (see readers/judgments.ts). */
  judgments?: JudgmentsJoin;
  /** True when the dump itself has no label column (labels must then come from a judgments file). */
  noLabelColumn?: boolean;
}

export interface RankedDump {
  /** Absolute or workspace-relative path that was read (the main dump, not the judgments/scores side file). */
  readonly path: string;
  readonly format: DumpFormat;
  readonly stamp: FileStamp;
  readonly rowCount: number;
  /** Interned query id per row (index into `queries`). */
  readonly query: Uint32Array;
  /** Interned item id per row (index into `items`): equal ids are equal items anywhere in the dump. */
  readonly item: Uint32Array;
  /**
   * Per row, the first row of its query (in file order) that names the same item: equal for two rows of
   * one query exactly when they name the same item, and a row's own index unless it repeats an item (the
   * key says nothing across queries). Scoring needs only this; readers that do not intern items dump-wide
   * give it and make `item` and `items` only when they are read. Absent: `item` serves.
   */
  readonly itemKey?: Uint32Array;
  /** Each row's item as written, when the reader kept the bytes per row: read through `itemOfRow`. */
  readonly itemTexts?: { text(row: number): string };
  /** Graded relevance per row. NaN = unjudged (metrics treat it as 0 and count it). */
  readonly label: Float64Array;
  /** Model score per row. NaN = missing or non-finite (counted; see conventions for handling). */
  readonly score: Float64Array;
  /** 1-based line number of the row in the decompressed text (0 when the format has no lines, e.g. Parquet). */
  readonly line: Uint32Array;
  /**
   * Byte offset of the row's first byte in the decompressed text (-1 when not applicable). Empty when the
   * read was asked to keep none (ReadOptions.rowOffsets).
   */
  readonly offset: Float64Array;
  readonly queries: StringPool;
  readonly items: StringPool;
  readonly segments: readonly SegmentColumn[];
  readonly notes: ReaderNotes;
  /** Present when labels came from a judgments file: the judged items each query's list lacks. */
  readonly unretrieved?: UnretrievedJudged;
  /** Facts joined from a queries table and an items table (tables/join.ts), when given. */
  readonly joined?: JoinedFacts;
}

/** Per-query and per-item facts from side tables, indexed by the dump's interned ids. */
export interface JoinedFacts {
  /** The queries table joined, when one was. */
  readonly queriesFile?: string;
  /** The items table joined, when one was. */
  readonly itemsFile?: string;
  /** Query text by query id ('' when the table has no text for it); absent without a text column. */
  readonly queryText?: readonly string[];
  /** Query weight by query id (NaN when unknown); absent when no weight was given (unweighted means). */
  readonly queryWeight?: Float64Array;
  /** Where the weights came from, for the conventions line: "column 'weight' of queries.tsv". */
  readonly weightSource?: string;
  /** Item title by item id ('' when unknown); absent without an items table or a title column. */
  readonly itemTitle?: readonly string[];
  /** The items table's other columns, by item id. */
  readonly itemAttributes?: readonly { readonly name: string; readonly values: readonly string[] }[];
  /** Plain sentences: rows naming unknown queries or items, dump ids missing from a table (counts and examples). */
  readonly notes: readonly string[];
}

/**
 * The dump with `changes` in place of its own fields, as a spread copy would be, except that fields a reader
 * makes on first use (the dump-wide item ids, columns.ts) stay made on first use: a spread reads every
 * field, and making those ids costs about 0.15 s per million distinct items.
 */
export function withFields(dump: RankedDump, changes: Partial<RankedDump>): RankedDump {
  const copy = Object.defineProperties({}, Object.getOwnPropertyDescriptors(dump)) as RankedDump;
  for (const [key, value] of Object.entries(changes)) Object.defineProperty(copy, key, { value, enumerable: true, writable: true, configurable: true });
  return copy;
}

/** The item of a row as written, without making dump-wide item ids when the reader kept the bytes per row. */
export function itemOfRow(dump: RankedDump, row: number): string {
  return dump.itemTexts !== undefined ? dump.itemTexts.text(row) : dump.items.get(dump.item[row]!);
}

export function emptyNotes(): ReaderNotes {
  return { unjudgedRows: 0, missingScoreRows: 0, judgmentsWithoutRun: 0, judgedQueriesWithoutRun: 0, messages: [] };
}
