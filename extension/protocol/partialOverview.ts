/**
 * The overview of a dump still streaming in (engine/stream/): the means over the queries scored so far
 * and how much of the file has been read. The worker sends one with its progress after each block it
 * takes in; the host puts the latest in the view's loading state; the webview shows it until the full
 * overview replaces it. Plain JSON like every view model: null instead of NaN.
 */
import type { MaybeNumber } from './viewBasics';

export interface PartialMetric {
  readonly key: string;
  /** Display label: 'NDCG@10', ... */
  readonly label: string;
  readonly mean: MaybeNumber;
  /** Queries that entered the mean so far. */
  readonly counted: number;
}

export interface PartialOverview {
  readonly fileName: string;
  readonly metrics: readonly PartialMetric[];
  /** Index into `metrics` of the headline metric. */
  readonly headline: number;
  /** Queries scored so far (the queries a block boundary cuts are scored at the end). */
  readonly queries: number;
  readonly rows: number;
  readonly bytesRead: number;
  readonly totalBytes: number;
  /** The conventions line, as the full overview's. */
  readonly conventions: string;
  /** Since the load was asked for, in ms. */
  readonly elapsedMs: number;
}
