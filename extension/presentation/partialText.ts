/**
 * The headline of a dump still streaming in, in words: clearly partial, with how much has been read.
 * One wording for the command line's progress line and the editor.
 */
import { formatCount, formatFixed } from './numbers';

export interface PartialHeadline {
  /** The headline metric's key and its mean over the queries scored so far (NaN when none counted). */
  readonly key: string;
  readonly mean: number;
  readonly queries: number;
  readonly rows: number;
  readonly bytesRead: number;
  readonly totalBytes: number;
}

/** "partial: ndcg@10 0.6981 over 12 345 queries (1 234 567 rows, 1.2 of 6.3 GB read)" (thin spaces group the digits). */
export function partialHeadlineText(p: PartialHeadline): string {
  const gb = (bytes: number) => (bytes / 1e9).toFixed(1);
  const mean = Number.isNaN(p.mean) ? 'not yet defined' : formatFixed(p.mean);
  return `partial: ${p.key} ${mean} over ${formatCount(p.queries)} ${p.queries === 1 ? 'query' : 'queries'} ` +
    `(${formatCount(p.rows)} rows, ${gb(p.bytesRead)} of ${gb(p.totalBytes)} GB read)`;
}
