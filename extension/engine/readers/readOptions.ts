/**
 * What a caller can ask of the readers. Its own module so that each format's reader can take the
 * options without importing the readers' entry, which imports every reader.
 */
import type { DumpFormat } from '../model/dump';
import type { ColumnRoles } from './roles';

export interface ReadOptions {
  /** Overrides detection. */
  format?: DumpFormat;
  /** Explicit column names, e.g. from --columns query=sid,item=pid,label=grade,score=p */
  columns?: ColumnRoles;
  /** Path of a judgments file (run-file input). */
  judgments?: string;
  /** Path of a one-score-per-line file (SVMlight input). */
  scores?: string;
  /** Parse threads for big text files; default auto (1 for small files). */
  threads?: number;
  /**
   * Parse quote-free CSV/TSV on worker threads even where one thread would do, leaving this thread
   * free meanwhile (to read a second file at the same time). Other inputs are read as usual.
   */
  offThread?: boolean;
  /** Cancellation → CancelledError. */
  signal?: AbortSignal;
  onProgress?: (fraction: number) => void;
}
