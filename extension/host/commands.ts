/**
 * Every command, registered from this one table. Explorer menus pass `(uri, uris)`; the tree passes
 * its item; the palette passes nothing and the command asks.
 */
import * as path from 'node:path';
import * as vscode from 'vscode';
import { DumpItem, type RankedListsTree } from './rankedListsTree';
import { VIEW_TYPE } from './panels';
import { CheckpointItem, SeriesItem, seriesDescription, type RunsTree } from './runsTree';
import type { SeriesGroup } from './seriesGroups';
import { askClickHousePassword, askTableUrl } from './sqlSources';

export interface CommandContext {
  readonly tree: RankedListsTree;
  readonly openCompare: (a: vscode.Uri, b: vscode.Uri) => void;
  readonly refreshAll: () => void;
  /** Brings the Gainline view in front (or the last one) forward with its summary screen. */
  readonly showSummary: () => void;
  /** The keyboard picker over the queries of the view in front. */
  readonly goToQuery: () => Promise<void>;
  readonly clearRecentComparisons: () => Promise<void>;
  readonly runs: RunsTree;
  /** Opens (or brings forward) the trend view of a series. */
  readonly openSeries: (group: SeriesGroup) => void;
  /** Opens a view computed by an SQL engine: a file through DuckDB, or a clickhouse:// table URL. */
  readonly openEngine: (uri: vscode.Uri, engine: 'duckdb' | 'clickhouse') => void;
  readonly secrets: vscode.SecretStorage;
  /** The last table URL opened, offered again. */
  readonly lastTable: { get(): string | undefined; set(url: string): Thenable<void> };
}

type Handler = (context: CommandContext, ...args: unknown[]) => unknown;

export const COMMANDS: Readonly<Record<string, Handler>> = {
  'gainline.inspect': async (ctx, arg) => {
    const uri = uriOf(arg) ?? activeFile() ?? (await pickDump(ctx, 'Dump to inspect'));
    if (uri) await vscode.commands.executeCommand('vscode.openWith', uri, VIEW_TYPE);
  },
  'gainline.compareRuns': async (ctx, arg, many) => {
    const selected = Array.isArray(many) ? many.map(uriOf).filter((u): u is vscode.Uri => u !== undefined) : [];
    if (selected.length > 2) {
      void vscode.window.showWarningMessage(`Select exactly two runs to compare (${selected.length} are selected).`);
      return;
    }
    let a: vscode.Uri | undefined = selected.length > 0 ? selected[0] : uriOf(arg);
    let b: vscode.Uri | undefined = selected.length > 1 ? selected[1] : undefined;
    a ??= await pickDump(ctx, 'Baseline run (A)');
    if (!a) return;
    b ??= await pickDump(ctx, `Run to compare with ${path.basename(a.fsPath)} (B)`, a);
    if (!b) return;
    ctx.openCompare(a, b);
  },
  'gainline.openThroughDuckDb': async (ctx, arg) => {
    const uri = uriOf(arg) ?? activeFile() ?? (await pickDump(ctx, 'File to open through DuckDB'));
    if (uri) ctx.openEngine(uri, 'duckdb');
  },
  'gainline.openClickHouseTable': async (ctx) => {
    const uri = await askTableUrl(ctx.lastTable.get());
    if (!uri) return;
    await ctx.lastTable.set(uri.toString(true));
    ctx.openEngine(uri, 'clickhouse');
  },
  'gainline.setClickHousePassword': (ctx) => askClickHousePassword(ctx.secrets),
  'gainline.showSummary': (ctx) => ctx.showSummary(),
  'gainline.goToQuery': (ctx) => ctx.goToQuery(),
  'gainline.clearRecentComparisons': (ctx) => ctx.clearRecentComparisons(),
  'gainline.openSeries': async (ctx, arg) => {
    let group = arg instanceof SeriesItem ? arg.group : undefined;
    if (!group) {
      const all = await ctx.runs.series();
      if (all.length === 0) {
        void vscode.window.showInformationMessage('No training series found: a series is a folder with two or more numbered dumps, or a pattern in the gainline.series.patterns setting.');
        return;
      }
      const picked = await vscode.window.showQuickPick(all.map((g) => ({ label: g.label, description: seriesDescription(g), group: g })), { title: 'Training series', placeHolder: 'Series to show' });
      group = picked?.group;
    }
    if (group) ctx.openSeries(group);
  },
  'gainline.refreshRuns': (ctx) => ctx.runs.refresh(),
  'gainline.refreshRankedLists': (ctx) => {
    ctx.tree.invalidate();
    ctx.refreshAll();
  },
};

export function registerCommands(context: CommandContext): vscode.Disposable[] {
  return Object.entries(COMMANDS).map(([id, handler]) =>
    vscode.commands.registerCommand(id, (...args: unknown[]) => handler(context, ...args)),
  );
}

function uriOf(arg: unknown): vscode.Uri | undefined {
  if (arg instanceof vscode.Uri) return arg;
  if (arg instanceof DumpItem || arg instanceof CheckpointItem) return arg.uri;
  return undefined;
}

/** The file in front: a text editor, or a tab (our custom editor, or any other) with a URI. */
function activeFile(): vscode.Uri | undefined {
  const editor = vscode.window.activeTextEditor;
  if (editor && editor.document.uri.scheme === 'file') return editor.document.uri;
  const input = vscode.window.tabGroups.activeTabGroup.activeTab?.input;
  if (input instanceof vscode.TabInputCustom || input instanceof vscode.TabInputText) return input.uri;
  return undefined;
}

async function pickDump(ctx: CommandContext, title: string, except?: vscode.Uri): Promise<vscode.Uri | undefined> {
  const files = (await ctx.tree.listFiles()).filter((f) => f.fsPath !== except?.fsPath);
  const browse = { label: '$(folder-opened) Browse…', description: 'Choose a file outside the list', uri: undefined };
  const picked = await vscode.window.showQuickPick(
    [...files.map((uri) => ({ label: path.basename(uri.fsPath), description: vscode.workspace.asRelativePath(path.dirname(uri.fsPath)), uri })), browse],
    { title, placeHolder: 'Prediction dump', matchOnDescription: true },
  );
  if (!picked) return undefined;
  if (picked.uri) return picked.uri;
  const chosen = await vscode.window.showOpenDialog({ title, canSelectMany: false, openLabel: 'Choose' });
  return chosen?.[0];
}
