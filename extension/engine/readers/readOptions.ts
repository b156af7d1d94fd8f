/**
 * What a caller can ask of the readers. Its own module so that each format's reader can take the
 * options without importing the readers' entry, which imports every reader.
 */
import type { DumpFormat, MissingQueriesPolicy } from '../model/dump';
import type { ColumnRoles } from './roles';

export interface ReadOptions {
  /** Overrides detection. */
  format?: DumpFormat;
  /** Explicit column names, e.g. from --columns query=sid,item=pid,label=grade,score=p */
  columns?: ColumnRoles;
  /**
   * Path of a judgments file: `query unused item grade` lines or a table naming the query, item and grade
   * columns. Any format takes its labels from it (run files must have one); see judgments.ts.
   */
  judgments?: string;
  /**
   * False when the caller never goes back to a row's bytes (a query's rows as written, the editor's views):
   * a large delimited file read on several threads then keeps no offset column, and the dump's `offset` is
   * empty. Other reads keep it either way (it costs them little). Default true.
   */
  rowOffsets?: boolean;
  /**
   * The judgments file was found beside the dump by the naming rule, not named by the user: when it names
   * none of the dump's queries and the dump has labels of its own, it belongs to other data, so the dump
   * keeps its labels and its first note says why the file was not used (the dump is read once either way).
   */
  judgmentsFound?: boolean;
  /** Column names in a tabular judgments file, like `columns` (query, item, label). */
  judgmentsColumns?: ColumnRoles;
  /** Judged queries with no row in the dump: left out (`skip`, default) or scored 0 on every metric (`zero`). */
  missingQueries?: MissingQueriesPolicy;
  /** Path of a one-score-per-line file (sparse feature lines). */
  scores?: string;
  /** Parse threads for big text files; default auto (1 for small files). */
  threads?: number;
  /**
   * Parse CSV/TSV and JSON Lines on worker threads even where one thread would do, leaving this thread
   * free meanwhile (to read a second file at the same time). Other inputs are read as usual.
   */
  offThread?: boolean;
  /** Cancellation → CancelledError. */
  signal?: AbortSignal;
  onProgress?: (fraction: number) => void;
}
