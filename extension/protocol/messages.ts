/**
 * The one typed protocol between the extension host and the webview (and, through `worker.ts`, the
 * engine worker). Everything here is plain JSON: no Map, no typed array, no NaN — a missing or
 * undefined number travels as `null`. The webview asks for what it shows, a page at a time; it is
 * never sent a whole dump.
 */
import type { CancelEnvelope, RequestEnvelope, ResponseEnvelope } from '../channel/request';
// Type-only: erased from the webview bundle, which still never loads engine code.
import type { DegenerateCounts } from '../engine/evaluate/types';
import type {
  CompareOverviewModel,
  ComparePage,
  ComparePageParams,
  CompareSegmentTable,
  CompareSegmentsParams,
  MovementParams,
  MovementView,
  RunSide,
} from './compareMessages';
import type { CompareCheckpointsParams, OpenCheckpointParams, SeriesOverviewModel, SeriesQueries, SeriesQueriesParams, TrajectoryParams, TrajectoryView } from './seriesMessages';
import type { PartialOverview } from './partialOverview';
import type { ConventionsView, FileInfo, MaybeNumber, SegmentFilter, SortSpec } from './viewBasics';

export type * from './compareMessages';
export type * from './seriesMessages';
export type * from './partialOverview';
export type * from './viewBasics';

// ---------------------------------------------------------------------------------------------
// Shared view models
// ---------------------------------------------------------------------------------------------

/** The engine's MetricSummary plus a display label; null instead of a NaN mean (JSON has no NaN). */
export interface MetricColumn {
  /** As written by the user: 'ndcg@10', 'ap', ... (sort key for `queryPage`). */
  readonly key: string;
  /** Display label: 'NDCG@10', 'AP', ... */
  readonly label: string;
  readonly mean: MaybeNumber;
  /** Queries that entered the mean. */
  readonly counted: number;
}

/** The engine's SensitivityRow without its Conventions (holds a Map); null instead of NaN, plus the delta. */
export interface SensitivityView {
  readonly label: string;
  readonly mean: MaybeNumber;
  readonly counted: number;
  /** mean − headline mean under the current conventions. */
  readonly delta: MaybeNumber;
  /** This row's conventions are the current ones (the engine lists them once per dimension). */
  readonly current: boolean;
  /** Why there is no mean (the convention cannot score this data); absent when there is one. */
  readonly unavailable?: string;
}

/** The engine's counts unchanged (all plain integers). */
export type DegenerateView = Readonly<DegenerateCounts>;

/** Counts of queries per bin of the headline metric over [0, 1] (10 equal bins; 1.0 goes in the last). */
export interface Histogram {
  readonly lower: number;
  readonly upper: number;
  readonly counts: readonly number[];
}

/** The counts of a judgments-file join, for the overview's data table. */
export interface JudgmentsView {
  /** Judged items of the dump's queries that the dump never retrieved (they count in the ideal ranking). */
  readonly unretrieved: number;
  /** Judged queries with no row in the dump, and the policy applied to them. */
  readonly absentQueries: number;
  readonly missingQueries: 'skip' | 'zero';
  /** Rows with a label of their own that the judgments contradict. */
  readonly disagreements: number;
}

export interface OverviewModel {
  readonly file: FileInfo;
  readonly queryCount: number;
  readonly metrics: readonly MetricColumn[];
  /** Index into `metrics` of the headline metric. */
  readonly headline: number;
  readonly conventions: ConventionsView;
  readonly sensitivity: readonly SensitivityView[];
  /**
   * True when `sensitivity` is left empty so the headline is not kept waiting: the rows take part of a
   * scoring pass, and the overview asks for them (`overviewSensitivity`) once its headline is painted.
   */
  readonly sensitivityLater?: boolean;
  readonly degenerate: DegenerateView;
  readonly histogram: Histogram;
  /** Names of the extra columns available for `segments` and the segment filter. */
  readonly segmentColumns: readonly string[];
  /** Plain sentences: what was counted, skipped or assumed (engine warnings + reader notes). */
  readonly warnings: readonly string[];
  /** Present when labels came from a judgments file: what the join found. */
  readonly judgments?: JudgmentsView;
  /** Wall-clock time of read + evaluate. */
  readonly loadMs: number;
  /** True when a queries table gives the queries a text (the worst list shows it). */
  readonly queryText?: boolean;
  /** Where query weights came from, when the means are weighted ("column 'weight' of queries.tsv"). */
  readonly weighting?: string;
}

