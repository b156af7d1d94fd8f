/**
 * Entry point of the extension. Wires the engine worker, the custom editor, the compare panel, the
 * Ranked Lists view, the status bar and the commands. All heavy work runs in worker threads.
 */
import * as vscode from 'vscode';
import { readConfig, type GainlineConfig } from './config';
import { registerCommands } from './commands';
import {
  COMPARE_VIEW_TYPE, DumpEditorProvider, PanelRestorer, SERIES_VIEW_TYPE, SeriesPanels, SessionRegistry, VIEW_TYPE, compareRestorer, openComparePanel, openEnginePanel,
  type SeriesStarter,
} from './panels';
import { savedSeriesKey } from './savedState';
import type { SeriesGroup } from './seriesGroups';
import { RankedListsTree } from './rankedListsTree';
import { RecentComparisons } from './recentComparisons';
import { RunsTree } from './runsTree';
import { SeriesSession } from './seriesSession';
import { goToQuery } from './goToQuery';
import { HeadlineStatus } from './statusBar';
import { EngineWorker } from './workerHost';
import { ForegroundWork } from './foreground';
import type { SessionDeps } from './viewSession';

export function activate(context: vscode.ExtensionContext): void {
  const activatedAt = Date.now();
  const output = vscode.window.createOutputChannel('Gainline', { log: true });
  let config = loadConfig(output);
  const getConfig = (): GainlineConfig => config;
  const workerScript = vscode.Uri.joinPath(context.extensionUri, 'dist', 'engineWorker.js').fsPath;
  const onCrash = (message: string): void => output.error(`engine worker stopped: ${message}`);
  // Views and the tree use separate threads so computing tree headlines never delays an open view.
  const viewWorker = new EngineWorker(workerScript, onCrash);
  const treeWorker = new EngineWorker(workerScript, onCrash);

  // The extension activates when the workspace holds dumps (package.json): start the views' engine
  // thread at once, so the first click on a dump does not wait for it.
  viewWorker.warm();
  const registry = new SessionRegistry();
  // A view's first screen goes before the tree's background headlines (on two cores they would halve it).
  const foreground = new ForegroundWork();
  const deps: SessionDeps = { worker: viewWorker, getConfig, memory: context.workspaceState, log: (line) => output.info(line), secrets: context.secrets, activatedAt, foreground };
  const tree = new RankedListsTree(treeWorker, getConfig, context.workspaceState, foreground, (line) => output.info(line));
  const status = new HeadlineStatus();
  const recent = new RecentComparisons(context.workspaceState);
  const runs = new RunsTree(() => tree.listing(), getConfig);
  const seriesPanels = new SeriesPanels(context.extensionUri);
  const openCompare = (a: vscode.Uri, b: vscode.Uri): void => {
    openComparePanel(a, b, context.extensionUri, deps, registry);
    void recent.remember(a, b);
  };
  const seriesSessions = new Set<SeriesSession>();
  const seriesStarter = (group: SeriesGroup): SeriesStarter => (webview) => {
    const session = new SeriesSession(webview, group.label, {
      worker: viewWorker, getConfig, memory: context.workspaceState, log: (line) => output.info(line),
      resolve: () => runs.find(group.key),
      watchPattern: runs.watchPattern(group),
      openCheckpoint: (uri) => void vscode.commands.executeCommand('vscode.openWith', uri, VIEW_TYPE),
      openCompare,
    }, group.key);
    seriesSessions.add(session);
    return { start: () => session.start(), dispose: () => {
      seriesSessions.delete(session);
      session.dispose();
    } };
  };
  // After a window reload: the series the page saved, as the Runs view groups it now (gone: the panel closes).
  const seriesRestorer = new PanelRestorer(savedSeriesKey, async (panel, key) => {
    const group = await runs.find(key);
    if (group) seriesPanels.attach(panel, group.key, group.label, seriesStarter(group));
    return group !== undefined;
  });

  context.subscriptions.push(
    output,
    { dispose: () => viewWorker.dispose() },
    { dispose: () => treeWorker.dispose() },
    registry,
    tree,
    status,
    recent,
    runs,
    seriesPanels,
    vscode.window.createTreeView('gainline.recentComparisons', { treeDataProvider: recent }),
    vscode.window.createTreeView('gainline.runs', { treeDataProvider: runs, showCollapseAll: true }),
    vscode.window.registerCustomEditorProvider(VIEW_TYPE, new DumpEditorProvider(context.extensionUri, deps, registry), {
      supportsMultipleEditorsPerDocument: true,
      webviewOptions: { enableFindWidget: true },
    }),
    vscode.window.registerWebviewPanelSerializer(COMPARE_VIEW_TYPE, compareRestorer(context.extensionUri, deps, registry)),
    vscode.window.registerWebviewPanelSerializer(SERIES_VIEW_TYPE, seriesRestorer),
    // Several dumps can be selected in the view and compared as a pair.
    vscode.window.createTreeView('gainline.rankedLists', { treeDataProvider: tree, canSelectMany: true, showCollapseAll: false }),
    registry.onDidChangeActive((session) => status.show(session?.headline)),
    ...registerCommands({
      tree,
      openCompare,
      runs,
      openSeries: (group) => seriesPanels.show(group.key, group.label, seriesStarter(group)),
      openEngine: (uri, engine) => openEnginePanel(uri, engine, context.extensionUri, deps, registry),
      secrets: context.secrets,
      lastTable: { get: () => context.workspaceState.get<string>(LAST_TABLE_KEY), set: (url) => context.workspaceState.update(LAST_TABLE_KEY, url) },
      goToQuery: () => goToQuery(registry),
      clearRecentComparisons: () => recent.clear(),
      refreshAll: () => registry.all().forEach((s) => s.scheduleReload(0)),
      showSummary: () => {
        const current = registry.current();
        if (!current) return;
        current.panel.reveal(undefined, false);
        current.session.showSummary();
      },
    }),
    vscode.workspace.onDidChangeConfiguration((event) => {
      if (!event.affectsConfiguration('gainline')) return;
      config = loadConfig(output);
      tree.invalidate();
      runs.refresh();
      for (const session of registry.all()) session.scheduleReload(0);
      for (const session of seriesSessions) session.scheduleReload(0);
    }),
  );
}

export function deactivate(): void {}

const LAST_TABLE_KEY = 'gainline.lastClickHouseTable';

function loadConfig(output: vscode.LogOutputChannel): GainlineConfig {
  const settings = vscode.workspace.getConfiguration('gainline');
  const config = readConfig((key) => settings.get(key));
  for (const problem of config.problems) output.warn(problem);
  if (config.problems.length > 0) {
    void vscode.window.showWarningMessage(`Gainline: ${config.problems[0]}${config.problems.length > 1 ? ` (and ${config.problems.length - 1} more; see the Gainline output)` : ''}`);
  }
  return config;
}
