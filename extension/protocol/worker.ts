/**
 * Requests between the extension host (or the command line) and the engine worker thread. Worker
 * messages go through structured clone, so engine types with Maps (conventions) pass as they are.
 * Every session is keyed: one open editor or compare panel = one session held in worker memory.
 */
import type { Conventions } from '../engine/metrics/conventions';
import type { CompareOverviewModel, OverviewModel, QueryDetailParams, SeriesOverviewModel, UnreadCheckpoint, ViewRequests } from './messages';
import type { CancelEnvelope, RequestEnvelope, ResponseEnvelope } from '../channel/request';
import type { PartialOverview } from './partialOverview';

/** How to read one dump; mirrors the readers' options. */
export interface DumpSource {
  readonly path: string;
  /** Forced format; detected from the name/content when absent. */
  readonly format?: string;
  /** Role → column name overrides (query, item, label, score, rank, segment columns...). */
  readonly columns?: Readonly<Record<string, string>>;
  /** Separate judgments (qrels) file for run-style dumps. */
  readonly judgments?: string;
  /** Separate scores file, when labels and scores come apart. */
  readonly scores?: string;
  /** Queries table (query id → text, segments, weight). */
  readonly queries?: string;
  /** Items table (item id → title, attributes). */
  readonly items?: string;
  /** The queries / items tables were found by the naming rule (used only when they share ids with the dump). */
  readonly tablesFound?: boolean;
  /**
   * The judgments file was found by the naming rule for a dump with labels of its own (not a run file):
   * it is used only when it shares a query with the dump.
   */
  readonly judgmentsFound?: boolean;
  /** With a judgments file: judged queries the dump lacks are left out (`skip`) or score 0 (`zero`). */
  readonly missingQueries?: 'skip' | 'zero';
  /**
   * Computed where the data lives instead of read into memory: `duckdb` serves the file at `path`;
   * `clickhouse` computes on the server of `path` (clickhouse://HOST:PORT/DATABASE.TABLE).
   */
  readonly sqlEngine?: 'duckdb' | 'clickhouse';
  /** ClickHouse: the column giving the rows' order (otherwise the stated no-order rule applies). */
  readonly orderColumn?: string;
  /** ClickHouse credentials from the settings and secret storage; never logged or shown. */
  readonly credentials?: { readonly user?: string; readonly password?: string };
  /** DuckDB: its memory cap ("2GB"), and the folder of an installed @duckdb/node-api package. */
  readonly memoryLimit?: string;
  readonly duckdbModule?: string;
}

export interface EvaluationSettings {
  /** Metric list as the user writes it: 'ndcg@10,err@10,ap'. The first is the headline. */
  readonly metrics: string;
  readonly conventions: Conventions;
}

export interface CompareSettings extends EvaluationSettings {
  readonly permutations: number;
  /** Bootstrap resamples for the 95% interval of the mean difference; 0 leaves the interval out. */
  readonly bootstrapResamples: number;
  readonly seed: number;
  readonly tieTolerance: number;
}

export interface LoadParams {
  readonly session: string;
  readonly source: DumpSource;
  readonly settings: EvaluationSettings;
  /**
   * A plain CSV/TSV dump of this many bytes or more is scored as it streams in, with partial overviews
   * sent along with the progress (absent: always read into memory).
   */
  readonly streamFromBytes?: number;
}

export interface LoadCompareParams {
  readonly session: string;
  readonly a: DumpSource;
  readonly b: DumpSource;
  readonly settings: CompareSettings;
}

export interface HeadlineParams {
  readonly source: DumpSource;
  readonly settings: EvaluationSettings;
}

export interface HeadlineResult {
  readonly key: string;
  readonly label: string;
  readonly mean: number | null;
  readonly queryCount: number;
  readonly rowCount: number;
}

/**
 * When the worker reached each step of one load (epoch ms, the clock the host and the end-to-end
 * suite share), for the first screen's timeline in the log.
 */
