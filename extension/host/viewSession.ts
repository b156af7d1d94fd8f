/**
 * One open view (a dump in the custom editor, or a compare panel) and its webview. Owns the worker
 * session, pushes state (loading → loaded/reloaded | error | vanished), answers the webview's requests
 * (mostly by asking the worker), and recomputes when the file or a setting changes.
 */
import * as path from 'node:path';
import * as vscode from 'vscode';
import { conventionsLine, compareSettings, evaluationSettings, type GainlineConfig } from './config';
import { copyText, exportView, revealRow } from './hostActions';
import { LOAD_TIMEOUT_MS, type EngineWorker } from './workerHost';
import { resolveViewSources, type SessionTarget } from './viewSources';
import { SessionLife } from './sessionLife';
import { WebviewLink } from './webviewLink';
import type { CompareOverviewModel, OverviewModel, PartialOverview, ViewRequests, ViewState } from '../protocol/messages';
import { RemoteError, RequestAbortedError, type RequestHandlers } from '../channel/request';
import type { DumpSource, FollowUpTimes } from '../protocol/worker';
import type { ForegroundWork } from './foreground';

export type { SessionTarget } from './viewSources';

export interface SessionDeps {
  readonly worker: EngineWorker;
  readonly getConfig: () => GainlineConfig;
  /** Remembers the judgments file picked for a run file. */
  readonly memory: vscode.Memento;
  /** One line per load and failure, for the Gainline output channel. */
  readonly log?: (line: string) => void;
  /** Where the ClickHouse password is kept. */
  readonly secrets?: vscode.SecretStorage;
  /** Overrides the delay before the Cancel-able notification appears (tests). */
  readonly notificationDelayMs?: number;
  /** When the extension was activated (epoch ms), for the first screen's timeline in the log. */
  readonly activatedAt?: number;
  /** Held from the click until the first screen is posted, so background reads wait (foreground.ts). */
  readonly foreground?: ForegroundWork;
}

/** What the status bar shows for the view in front. */
export interface Headline {
  readonly label: string;
  readonly value: number | null;
  readonly conventions: string;
  /** Queries in the file (single) or in both runs (compare). */
  readonly queries: number;
  /** Queries that entered the headline mean (single) or its paired comparison (compare). */
  readonly counted: number;
  readonly compare: boolean;
}

/** Writers touch a file many times while saving: act once the changes have settled this long. */
export const RELOAD_DEBOUNCE_MS = 300;
/** A first read shorter than this shows no notification (it would only flash). */
const NOTIFICATION_DELAY_MS = 700;
let sessionCounter = 0;

export class ViewSession implements vscode.Disposable {
  readonly key = `view-${++sessionCounter}`;
  private overview: OverviewModel | undefined;
  private compare: CompareOverviewModel | undefined;
  private loadedGeneration = -1;
  private rereading: Promise<void> | undefined;
  private sources: DumpSource[] = [];
  private readonly link: WebviewLink;
  private readonly life: SessionLife;
  private readonly headlineEmitter = new vscode.EventEmitter<Headline | undefined>();
  readonly onDidChangeHeadline = this.headlineEmitter.event;
  /** The query the user looks at, kept across reloads. */
  selection: string | null = null;
  /** When the view was opened: the first load's log line says where the time before computing went. */
  private readonly openedAt = performance.now();
  private readonly openedEpoch = Date.now();

  constructor(
    webview: vscode.Webview,
    readonly target: SessionTarget,
    private readonly deps: SessionDeps,
  ) {
    this.link = new WebviewLink(webview, { status: 'loading', mode: target.mode, label: this.label, fraction: null, message: 'Starting…' }, this.handlers(), {
      // A webview that (re)starts shows again the query the user was looking at.
      onReady: () => {
        const status = this.link.state.status;
        if (this.selection && (status === 'loaded' || status === 'reloaded')) void this.link.post({ kind: 'showQuery', query: this.selection });
      },
      onSelection: (query) => (this.selection = query),
    });
    this.life = new SessionLife(deps.worker, this.key, this.link);
    for (const uri of this.files) if (uri.scheme === 'file') this.watch(uri);
  }

  get files(): vscode.Uri[] {
    return this.target.mode === 'single' ? [this.target.uri] : [this.target.a, this.target.b];
  }

  get label(): string {
    return this.files.map((u) => path.basename(u.fsPath)).join(' ↔ ');
  }