/** The score distribution of one grade (null grade = unjudged rows); NaN statistics become null. */
export interface GradeScoresView {
  readonly grade: number | null;
  readonly count: number;
  readonly missing: number;
  readonly q1: MaybeNumber;
  readonly median: MaybeNumber;
  readonly q3: MaybeNumber;
  readonly mean: MaybeNumber;
  readonly bins: readonly number[];
}

export interface ScoresByGradeView {
  /** Shared histogram edges (bins + 1). */
  readonly edges: readonly number[];
  readonly grades: readonly GradeScoresView[];
}

/** Mean share of each query's ideal DCG@k earned per position, model against ideal; the last entry sums later positions. */
export interface DcgByPositionView {
  readonly k: number | null;
  readonly depth: number;
  readonly queries: number;
  readonly predicted: readonly MaybeNumber[];
  readonly ideal: readonly MaybeNumber[];
}

/**
 * Score distribution per grade and DCG by position against the ideal (evaluate/diagnostics.ts). Asked
 * for by the overview once the headline is on screen: it costs another pass over every query.
 */
export interface ScoreDiagnosticsView {
  readonly scoresByGrade: ScoresByGradeView;
  readonly dcgByPosition: DcgByPositionView;
}

export interface QueryPageParams {
  /** Default: headline metric ascending (worst first). Skipped (null) values always sort last. */
  readonly sort?: SortSpec;
  /** Case-insensitive substring of the query id. */
  readonly filter?: string;
  readonly segment?: SegmentFilter;
  readonly offset: number;
  readonly limit: number;
}

export interface QueryRow {
  readonly query: string;
  /** Rank of this row in the whole sorted, filtered list (0-based). */
  readonly index: number;
  /** Values aligned with `OverviewModel.metrics`; null where the query is skipped. */
  readonly values: readonly MaybeNumber[];
  readonly items: number;
  readonly relevant: number;
  readonly inversions: number;
  readonly inversionCost: number;
  readonly lossShare: MaybeNumber;
  readonly skipped: boolean;
  /** Query text from the queries table, when one is joined. */
  readonly text?: string;
}

export interface QueryPage {
  /** Rows matching the filters (not only this page). */
  readonly total: number;
  readonly offset: number;
  readonly rows: readonly QueryRow[];
}

export interface QueryDetailParams {
  readonly query: string;
  /** Cap on inverted pairs returned (default 200). */
  readonly maxPairs?: number;
  /** Which run in compare mode (default 'a'). */
  readonly run?: RunSide;
}

/** The engine's PositionRow with null for missing label/score (JSON has no NaN), plus file line and cut-off flag. */
export interface PositionView {
  readonly position: number;
  /** Row index in the dump, for `revealRow`. */
  readonly row: number;
  /** 1-based line in the (decompressed) file; 0 when the format has no lines. */
  readonly line: number;
  readonly item: string;
  readonly label: MaybeNumber;
  readonly score: MaybeNumber;
  readonly gain: number;
  readonly discount: number;
  readonly contribution: number;
  readonly cumulativeDcg: number;
  readonly idealCumulativeDcg: number;
  readonly idealPosition: number;
  readonly tieGroupSize: number;
  /** True when the position is within the headline cut-off. */
  readonly withinCutoff: boolean;
  /** Title from the items table, when one is joined ('' for an item it does not list). */
  readonly title?: string;
}

