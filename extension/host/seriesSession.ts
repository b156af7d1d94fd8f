/**
 * One open trend view: a training series in a webview panel. Owns the worker's series session, pushes
 * state (loading → loaded, then reloaded each time the series grows or a checkpoint is rewritten), and
 * answers the trend screen's requests. It watches the series' folder (or pattern): a training job that
 * writes its next checkpoint extends the view without a reload. Changes are debounced as the viewer's
 * are (RELOAD_DEBOUNCE_MS), and a checkpoint that cannot be read yet (half-written, or rewritten while
 * it was read, which the readers detect) is listed as unread and read again on its next change.
 */
import * as vscode from 'vscode';
import { DEFAULT_TREND_SETTINGS } from '../presentation/defaults';
import type { SeriesOverviewModel, UnreadCheckpoint, ViewRequests, ViewState } from '../protocol/messages';
import type { RequestHandlers } from '../channel/request';
import type { SeriesFileInfo } from '../protocol/worker';
import { evaluationSettings, type GainlineConfig } from './config';
import type { SeriesGroup } from './seriesGroups';
import { sourceFor } from './sources';
import { messageOf, RELOAD_DEBOUNCE_MS } from './viewSession';
import { SessionLife } from './sessionLife';
import { WebviewLink } from './webviewLink';
import { LOAD_TIMEOUT_MS, type EngineWorker } from './workerHost';

export interface SeriesSessionDeps {
  readonly worker: EngineWorker;
  readonly getConfig: () => GainlineConfig;
  /** Remembers the judgments file picked for a run file (the viewer's choice is reused here). */
  readonly memory: vscode.Memento;
  /** The series as the Runs view groups it now (undefined once it no longer exists). */
  readonly resolve: () => Promise<SeriesGroup | undefined>;
  /** What to watch: the series' folder, or its pattern under the workspace folder. */
  readonly watchPattern: vscode.GlobPattern;
  readonly openCheckpoint: (uri: vscode.Uri) => void;
  readonly openCompare: (a: vscode.Uri, b: vscode.Uri) => void;
  readonly log?: (line: string) => void;
}

let seriesCounter = 0;

export class SeriesSession implements vscode.Disposable {
  readonly key = `series-${++seriesCounter}`;
  private model: SeriesOverviewModel | undefined;
  private readonly link: WebviewLink;
  private readonly life: SessionLife;
  /** Loads started (tests and the log count them). */
  loads = 0;

  constructor(
    webview: vscode.Webview,
    readonly label: string,
    private readonly deps: SeriesSessionDeps,
    /** The series' key in the Runs view (SeriesGroup.key). */
    readonly seriesKey: string,
  ) {
    this.link = new WebviewLink(webview, { status: 'loading', mode: 'series', label, fraction: null, message: 'Starting…' }, this.handlers());
    this.life = new SessionLife(deps.worker, this.key, this.link);
    const watcher = vscode.workspace.createFileSystemWatcher(deps.watchPattern);
    const changed = (): void => this.scheduleReload();
    this.life.disposables.push(watcher, watcher.onDidCreate(changed), watcher.onDidChange(changed), watcher.onDidDelete(changed));
  }

  start(): Promise<void> {
    return this.load();
  }

  /** Debounced: a job writing a checkpoint touches it many times; the series is read once things settle. */
  scheduleReload(delayMs = RELOAD_DEBOUNCE_MS): void {
    this.life.debounce(delayMs, () => void this.load());
  }

  dispose(): void {
    this.life.dispose();
  }

  private async load(): Promise<void> {
    this.loads++;
    const abort = this.life.nextLoad();
    const config = this.deps.getConfig();
    if (!this.model) this.setState({ status: 'loading', mode: 'series', label: this.label, fraction: null, message: 'Reading the checkpoints…' });
    try {
      const group = await this.deps.resolve();
      if (!group) {
        this.setState({ status: 'vanished', path: this.label });
        return;
      }
      const { files, unreadable } = await this.sources(group, config);
      const model = await this.deps.worker.call('loadSeries', {
        session: this.key, name: group.label, files, unreadable, order: config.series.order, settings: evaluationSettings(config),
        bootstrap: DEFAULT_TREND_SETTINGS.bootstrap, seed: DEFAULT_TREND_SETTINGS.seed, top: DEFAULT_TREND_SETTINGS.top,
      }, { signal: abort.signal, timeoutMs: LOAD_TIMEOUT_MS });
      if (abort.signal.aborted || this.life.disposed) return;
      const kind = this.model ? 'reloaded' : 'loaded';
      this.model = model;
      this.setState({ status: kind, mode: 'series', series: model, seriesKey: this.seriesKey });
      this.deps.log?.(`series ${group.label}: ${model.checkpoints.length} checkpoints (${model.scoredNow} read now), ${model.unread.length} unread, ${model.loadMs} ms`);
    } catch (error) {
      if (abort.signal.aborted || this.life.disposed) return; // superseded by a newer load
      this.model = undefined;
      this.setState({ status: 'error', message: messageOf(error) });
      this.deps.log?.(`could not read series ${this.label}: ${messageOf(error)}`);
    }
  }

  /** Each file's source as the viewer would read it; a run file whose judgments were never chosen is unread. */
  private async sources(group: SeriesGroup, config: GainlineConfig): Promise<{ files: SeriesFileInfo[]; unreadable: UnreadCheckpoint[] }> {
    const files: SeriesFileInfo[] = [];
    const unreadable: UnreadCheckpoint[] = [];
    for (const f of group.files) {
      const name = f.relative.slice(f.relative.lastIndexOf('/') + 1);
      const remembered = this.deps.memory.get<string>(`gainline.judgments:${f.path}`);
      const choice = await sourceFor(f.path, f.relative, config, remembered);
      if (choice.judgmentChoices && choice.judgmentsRequired) {
        unreadable.push({ run: name, path: f.path, message: 'a run file needs its judgments (qrels) file: open it once in the viewer to choose one' });
        continue;
      }
      files.push({ source: choice.source, name });
    }
    return { files, unreadable };
  }

  private inSeries(path: string): vscode.Uri {
    if (!this.model?.checkpoints.some((c) => c.path === path)) throw new Error(`${path} is not a checkpoint of this series`);
    return vscode.Uri.file(path);
  }

  private handlers(): RequestHandlers<ViewRequests> {
    const w = this.deps.worker;
    const session = this.key;
    const notHere = (): never => {
      throw new Error('a training series answers only the trend screen\'s requests');
    };
    return {
      seriesTrajectory: (p, { signal }) => w.call('seriesTrajectory', { ...p, session }, { signal }),
      seriesQueries: (p, { signal }) => w.call('seriesQueries', { ...p, session }, { signal }),
      openCheckpoint: async (p) => {
        this.deps.openCheckpoint(this.inSeries(p.path));
        return { opened: true };
      },
      compareCheckpoints: async (p) => {
        if (p.base === p.other) throw new Error('pick two different checkpoints to compare');
        this.deps.openCompare(this.inSeries(p.base), this.inSeries(p.other));
        return { opened: true };
      },
      queryPage: notHere, queryDetail: notHere, segments: notHere, exportView: notHere, copyQueryJson: notHere, revealRow: notHere,
      compareOverview: notHere, comparePage: notHere, queryMovement: notHere, compareSegments: notHere, overviewDiagnostics: notHere, overviewSensitivity: notHere,
    };
  }

  private setState(state: ViewState): void {
    this.link.setState(state);
  }
}