  get headline(): Headline | undefined {
    if (this.overview) {
      const m = this.overview.metrics[this.overview.headline]!;
      return { label: m.label, value: m.mean, conventions: this.overview.conventions.summary, queries: this.overview.queryCount, counted: m.counted, compare: false };
    }
    if (this.compare) {
      const m = this.compare.metrics[this.compare.headline]!;
      return { label: `Δ ${m.label}`, value: m.delta, conventions: this.compare.conventions.summary, queries: this.compare.pairedQueries, counted: m.wins + m.ties + m.losses, compare: true };
    }
    return undefined;
  }

  /** First load; later loads come from `scheduleReload`. */
  start(): Promise<void> {
    return this.load('loaded', true);
  }

  /** Debounced recompute after a file change or a settings change. */
  scheduleReload(delayMs = RELOAD_DEBOUNCE_MS): void {
    this.life.debounce(delayMs, () => void this.load(this.overview || this.compare ? 'reloaded' : 'loaded', false));
  }

  /** The queries worst first (single: headline ascending; compare: headline Δ ascending), for Go to Query. */
  async listQueries(limit: number): Promise<{ total: number; rows: { query: string; description: string }[] }> {
    await this.ensureLoaded();
    const session = this.key;
    const fixed = (v: number | null): string => (v === null ? '—' : v.toFixed(4));
    if (this.target.mode === 'single') {
      const page = await this.deps.worker.call('queryPage', { session, offset: 0, limit });
      const label = this.overview?.metrics[this.overview.headline]?.label ?? '';
      return { total: page.total, rows: page.rows.map((r) => ({ query: r.query, description: `${label} ${fixed(r.values[this.overview?.headline ?? 0] ?? null)}` })) };
    }
    const page = await this.deps.worker.call('comparePage', { session, offset: 0, limit });
    const label = this.compare?.metrics[this.compare.headline]?.label ?? '';
    return { total: page.total, rows: page.rows.map((r) => ({ query: r.query, description: `Δ ${label} ${r.delta !== null && r.delta > 0 ? '+' : ''}${fixed(r.delta)}` })) };
  }

  /** Asks the webview to show a query (Go to Query…) or its summary screen (status bar). */
  showQuery(query: string): void {
    this.selection = query;
    void this.link.post({ kind: 'showQuery', query });
  }

  showSummary(): void {
    void this.link.post({ kind: 'showSummary' });
  }

  dispose(): void {
    if (this.life.disposed) return;
    this.life.dispose();
    this.headlineEmitter.dispose();
  }

  private setState(state: ViewState): void {
    this.link.setState(state);
  }

