/**
 * The "Runs" view: the workspace's dumps grouped into training series (seriesGroups.ts), each with its
 * checkpoints. Clicking a series opens its trend view; clicking a checkpoint opens it in the viewer.
 * The listing is the Ranked Lists view's (same glob, same side-table rules), refreshed once file
 * changes settle.
 */
import * as path from 'node:path';
import * as vscode from 'vscode';
import type { GainlineConfig } from './config';
import { VIEW_TYPE } from './panels';
import { MAX_LISTED_DUMPS, type DumpListing } from './dumpListing';
import { DUMP_WATCH_GLOB } from './rankedListsTree';
import { folderOf, groupSeries, type SeriesGroup } from './seriesGroups';
import { RELOAD_DEBOUNCE_MS } from './viewSession';
import { formatCountInText } from '../presentation/numbers';

export class SeriesItem extends vscode.TreeItem {
  constructor(readonly group: SeriesGroup) {
    super(group.label, vscode.TreeItemCollapsibleState.Collapsed);
    this.id = group.key;
    this.contextValue = 'gainline.series';
    this.description = `${group.files.length} checkpoint${group.files.length === 1 ? '' : 's'}`;
    this.tooltip = group.pattern !== undefined ? `Files matching ${group.pattern}` : `Numbered dumps in ${group.folder || 'the workspace folder'}`;
    this.iconPath = new vscode.ThemeIcon('graph-line');
    this.command = { command: 'gainline.openSeries', title: 'Show Training Trend', arguments: [this] };
  }
}

export class CheckpointItem extends vscode.TreeItem {
  constructor(readonly uri: vscode.Uri) {
    super(path.basename(uri.fsPath), vscode.TreeItemCollapsibleState.None);
    this.resourceUri = uri;
    this.contextValue = 'gainline.dump';
    this.command = { command: 'vscode.openWith', title: 'Inspect Ranked Lists', arguments: [uri, VIEW_TYPE] };
  }
}

/** The last row when the workspace search stopped at MAX_LISTED_DUMPS: series may lack checkpoints. */
export class SearchStoppedItem extends vscode.TreeItem {
  constructor() {
    super(`More than ${formatCountInText(MAX_LISTED_DUMPS)} dumps: the rest are not grouped`, vscode.TreeItemCollapsibleState.None);
    this.contextValue = 'gainline.searchStopped';
    this.iconPath = new vscode.ThemeIcon('warning');
    this.tooltip = `The workspace search stops at ${formatCountInText(MAX_LISTED_DUMPS)} dumps, so a series may lack some of its checkpoints. Narrow gainline.dumpGlob to the series you want.`;
  }
}

type Node = SeriesItem | CheckpointItem | SearchStoppedItem;

export class RunsTree implements vscode.TreeDataProvider<Node>, vscode.Disposable {
  private readonly changed = new vscode.EventEmitter<Node | undefined>();
  readonly onDidChangeTreeData = this.changed.event;
  private readonly disposables: vscode.Disposable[] = [];

  constructor(
    /** The workspace's dumps, as the Ranked Lists view finds them (all of them, not only the rows it shows). */
    private readonly listDumps: () => Promise<DumpListing<vscode.Uri>>,
    private readonly getConfig: () => GainlineConfig,
  ) {
    const watcher = vscode.workspace.createFileSystemWatcher(DUMP_WATCH_GLOB);
    let timer: ReturnType<typeof setTimeout> | undefined;
    const onFile = (): void => {
      if (timer) clearTimeout(timer);
      timer = setTimeout(() => this.refresh(), RELOAD_DEBOUNCE_MS);
    };
    this.disposables.push({ dispose: () => timer && clearTimeout(timer) });
    this.disposables.push(this.changed, watcher, watcher.onDidCreate(onFile), watcher.onDidDelete(onFile));
  }

  refresh(): void {
    this.changed.fire(undefined);
  }

  async series(): Promise<SeriesGroup[]> {
    return (await this.grouped()).groups;
  }

  private async grouped(): Promise<{ groups: SeriesGroup[]; searchStopped: boolean }> {
    const config = this.getConfig();
    const listing = await this.listDumps();
    const files = listing.files.map((uri) => ({ path: uri.fsPath, relative: vscode.workspace.asRelativePath(uri, false).replace(/\\/g, '/') }));
    return { groups: groupSeries(files, config.series.patterns, config.series.order), searchStopped: listing.searchStopped };
  }

  /** The series with this key as it stands now (its files may have changed since it was listed). */
  async find(key: string): Promise<SeriesGroup | undefined> {
    return (await this.series()).find((g) => g.key === key);
  }

  /** What a trend view of the series watches: its folder, or its pattern under the workspace folder. */
  watchPattern(group: SeriesGroup): vscode.GlobPattern {
    const root = vscode.workspace.workspaceFolders?.[0]?.uri;
    if (group.folder !== undefined) {
      const first = group.files[0];
      const folder = first ? path.dirname(first.path) : root ? path.join(root.fsPath, group.folder) : group.folder;
      return new vscode.RelativePattern(vscode.Uri.file(folder), '*');
    }
    const pattern = group.pattern!.includes('/') ? group.pattern! : `**/${group.pattern}`;
    return root ? new vscode.RelativePattern(root, pattern) : pattern;
  }

  getTreeItem(element: Node): Node {
    return element;
  }

  async getChildren(element?: Node): Promise<Node[]> {
    if (element instanceof SeriesItem) return element.group.files.map((f) => new CheckpointItem(vscode.Uri.file(f.path)));
    if (element) return [];
    const { groups, searchStopped } = await this.grouped();
    const rows: Node[] = groups.map((g) => new SeriesItem(g));
    if (searchStopped) rows.push(new SearchStoppedItem());
    return rows;
  }

  dispose(): void {
    for (const d of this.disposables) d.dispose();
  }
}

/** For the quick pick when the command runs from the palette. */
export function seriesDescription(group: SeriesGroup): string {
  return group.pattern !== undefined ? `pattern · ${group.files.length} files` : `${folderOf(group.files[0]?.relative ?? '') || '.'} · ${group.files.length} files`;
}
