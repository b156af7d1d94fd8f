/**
 * Where views live: the read-only custom editor for one dump, and the compare panel for two runs.
 * Both use the same webview bundle; the page's mode tells it which screens to show.
 */
import * as path from 'node:path';
import * as vscode from 'vscode';
import type { ViewMode } from '../protocol/messages';
import { ViewSession, type SessionDeps, type SessionTarget } from './viewSession';
import { savedRuns } from './savedState';
import { webviewHtml } from './webviewHtml';

export const VIEW_TYPE = 'gainline.rankedListViewer';
export const COMPARE_VIEW_TYPE = 'gainline.compareRuns';
export const SERIES_VIEW_TYPE = 'gainline.trainingTrend';
export const ENGINE_VIEW_TYPE = 'gainline.computedView';

/** Tracks every open view and which one is in front (for the status bar and commands). */
export class SessionRegistry implements vscode.Disposable {
  private readonly sessions = new Map<ViewSession, vscode.WebviewPanel>();
  private activeSession: ViewSession | undefined;
  /** The view in front most recently, so a command run from elsewhere (status bar, palette) still finds it. */
  private lastActive: ViewSession | undefined;
  private readonly activeEmitter = new vscode.EventEmitter<ViewSession | undefined>();
  readonly onDidChangeActive = this.activeEmitter.event;

  get active(): ViewSession | undefined {
    return this.activeSession;
  }

  all(): ViewSession[] {
    return [...this.sessions.keys()];
  }

  /** The view in front, or the one that was last; with its panel, to bring it forward. */
  current(): { session: ViewSession; panel: vscode.WebviewPanel } | undefined {
    const session = this.activeSession ?? this.lastActive;
    const panel = session && this.sessions.get(session);
    return session && panel ? { session, panel } : undefined;
  }

  add(session: ViewSession, panel: vscode.WebviewPanel): void {
    this.sessions.set(session, panel);
    const sync = (): void => {
      if (panel.active) this.setActive(session);
      else if (this.activeSession === session) this.setActive(undefined);
    };
    const changes = panel.onDidChangeViewState(sync);
    const headline = session.onDidChangeHeadline(() => {
      if (this.activeSession === session) this.activeEmitter.fire(session);
    });
    panel.onDidDispose(() => {
      changes.dispose();
      headline.dispose();
      this.sessions.delete(session);
      if (this.lastActive === session) this.lastActive = undefined;
      if (this.activeSession === session) this.setActive(undefined);
      session.dispose();
    });
    sync();
  }

  dispose(): void {
    for (const s of this.sessions.keys()) s.dispose();
    this.sessions.clear();
    this.activeEmitter.dispose();
  }

  private setActive(session: ViewSession | undefined): void {
    this.activeSession = session;
    if (session) this.lastActive = session;
    this.activeEmitter.fire(session);
  }
}

export function configureWebview(webview: vscode.Webview, extensionUri: vscode.Uri, mode: ViewMode, title: string): void {
  const dist = vscode.Uri.joinPath(extensionUri, 'dist');
  webview.options = {
    enableScripts: true,
    enableCommandUris: false,
    localResourceRoots: [dist, vscode.Uri.joinPath(extensionUri, 'media')],
  };
  webview.html = webviewHtml({
    cspSource: webview.cspSource,
    scriptUri: webview.asWebviewUri(vscode.Uri.joinPath(dist, 'webview.js')).toString(),
    codiconCssUri: webview.asWebviewUri(vscode.Uri.joinPath(dist, 'codicons', 'codicon.css')).toString(),
    mode,
    title,
  });
}

/** Makes the session that feeds a trend panel's webview; the panel disposes it when closed. */
export type SeriesStarter = (webview: vscode.Webview) => vscode.Disposable & { start(): Promise<void> };

/**
 * The trend view of a training series: one panel per series (opening it again brings it forward).
 * `start` makes the session that feeds the panel's webview; the panel disposes it when closed.
 */
export class SeriesPanels implements vscode.Disposable {
  private readonly open = new Map<string, vscode.WebviewPanel>();

  constructor(private readonly extensionUri: vscode.Uri) {}

  show(key: string, title: string, start: SeriesStarter): void {
    const existing = this.open.get(key);
    if (existing) {
      existing.reveal();
      return;
    }
    this.attach(vscode.window.createWebviewPanel(SERIES_VIEW_TYPE, `Trend: ${title}`, vscode.ViewColumn.Active, { enableFindWidget: true }), key, title, start);
  }