  private async load(kind: 'loaded' | 'reloaded', firstTime: boolean): Promise<void> {
    const abort = this.life.nextLoad();
    let cancelledByUser = false;
    const config = this.deps.getConfig();
    if (kind === 'loaded') this.setState({ status: 'loading', mode: this.target.mode, label: this.label, fraction: 0, message: 'Reading…' });
    // The first screen goes before background reads; released once it is posted (or failed).
    const releaseForeground = firstTime ? this.deps.foreground?.hold() : undefined;
    try {
      this.sources = await resolveViewSources(this.target, this.files, config, this.deps);
    } catch (error) {
      releaseForeground?.();
      this.setState({ status: 'error', message: messageOf(error) });
      return;
    }
    // Progress goes to the webview, the window status and (for a first read that takes a while) a
    // notification with Cancel; a quick read never flashes a notification.
    const sinks = new Set<(fraction: number | null, message: string) => void>();
    // A dump streaming in sends its overview so far; the latest stays on screen until the full one.
    let partial: PartialOverview | undefined;
    const onProgress = (fraction: number | null, message: string, next?: PartialOverview): void => {
      partial = next ?? partial;
      for (const sink of sinks) sink(fraction, message);
      if (kind === 'loaded') this.setState({ status: 'loading', mode: this.target.mode, label: this.label, fraction, message, ...(partial ? { partial } : {}) });
    };
    const attach = (progress: vscode.Progress<{ increment?: number; message?: string }>): void => {
      let reported = 0;
      sinks.add((fraction, message) => {
        if (fraction !== null && fraction > reported) {
          progress.report({ increment: (fraction - reported) * 100, message });
          reported = fraction;
        } else progress.report({ message });
      });
    };
    const work = (async () => {
      const options = { signal: abort.signal, timeoutMs: LOAD_TIMEOUT_MS, onProgress };
      const asked = performance.now();
      if (this.target.mode === 'single') {
        const askedEpoch = Date.now();
        const { timeline, ...overview } = await this.deps.worker.call(
          'load', { session: this.key, source: this.sources[0]!, settings: evaluationSettings(config), streamFromBytes: config.streamFromBytes }, options);
        this.overview = overview;
        this.setState({ status: kind, mode: 'single', overview });
        const answered = performance.now();
        // Where the time went: before the request (sources, judgments), in the worker, and the rest
        // (thread start on first use, messages), so a slow first screen can be told apart; the
        // timeline's epoch times let the end-to-end suite line them up with its click.
        const steps = [['activated', this.deps.activatedAt], ['opened', this.openedEpoch], ['asked', askedEpoch], ['thread ready', timeline.threadReady],
          ['warmed up', timeline.warmed], ['received', timeline.received], ['read', timeline.read], ['scored', timeline.scored], ['answered', Date.now()]] as const;
        const split = firstTime ? ` (${Math.round(asked - this.openedAt)} ms before the request, ${overview.loadMs} ms reading and scoring, ${Math.max(0, Math.round(answered - asked - overview.loadMs))} ms thread start and messages; timeline in epoch ms: ${steps.filter(([, t]) => t !== undefined).map(([name, t]) => `${name} ${t}`).join(', ')})` : '';
        this.deps.log?.(`${kind === 'loaded' ? 'read' : 're-read'} ${this.label}: ${overview.file.rowCount} rows, ${overview.queryCount} queries, ${overview.loadMs} ms${split}`);
      } else {
        const compare = await this.deps.worker.call(
          'loadCompare', { session: this.key, a: this.sources[0]!, b: this.sources[1]!, settings: compareSettings(config) }, options);
        this.compare = compare;
        this.setState({ status: kind, mode: 'compare', compare });
        this.deps.log?.(`compared ${this.label}: ${compare.pairedQueries} paired queries, ${compare.loadMs} ms`);
      }
      this.loadedGeneration = this.deps.worker.generation;
      this.headlineEmitter.fire(this.headline);
    })();
    const settled = work.then(() => undefined, () => undefined);
    if (releaseForeground) void settled.then(releaseForeground);
    void vscode.window.withProgress({ location: vscode.ProgressLocation.Window, title: `Gainline: ${this.label}` }, (progress) => {
      attach(progress);
      return settled;
    });
    if (firstTime) {
      let finished = false;
      void settled.then(() => (finished = true));
      const notify = () => {
        if (finished || this.life.disposed) return;
        void vscode.window.withProgress(
          { location: vscode.ProgressLocation.Notification, title: `Gainline: reading ${this.label}`, cancellable: true },
          (progress, token) => {
            token.onCancellationRequested(() => {
              cancelledByUser = true;
              abort.abort();
            });
            attach(progress);
            return settled;
          },
        );
      };
      // No delay: shown at once, before the worker can answer (a timer of 0 ms raced a quick read).
      const delay = this.deps.notificationDelayMs ?? NOTIFICATION_DELAY_MS;
      if (delay <= 0) notify();
      else {
        const timer = setTimeout(notify, delay);
        void settled.then(() => clearTimeout(timer));
      }
    }
    try {
      await work;
    } catch (error) {
      if (this.life.disposed || (abort.signal.aborted && !cancelledByUser)) return; // superseded by a newer load
      if (cancelledByUser || error instanceof RequestAbortedError) {
        this.setState({ status: 'error', message: `Reading ${this.label} was cancelled. Run "Gainline: Refresh Ranked Lists" or reopen the file to read it again.` });
      } else {
        this.setState({ status: 'error', message: messageOf(error) });
        this.deps.log?.(`could not read ${this.label}: ${messageOf(error)}`);
      }
      this.overview = undefined;
      this.compare = undefined;
      this.headlineEmitter.fire(undefined);
    }
  }

  /** After a worker restart the worker no longer holds this view's data: read it again quietly. */
  private ensureLoaded(): Promise<void> {
    if (this.loadedGeneration === this.deps.worker.generation && this.deps.worker.running) return Promise.resolve();
    // Several requests arriving together share one quiet re-read.
    this.rereading ??= this.reread().finally(() => (this.rereading = undefined));
    return this.rereading;
  }

