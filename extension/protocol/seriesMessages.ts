/**
 * Series-mode view models of the protocol: the checkpoints of one training job, as the trend screen
 * shows them. Plain JSON (null for a missing number). Re-exported by `messages.ts`; import from there.
 */
import type { ConventionsView, MaybeNumber } from './viewBasics';

/** One checkpoint of the series, in series order. */
export interface CheckpointView {
  /** File name (as the Runs view lists it). */
  readonly run: string;
  readonly path: string;
  /** The checkpoint number (or modification time in ms) the series was ordered by. */
  readonly position: number;
  readonly queries: number;
  /** Per metric (aligned with `SeriesOverviewModel.metrics`): mean, 95% interval, queries counted. */
  readonly means: readonly MaybeNumber[];
  readonly lower: readonly MaybeNumber[];
  readonly upper: readonly MaybeNumber[];
  readonly counted: readonly number[];
  /** Queries of the series this checkpoint lacks (its mean is over its own queries). */
  readonly missing: number;
}

/** A query that fell on the headline metric: from its first (or its peak) value to its last. */
export interface DropView {
  readonly query: string;
  readonly from: MaybeNumber;
  /** Index into `checkpoints` of `from`. */
  readonly fromCheckpoint: number;
  readonly last: MaybeNumber;
  readonly delta: MaybeNumber;
}

/** A checkpoint file that is in the folder but could not be read now (half-written, bad data): retried when it changes. */
export interface UnreadCheckpoint {
  readonly run: string;
  readonly path: string;
  readonly message: string;
}

export interface SeriesOverviewModel {
  /** The series' name in the Runs view (folder or pattern). */
  readonly name: string;
  /** "ordered by the checkpoint number in each file name", … */
  readonly orderRule: string;
  readonly metrics: readonly { readonly key: string; readonly label: string }[];
  /** Index into `metrics` of the headline (the first): the worst falls are on it. */
  readonly headline: number;
  readonly conventions: ConventionsView;
  readonly checkpoints: readonly CheckpointView[];
  /** Per metric, the index of the checkpoint with the highest mean (the earliest on equal means); null when no mean. */
  readonly peaks: readonly (number | null)[];
  readonly worstFirstToLast: readonly DropView[];
  readonly worstPeakToLast: readonly DropView[];
  /** Queries scored at both the first and the last checkpoint (the first-to-last falls cover these). */
  readonly comparableFirstToLast: number;
  /** Queries in any checkpoint, and in every one. */
  readonly queryCount: number;
  readonly inEveryCheckpoint: number;
  readonly unread: readonly UnreadCheckpoint[];
  readonly warnings: readonly string[];
  /** The bootstrap behind each interval. */
  readonly bootstrap: { readonly resamples: number; readonly seed: number };
  /** Checkpoints read and scored for this answer (the others were kept from the last one). */
  readonly scoredNow: number;
  readonly loadMs: number;
}

export interface TrajectoryParams {
  readonly query: string;
}

/** One query's values over the checkpoints. */
export interface TrajectoryView {
  readonly query: string;
  /** values[metric][checkpoint]; null where the checkpoint lacks the query or skips it. */
  readonly values: readonly (readonly MaybeNumber[])[];
}

export interface SeriesQueriesParams {
  /** Case-insensitive substring of the query id. */
  readonly filter: string;
  readonly limit: number;
}

export interface SeriesQueries {
  readonly total: number;
  readonly queries: readonly string[];
}

export interface OpenCheckpointParams {
  readonly path: string;
}

export interface CompareCheckpointsParams {
  /** The baseline (run A) and the other checkpoint (run B). */
  readonly base: string;
  readonly other: string;
}