export interface LoadTimeline {
  /** The thread had loaded its code (before this request when it was started early). */
  readonly threadReady: number;
  /** The thread's warm-up read had finished (absent when it had not, or the thread runs none). */
  readonly warmed?: number;
  readonly received: number;
  readonly read: number;
  readonly scored: number;
}

/** When the worker started and ended a piece of the overview asked for after its headline (epoch ms). */
export interface FollowUpTimes {
  readonly started: number;
  readonly done: number;
}

/** One dump file of a series, as the host found it in the folder. */
export interface SeriesFileInfo {
  readonly source: DumpSource;
  /** File name; the worker takes size and time from the file itself. */
  readonly name: string;
}

export interface LoadSeriesParams {
  readonly session: string;
  /** The series' name in the Runs view. */
  readonly name: string;
  readonly files: readonly SeriesFileInfo[];
  /** Files the host could not turn into a source (a run file without its judgments), shown as unread. */
  readonly unreadable: readonly UnreadCheckpoint[];
  readonly order: 'number' | 'time';
  readonly settings: EvaluationSettings;
  readonly bootstrap: number;
  readonly seed: number;
  readonly top: number;
}

type Keyed<T> = T & { readonly session: string };

/** A webview request the host passes on unchanged but for the session it belongs to. */
type Forwarded<M extends keyof ViewRequests> = { params: Keyed<ViewRequests[M]['params']>; result: ViewRequests[M]['result'] };

export type WorkerRequests = {
  load: { params: LoadParams; result: OverviewModel & { readonly timeline: LoadTimeline } };
  loadCompare: { params: LoadCompareParams; result: CompareOverviewModel };
  /** Read + evaluate without keeping the dump (tree view); freed at once. */
  headline: { params: HeadlineParams; result: HeadlineResult };
  unload: { params: { readonly session: string }; result: { readonly unloaded: boolean } };
  /** When the thread was ready and had warmed up (see LoadTimeline); asking does not stop the warm-up. */
  threadTimes: { params: Record<string, never>; result: Pick<LoadTimeline, 'threadReady' | 'warmed'> };
  queryPage: Forwarded<'queryPage'>;
  queryDetail: Forwarded<'queryDetail'>;
  /** The raw JSON of one query's rows and metric values (for the clipboard). */
  queryJson: { params: Keyed<QueryDetailParams>; result: { readonly json: string } };
  /** Line (and whether it is meaningful) of one row, for "reveal in file". */
  rowLocation: {
    params: Keyed<{ readonly row: number; readonly run?: 'a' | 'b' }>;
    result: { readonly line: number; readonly offset: number; readonly path: string };
  };
  segments: Forwarded<'segments'>;
  overviewDiagnostics: { params: { readonly session: string }; result: ViewRequests['overviewDiagnostics']['result'] & { readonly times?: FollowUpTimes } };
  overviewSensitivity: { params: { readonly session: string }; result: { readonly rows: ViewRequests['overviewSensitivity']['result']; readonly times: FollowUpTimes } };
  comparePage: Forwarded<'comparePage'>;
  queryMovement: Forwarded<'queryMovement'>;
  compareSegments: Forwarded<'compareSegments'>;
  /** Scores the checkpoints it does not hold yet (by path, size and time) and returns the whole trend. */
  loadSeries: { params: LoadSeriesParams; result: SeriesOverviewModel };
  seriesTrajectory: Forwarded<'seriesTrajectory'>;
  seriesQueries: Forwarded<'seriesQueries'>;
};

/** Progress while reading/evaluating, sent unsolicited by the worker. */
export interface ProgressEvent {
  readonly kind: 'progress';
  /** The request id of the load that reports. */
  readonly id: number;
  /** 0..1, or null when unknown. */
  readonly fraction: number | null;
  readonly message: string;
  /** While a dump streams in: its overview so far. */
  readonly partial?: PartialOverview;
}

export type ToWorker = RequestEnvelope<WorkerRequests> | CancelEnvelope;
export type FromWorker = ResponseEnvelope | ProgressEvent;

export function isProgressEvent(message: unknown): message is ProgressEvent {
  return typeof message === 'object' && message !== null && (message as { kind?: unknown }).kind === 'progress';
}
