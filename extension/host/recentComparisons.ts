/**
 * The "Recent Comparisons" view in Gainline's own activity-bar container: the last pairs of runs
 * compared in this workspace, newest first; a click compares them again.
 */
import * as path from 'node:path';
import * as vscode from 'vscode';

const MEMORY_KEY = 'gainline.recentComparisons';
const KEEP = 12;

interface Pair {
  readonly a: string;
  readonly b: string;
}

export class ComparisonItem extends vscode.TreeItem {
  constructor(readonly a: vscode.Uri, readonly b: vscode.Uri) {
    super(`${path.basename(a.fsPath)} ↔ ${path.basename(b.fsPath)}`, vscode.TreeItemCollapsibleState.None);
    const where = (u: vscode.Uri) => vscode.workspace.asRelativePath(u);
    this.description = path.dirname(where(a)) === path.dirname(where(b)) ? path.dirname(where(a)) : '';
    this.tooltip = `A: ${where(a)}\nB: ${where(b)}\nClick to compare again.`;
    this.iconPath = new vscode.ThemeIcon('diff');
    this.contextValue = 'gainline.comparison';
    this.command = { command: 'gainline.compareRuns', title: 'Compare Two Runs', arguments: [a, [a, b]] };
  }
}

export class RecentComparisons implements vscode.TreeDataProvider<ComparisonItem>, vscode.Disposable {
  private readonly changed = new vscode.EventEmitter<undefined>();
  readonly onDidChangeTreeData = this.changed.event;

  constructor(private readonly memory: vscode.Memento) {}

  /** Moves the pair to the top (a pair compared again is not listed twice). */
  async remember(a: vscode.Uri, b: vscode.Uri): Promise<void> {
    const pair: Pair = { a: a.fsPath, b: b.fsPath };
    const rest = this.pairs().filter((p) => p.a !== pair.a || p.b !== pair.b);
    await this.memory.update(MEMORY_KEY, [pair, ...rest].slice(0, KEEP));
    this.changed.fire(undefined);
  }

  async clear(): Promise<void> {
    await this.memory.update(MEMORY_KEY, []);
    this.changed.fire(undefined);
  }

  getTreeItem(element: ComparisonItem): ComparisonItem {
    return element;
  }

  getChildren(element?: ComparisonItem): ComparisonItem[] {
    if (element) return [];
    return this.pairs().map((p) => new ComparisonItem(vscode.Uri.file(p.a), vscode.Uri.file(p.b)));
  }

  dispose(): void {
    this.changed.dispose();
  }

  private pairs(): Pair[] {
    const stored = this.memory.get<unknown>(MEMORY_KEY);
    if (!Array.isArray(stored)) return [];
    return stored.filter((p): p is Pair => typeof p === 'object' && p !== null && typeof (p as Pair).a === 'string' && typeof (p as Pair).b === 'string');
  }
}