export interface IdealView {
  readonly position: number;
  readonly row: number;
  readonly item: string;
  readonly label: MaybeNumber;
  readonly gain: number;
  /** Where the model put it (0 when the run never retrieved it). */
  readonly predictedPosition: number;
  /** Title from the items table, when one is joined. */
  readonly title?: string;
  /** False for a judged item the run never retrieved: it counts in the ideal ranking only (row -1). */
  readonly retrieved: boolean;
}

/** The engine's InvertedPair plus item names and grades, so the webview needs no dump to label it. */
export interface PairView {
  readonly aboveItem: string;
  readonly belowItem: string;
  readonly aboveRow: number;
  readonly belowRow: number;
  readonly abovePosition: number;
  readonly belowPosition: number;
  readonly aboveLabel: MaybeNumber;
  readonly belowLabel: MaybeNumber;
  readonly ndcgRecovered: number;
}

/** The engine's QueryDetail with names instead of row ids, values aligned to columns, null for NaN. */
export interface QueryDetailView {
  readonly query: string;
  /** Headline cut-off. */
  readonly k: number;
  readonly headlineKey: string;
  readonly positions: readonly PositionView[];
  readonly ideal: readonly IdealView[];
  readonly dcg: number;
  readonly idealDcg: number;
  readonly ndcg: MaybeNumber;
  readonly invertedPairs: readonly PairView[];
  readonly invertedPairsTotal: number;
  /** Aligned with `OverviewModel.metrics`. */
  readonly values: readonly MaybeNumber[];
  /** Segment values of this query (first row's value per segment column). */
  readonly segments: Readonly<Record<string, string>>;
  /** Query text from the queries table, when one is joined. */
  readonly text?: string;
  /** This query's scores per grade. */
  readonly scoresByGrade?: ScoresByGradeView;
}

export interface SegmentRow {
  readonly value: string;
  readonly queries: number;
  /** Of those, left out of the headline mean (nothing relevant, under the "skip" convention). */
  readonly skipped: number;
  /** Means aligned with `OverviewModel.metrics`. */
  readonly means: readonly MaybeNumber[];
  /** Headline mean of this segment − overall headline mean. */
  readonly headlineDelta: MaybeNumber;
  /** Share of the total headline loss carried by this segment's queries. */
  readonly lossShare: MaybeNumber;
}

export interface SegmentsParams {
  readonly column: string;
}

export interface SegmentTable {
  readonly column: string;
  readonly rows: readonly SegmentRow[];
}

// ---- export / clipboard / reveal ---------------------------------------------------------------

/** The webview sends the table it shows; the host formats and saves or copies it. */
export interface ExportViewParams {
  readonly format: 'markdown' | 'csv';
  readonly destination: 'file' | 'clipboard';
  /** Used for the suggested file name and the markdown heading. */
  readonly title: string;
  readonly columns: readonly string[];
  readonly rows: readonly (readonly (string | number | null)[])[];
}

export interface ExportResult {
  /** False when the user dismissed the save dialog. */
  readonly done: boolean;
  /** Saved file path, or 'clipboard'. */
  readonly target?: string;
}

export interface CopyQueryJsonParams {
  readonly query: string;
  readonly run?: RunSide;
}

export interface RevealRowParams {
  readonly row: number;
  readonly run?: RunSide;
}

export interface RevealResult {
  /** True when a text editor was opened at the line. */
  readonly revealed: boolean;
  readonly line: number;
  /** Shown when the file is not text (Parquet, .gz): "row 1234 (line numbers do not apply)". */
  readonly message?: string;
}

// ---------------------------------------------------------------------------------------------
// Requests from the webview to the host
// ---------------------------------------------------------------------------------------------