  /** Feeds `panel` (new, or brought back after a window reload) from a session on the series `key`. */
  attach(panel: vscode.WebviewPanel, key: string, title: string, start: SeriesStarter): void {
    const existing = this.open.get(key);
    if (existing && existing !== panel) {
      // Two panels saved on one series: one view per series, as opening it again does.
      panel.dispose();
      existing.reveal();
      return;
    }
    panel.title = `Trend: ${title}`;
    configureWebview(panel.webview, this.extensionUri, 'series', `Trend: ${title}`);
    const session = start(panel.webview);
    this.open.set(key, panel);
    panel.onDidDispose(() => {
      this.open.delete(key);
      session.dispose();
    });
    void session.start();
  }

  dispose(): void {
    for (const panel of this.open.values()) panel.dispose();
    this.open.clear();
  }
}

/** A dump has no editable model: the document is only its URI. */
class DumpDocument implements vscode.CustomDocument {
  constructor(readonly uri: vscode.Uri) {}
  dispose(): void {}
}

export class DumpEditorProvider implements vscode.CustomReadonlyEditorProvider<DumpDocument> {
  constructor(
    private readonly extensionUri: vscode.Uri,
    private readonly deps: SessionDeps,
    private readonly registry: SessionRegistry,
  ) {}

  openCustomDocument(uri: vscode.Uri): DumpDocument {
    return new DumpDocument(uri);
  }

  resolveCustomEditor(document: DumpDocument, panel: vscode.WebviewPanel): void {
    configureWebview(panel.webview, this.extensionUri, 'single', path.basename(document.uri.fsPath));
    openSession(panel, { mode: 'single', uri: document.uri }, this.deps, this.registry);
  }
}

export function openComparePanel(a: vscode.Uri, b: vscode.Uri, extensionUri: vscode.Uri, deps: SessionDeps, registry: SessionRegistry): void {
  const panel = vscode.window.createWebviewPanel(COMPARE_VIEW_TYPE, compareTitle(a, b), vscode.ViewColumn.Active, {
    enableFindWidget: true,
    retainContextWhenHidden: false,
  });
  attachComparePanel(panel, a, b, extensionUri, deps, registry);
}

function compareTitle(a: vscode.Uri, b: vscode.Uri): string {
  return `${path.basename(a.fsPath)} ↔ ${path.basename(b.fsPath)}`;
}

function attachComparePanel(panel: vscode.WebviewPanel, a: vscode.Uri, b: vscode.Uri, extensionUri: vscode.Uri, deps: SessionDeps, registry: SessionRegistry): void {
  const title = compareTitle(a, b);
  panel.title = title;
  configureWebview(panel.webview, extensionUri, 'compare', title);
  openSession(panel, { mode: 'compare', a, b }, deps, registry);
}

/**
 * Brings panels of one view type back after a window reload. VS Code hands back what the page saved
 * with `setState` (webview/src/app.ts, SavedState); `read` takes from it what the panel stands for
 * (undefined when the state holds nothing usable), and `attach` re-opens the panel on it, answering
 * false when that is gone. A panel that cannot be brought back is closed rather than left blank.
 */
export class PanelRestorer<T> implements vscode.WebviewPanelSerializer<unknown> {
  constructor(
    private readonly read: (state: unknown) => T | undefined,
    private readonly attach: (panel: vscode.WebviewPanel, saved: T) => boolean | Promise<boolean>,
  ) {}

  async deserializeWebviewPanel(panel: vscode.WebviewPanel, state: unknown): Promise<void> {
    const saved = this.read(state);
    if (saved === undefined || !(await this.attach(panel, saved))) panel.dispose();
  }
}

/** A compare panel: the two runs' paths (SavedState.runs); the panel comes back on the same files, with its tab and query. */
export function compareRestorer(extensionUri: vscode.Uri, deps: SessionDeps, registry: SessionRegistry): PanelRestorer<readonly [string, string]> {
  return new PanelRestorer(savedRuns, (panel, runs) => {
    attachComparePanel(panel, vscode.Uri.file(runs[0]), vscode.Uri.file(runs[1]), extensionUri, deps, registry);
    return true;
  });
}

/** A view computed where the data lives: a ClickHouse table, or a file served through DuckDB. */
export function openEnginePanel(uri: vscode.Uri, engine: 'duckdb' | 'clickhouse', extensionUri: vscode.Uri, deps: SessionDeps, registry: SessionRegistry): void {
  const title = `${path.basename(uri.fsPath)} (${engine === 'duckdb' ? 'DuckDB' : 'ClickHouse'})`;
  const panel = vscode.window.createWebviewPanel(ENGINE_VIEW_TYPE, title, vscode.ViewColumn.Active, { enableFindWidget: true, retainContextWhenHidden: false });
  configureWebview(panel.webview, extensionUri, 'single', title);
  openSession(panel, { mode: 'single', uri, engine }, deps, registry);
}

function openSession(panel: vscode.WebviewPanel, target: SessionTarget, deps: SessionDeps, registry: SessionRegistry): void {
  const session = new ViewSession(panel.webview, target, deps);
  registry.add(session, panel);
  void session.start();
}
