/**
 * Where views live: the read-only custom editor for one dump, and the compare panel for two runs.
 * Both use the same webview bundle; the page's mode tells it which screens to show.
 */
import * as path from 'node:path';
import * as vscode from 'vscode';
import type { ViewMode } from '../protocol/messages';
import { ViewSession, type SessionDeps, type SessionTarget } from './viewSession';
import { webviewHtml } from './webviewHtml';

export const VIEW_TYPE = 'gainline.rankedListViewer';
export const COMPARE_VIEW_TYPE = 'gainline.compareRuns';

/** Tracks every open view and which one is in front (for the status bar and commands). */
export class SessionRegistry implements vscode.Disposable {
  private readonly sessions = new Set<ViewSession>();
  private activeSession: ViewSession | undefined;
  private readonly activeEmitter = new vscode.EventEmitter<ViewSession | undefined>();
  readonly onDidChangeActive = this.activeEmitter.event;

  get active(): ViewSession | undefined {
    return this.activeSession;
  }

  all(): ViewSession[] {
    return [...this.sessions];
  }

  add(session: ViewSession, panel: vscode.WebviewPanel): void {
    this.sessions.add(session);
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
      if (this.activeSession === session) this.setActive(undefined);
      session.dispose();
    });
    sync();
  }

  dispose(): void {
    for (const s of this.sessions) s.dispose();
    this.sessions.clear();
    this.activeEmitter.dispose();
  }

  private setActive(session: ViewSession | undefined): void {
    this.activeSession = session;
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
  const title = `${path.basename(a.fsPath)} ↔ ${path.basename(b.fsPath)}`;
  const panel = vscode.window.createWebviewPanel(COMPARE_VIEW_TYPE, title, vscode.ViewColumn.Active, {
    enableFindWidget: true,
    retainContextWhenHidden: false,
  });
  configureWebview(panel.webview, extensionUri, 'compare', title);
  openSession(panel, { mode: 'compare', a, b }, deps, registry);
}

function openSession(panel: vscode.WebviewPanel, target: SessionTarget, deps: SessionDeps, registry: SessionRegistry): void {
  const session = new ViewSession(panel.webview, target, deps);
  registry.add(session, panel);
  void session.start();
}