export type ViewRequests = {
  queryPage: { params: QueryPageParams; result: QueryPage };
  queryDetail: { params: QueryDetailParams; result: QueryDetailView };
  segments: { params: SegmentsParams; result: SegmentTable };
  overviewDiagnostics: { params: Record<string, never>; result: ScoreDiagnosticsView };
  /** The headline under other conventions, when the overview came with `sensitivityLater`. */
  overviewSensitivity: { params: Record<string, never>; result: readonly SensitivityView[] };
  exportView: { params: ExportViewParams; result: ExportResult };
  copyQueryJson: { params: CopyQueryJsonParams; result: { copied: boolean } };
  revealRow: { params: RevealRowParams; result: RevealResult };
  compareOverview: { params: Record<string, never>; result: CompareOverviewModel };
  comparePage: { params: ComparePageParams; result: ComparePage };
  queryMovement: { params: MovementParams; result: MovementView };
  compareSegments: { params: CompareSegmentsParams; result: CompareSegmentTable };
  /** Series mode: one query's values over the checkpoints. */
  seriesTrajectory: { params: TrajectoryParams; result: TrajectoryView };
  /** Series mode: the series' queries matching a filter (to pick one whose trajectory to show). */
  seriesQueries: { params: SeriesQueriesParams; result: SeriesQueries };
  /** Series mode: open a checkpoint in the viewer. */
  openCheckpoint: { params: OpenCheckpointParams; result: { readonly opened: boolean } };
  /** Series mode: compare two checkpoints in the two-run comparison panel. */
  compareCheckpoints: { params: CompareCheckpointsParams; result: { readonly opened: boolean } };
};

export type ViewMethod = keyof ViewRequests;

// ---------------------------------------------------------------------------------------------
// State pushed from the host to the webview
// ---------------------------------------------------------------------------------------------

export type ViewMode = 'single' | 'compare' | 'series';

export type ViewState =
  | {
      readonly status: 'loading';
      readonly mode: ViewMode;
      /** Path(s) being read, for the message. */
      readonly label: string;
      /** 0..1, or null when unknown. */
      readonly fraction: MaybeNumber;
      readonly message: string;
      /** A dump streaming in: its overview so far, shown until the full one replaces it. */
      readonly partial?: PartialOverview;
    }
  /** First result. The webview resets its selection. */
  | { readonly status: 'loaded'; readonly mode: 'single'; readonly overview: OverviewModel }
  | { readonly status: 'loaded'; readonly mode: 'compare'; readonly compare: CompareOverviewModel }
  /** Recomputed after the file or a setting changed: keep the selected query and tab, refetch pages. */
  | { readonly status: 'reloaded'; readonly mode: 'single'; readonly overview: OverviewModel }
  | { readonly status: 'reloaded'; readonly mode: 'compare'; readonly compare: CompareOverviewModel }
  /** A training series: first result, then 'reloaded' on each change; the page saves `seriesKey` (Runs view key) for a window reload. */
  | { readonly status: 'loaded' | 'reloaded'; readonly mode: 'series'; readonly series: SeriesOverviewModel; readonly seriesKey: string }
  /** One line, e.g. the InputError message "run.csv:12: expected a number in column 'score' (found \"abc\")". */
  | { readonly status: 'error'; readonly message: string }
  | { readonly status: 'vanished'; readonly path: string };

// ---------------------------------------------------------------------------------------------
// Envelopes
// ---------------------------------------------------------------------------------------------

export type HostToView =
  | { readonly kind: 'state'; readonly state: ViewState }
  /** Ask the webview to show a query (from a command or the tree). */
  | { readonly kind: 'showQuery'; readonly query: string }
  /** Bring the summary screen forward (Overview, or A vs B when comparing): the status bar's click. */
  | { readonly kind: 'showSummary' }
  | ResponseEnvelope;

export type ViewToHost =
  /** Sent once the script runs; the host answers with the current state. */
  | { readonly kind: 'ready' }
  /** The query the user is looking at (the host keeps it for status bar and reload). */
  | { readonly kind: 'selection'; readonly query: string | null }
  | RequestEnvelope<ViewRequests>
  | CancelEnvelope;

export const DEFAULT_PAGE_LIMIT = 100;
