/**
 * The "Ranked Lists" view: dumps found in the workspace, each with its headline metric. Headlines are
 * computed lazily, one file at a time, on a background worker (so an open view's pages never wait
 * behind them), and cached by file modification time and settings. While a view's first screen is
 * being computed they wait, and one under way is stopped and read again afterwards (foreground.ts).
 */
import { promises as fsp } from 'node:fs';
import * as path from 'node:path';
import * as vscode from 'vscode';
import { evaluationSettings, type GainlineConfig } from './config';
import { formatHeadline } from './exportTable';
import { isSideTableName, sourceFor } from './sources';
import { LOAD_TIMEOUT_MS, type EngineWorker } from './workerHost';
import { VIEW_TYPE } from './panels';
import { RequestAbortedError } from '../channel/request';
import type { ForegroundWork } from './foreground';
import { listingOf, moreTooltip, searchLimit, shownInRankedLists, type DumpListing } from './dumpListing';

type Headline =
  | { readonly state: 'pending' }
  | { readonly state: 'large'; readonly bytes: number }
  | { readonly state: 'done'; readonly text: string; readonly tooltip: string }
  | { readonly state: 'failed'; readonly message: string };

export class DumpItem extends vscode.TreeItem {
  constructor(readonly uri: vscode.Uri, headline: Headline | undefined) {
    super(path.basename(uri.fsPath), vscode.TreeItemCollapsibleState.None);
    this.resourceUri = uri;
    this.contextValue = 'gainline.dump';
    this.command = { command: 'vscode.openWith', title: 'Inspect Ranked Lists', arguments: [uri, VIEW_TYPE] };
    const relative = vscode.workspace.asRelativePath(uri);
    if (!headline || headline.state === 'pending') {
      this.description = '…';
      this.tooltip = relative;
    } else if (headline.state === 'large') {
      this.description = `${(headline.bytes / 2 ** 20).toFixed(0)} MB — open to compute`;
      this.tooltip = `${relative}\nLarge files are not read in the background; open the file to see its metrics.`;
    } else if (headline.state === 'done') {
      this.description = headline.text;
      this.tooltip = `${relative}\n${headline.tooltip}`;
    } else {
      this.description = '⚠ not readable';
      this.tooltip = `${relative}\n${headline.message}`;
    }
  }
}

/** The last row when the view does not show every dump found: how many more, and where they are. */
export class MoreDumpsItem extends vscode.TreeItem {
  constructor(text: string, tooltip: string) {
    super(text, vscode.TreeItemCollapsibleState.None);
    this.contextValue = 'gainline.moreDumps';
    this.iconPath = new vscode.ThemeIcon('ellipsis');
    this.tooltip = tooltip;
  }
}

type Row = DumpItem | MoreDumpsItem;

/** Files whose creation, change or removal may change the dump listings (this view's and the Runs view's). */
export const DUMP_WATCH_GLOB = '**/*.{csv,tsv,jsonl,parquet,run,gz}';

/** Background headlines skip files this large: reading them would hold hundreds of MB for a tree label. */
const MAX_BACKGROUND_BYTES = 256 * 2 ** 20;

export class RankedListsTree implements vscode.TreeDataProvider<Row>, vscode.Disposable {
  private readonly changed = new vscode.EventEmitter<Row | undefined>();
  readonly onDidChangeTreeData = this.changed.event;
  private readonly cache = new Map<string, { signature: string; headline: Headline }>();
  private readonly queue: vscode.Uri[] = [];
  private working = false;
  private files: vscode.Uri[] = [];
  private readonly disposables: vscode.Disposable[] = [];

  constructor(
    private readonly worker: EngineWorker,
    private readonly getConfig: () => GainlineConfig,
    private readonly memory: vscode.Memento,
    /** Omitted in tests that do not open views: nothing then waits. */
    private readonly foreground?: ForegroundWork,
    /** One line per background read, with its start and end (epoch ms) for the first screen's timeline. */
    private readonly log?: (line: string) => void,
  ) {
    const watcher = vscode.workspace.createFileSystemWatcher(DUMP_WATCH_GLOB);
    let timer: ReturnType<typeof setTimeout> | undefined;
    const onFile = (): void => {
      // Writers touch a file many times while saving: refresh once things settle.
      if (timer) clearTimeout(timer);
      timer = setTimeout(() => this.refresh(), 500);
    };
    this.disposables.push({ dispose: () => timer && clearTimeout(timer) });
    this.disposables.push(this.changed, watcher, watcher.onDidCreate(onFile), watcher.onDidDelete(onFile), watcher.onDidChange(onFile));
  }