  private async reread(): Promise<void> {
    const config = this.deps.getConfig();
    if (this.target.mode === 'single') {
      const { timeline: _timeline, ...overview } = await this.deps.worker.call('load',
        { session: this.key, source: this.sources[0]!, settings: evaluationSettings(config), streamFromBytes: config.streamFromBytes }, { timeoutMs: LOAD_TIMEOUT_MS });
      this.overview = overview;
    } else {
      this.compare = await this.deps.worker.call('loadCompare', { session: this.key, a: this.sources[0]!, b: this.sources[1]!, settings: compareSettings(config) }, { timeoutMs: LOAD_TIMEOUT_MS });
    }
    this.loadedGeneration = this.deps.worker.generation;
  }

  private handlers(): RequestHandlers<ViewRequests> {
    const w = this.deps.worker;
    const session = this.key;
    const ask = async <T>(call: () => Promise<T>): Promise<T> => {
      await this.ensureLoaded();
      return call();
    };
    return {
      queryPage: (p, { signal }) => ask(() => w.call('queryPage', { ...p, session }, { signal })),
      queryDetail: (p, { signal }) => ask(() => w.call('queryDetail', { ...p, session }, { signal })),
      segments: (p, { signal }) => ask(() => w.call('segments', { ...p, session }, { signal })),
      overviewDiagnostics: async (_p, { signal }) => {
        const { times, ...diagnostics } = await ask(() => w.call('overviewDiagnostics', { session }, { signal }));
        if (times) this.logFollowUp('score diagnostics', times);
        return diagnostics;
      },
      overviewSensitivity: async (_p, { signal }) => {
        const { rows, times } = await ask(() => w.call('overviewSensitivity', { session }, { signal }));
        this.logFollowUp('sensitivity rows', times);
        return rows;
      },
      comparePage: (p, { signal }) => ask(() => w.call('comparePage', { ...p, session }, { signal })),
      queryMovement: (p, { signal }) => ask(() => w.call('queryMovement', { ...p, session }, { signal })),
      compareSegments: (p, { signal }) => ask(() => w.call('compareSegments', { ...p, session }, { signal })),
      compareOverview: async () => {
        if (!this.compare) throw new Error('no comparison is loaded in this view');
        return this.compare;
      },
      exportView: (p) => exportView(p, this.files[0]!.fsPath, this.conventionsText()),
      copyQueryJson: async (p) => {
        const { json } = await ask(() => w.call('queryJson', { ...p, session }));
        return copyText(json, `query "${p.query}" as JSON`);
      },
      revealRow: async (p) => {
        const where = await ask(() => w.call('rowLocation', { session, row: p.row, ...(p.run ? { run: p.run } : {}) }));
        return revealRow(where.path, p.row, where.line);
      },
      // A dump or a comparison is not a series; the trend screen lives in the series panel (seriesSession.ts).
      seriesTrajectory: () => notASeries(),
      seriesQueries: () => notASeries(),
      openCheckpoint: () => notASeries(),
      compareCheckpoints: () => notASeries(),
    };
  }

  /** When the worker computed a piece of the overview asked for after its headline, for the first screen's timeline. */
  private logFollowUp(what: string, times: FollowUpTimes): void {
    this.deps.log?.(`after the headline of ${this.label}: ${what} in ${times.done - times.started} ms (epoch ms ${times.started} to ${times.done})`);
  }

  private conventionsText(): string | undefined {
    return this.overview?.conventions.summary ?? this.compare?.conventions.summary ?? conventionsLine(this.deps.getConfig().conventions);
  }

  private watch(uri: vscode.Uri): void {
    const pattern = new vscode.RelativePattern(vscode.Uri.file(path.dirname(uri.fsPath)), path.basename(uri.fsPath));
    const watcher = vscode.workspace.createFileSystemWatcher(pattern);
    this.life.disposables.push(
      watcher,
      watcher.onDidChange(() => this.scheduleReload()),
      watcher.onDidCreate(() => this.scheduleReload()),
      watcher.onDidDelete(() => {
        this.life.stop();
        this.overview = undefined;
        this.compare = undefined;
        this.headlineEmitter.fire(undefined);
        this.setState({ status: 'vanished', path: uri.fsPath });
      }),
    );
  }
}

function notASeries(): never {
  throw new Error('this view shows a dump or a comparison, not a training series');
}

export function messageOf(error: unknown): string {
  if (error instanceof RemoteError || error instanceof Error) return error.message.split('\n')[0]!;
  return String(error);
}