  /** Workspace dumps in listing order, up to MAX_LISTED_DUMPS, and whether the search found more. */
  async listing(): Promise<DumpListing<vscode.Uri>> {
    const config = this.getConfig();
    // Queries and items tables are read with the dumps, not scored on their own.
    const named = new Set(Object.values(config.sideFilesByPattern).flatMap((f) => Object.values(f) as string[]).map((p) => p.replace(/\\/g, '/')));
    const found = await vscode.workspace.findFiles(config.dumpGlob, config.dumpExclude, searchLimit());
    const listing = listingOf(found);
    const keyed = listing.files
      .map((uri) => ({ uri, relative: vscode.workspace.asRelativePath(uri, false).replace(/\\/g, '/') }))
      .filter((f) => !isSideTableName(f.uri.fsPath) && !named.has(f.relative))
      .sort((a, b) => a.relative.localeCompare(b.relative));
    return { files: keyed.map((f) => f.uri), searchStopped: listing.searchStopped };
  }

  /** Workspace dumps in listing order (the Runs view and the compare quick pick take them all). */
  async listFiles(): Promise<vscode.Uri[]> {
    return [...(await this.listing()).files];
  }

  refresh(): void {
    this.changed.fire(undefined);
  }

  /** Settings changed: every cached headline is stale. */
  invalidate(): void {
    this.cache.clear();
    this.refresh();
  }

  getTreeItem(element: Row): Row {
    return element;
  }

  async getChildren(element?: Row): Promise<Row[]> {
    if (element) return [];
    const listing = await this.listing();
    const { shown, more } = shownInRankedLists(listing);
    this.files = [...shown];
    const items: Row[] = [];
    for (const uri of this.files) {
      const signature = await this.signature(uri);
      const cached = this.cache.get(uri.fsPath);
      if (!cached || cached.signature !== signature) {
        this.cache.set(uri.fsPath, { signature, headline: { state: 'pending' } });
        if (!this.queue.some((q) => q.fsPath === uri.fsPath)) this.queue.push(uri);
      }
      items.push(new DumpItem(uri, this.cache.get(uri.fsPath)!.headline));
    }
    if (more !== undefined) items.push(new MoreDumpsItem(more, moreTooltip(listing)));
    void this.drain();
    return items;
  }

  dispose(): void {
    for (const d of this.disposables) d.dispose();
  }

  private async signature(uri: vscode.Uri): Promise<string> {
    try {
      const stat = await fsp.stat(uri.fsPath);
      return `${stat.mtimeMs}:${stat.size}:${this.getConfig().metrics}`;
    } catch {
      return 'missing';
    }
  }

  private async drain(): Promise<void> {
    if (this.working) return;
    this.working = true;
    try {
      for (;;) {
        await this.foreground?.idle();
        const uri = this.queue.shift();
        if (!uri) break;
        const signature = await this.signature(uri);
        const headline = await this.compute(uri);
        if (headline === 'yielded') {
          // A first screen started meanwhile: this file is read again once it is shown.
          this.queue.unshift(uri);
          continue;
        }
        this.cache.set(uri.fsPath, { signature, headline });
        this.refresh();
      }
    } finally {
      this.working = false;
    }
  }

  private async compute(uri: vscode.Uri): Promise<Headline | 'yielded'> {
    const config = this.getConfig();
    const yieldTo = new AbortController();
    const stopListening = this.foreground?.onHold(() => yieldTo.abort());
    const started = Date.now();
    try {
      const bytes = (await fsp.stat(uri.fsPath)).size;
      if (bytes > MAX_BACKGROUND_BYTES) return { state: 'large', bytes };
      const remembered = this.memory.get<string>(`gainline.judgments:${uri.fsPath}`);
      const choice = await sourceFor(uri.fsPath, vscode.workspace.asRelativePath(uri, false), config, remembered);
      if (choice.judgmentChoices && choice.judgmentsRequired) return { state: 'failed', message: 'Run file: open it once to choose its judgments file.' };
      const result = await this.worker.call('headline', { source: choice.source, settings: evaluationSettings(config) },
        { timeoutMs: LOAD_TIMEOUT_MS, signal: yieldTo.signal });
      this.log?.(`background headline of ${path.basename(uri.fsPath)}: ${Date.now() - started} ms (epoch ms ${started} to ${Date.now()})`);
      return {
        state: 'done',
        text: formatHeadline(result.label, result.mean),
        tooltip: `${result.queryCount} queries, ${result.rowCount} rows`,
      };
    } catch (error) {
      if (yieldTo.signal.aborted && error instanceof RequestAbortedError) {
        this.log?.(`background headline of ${path.basename(uri.fsPath)} stopped for a view's first screen (epoch ms ${started} to ${Date.now()})`);
        return 'yielded';
      }
      return { state: 'failed', message: error instanceof Error ? error.message : String(error) };
    } finally {
      stopListening?.();
    }
  }
}
