/**
 * Just enough of the `vscode` API for the host's view sessions to run in plain Node. Tests install it
 * with `vi.mock('vscode', () => fake)` and drive webviews, watchers and progress by hand.
 */
import * as path from 'node:path';

type Listener<T> = (value: T) => void;

export class EventEmitter<T> {
  private listeners = new Set<Listener<T>>();
  readonly event = (listener: Listener<T>) => {
    this.listeners.add(listener);
    return { dispose: () => this.listeners.delete(listener) };
  };
  fire(value: T): void {
    for (const l of [...this.listeners]) l(value);
  }
  dispose(): void {
    this.listeners.clear();
  }
}

export class Uri {
  private constructor(readonly fsPath: string, readonly scheme = 'file', private readonly text?: string) {}
  static file(p: string): Uri {
    return new Uri(p);
  }
  /** scheme://authority/path: fsPath is the path, as in the editor's API. */
  static parse(text: string): Uri {
    const m = /^([a-z][\w+.-]*):\/\/[^/]*(\/.*)?$/i.exec(text);
    if (!m) throw new Error(`not a URI: ${text}`);
    return new Uri(m[2] ?? '/', m[1]!.toLowerCase(), text);
  }
  static joinPath(base: Uri, ...parts: string[]): Uri {
    return new Uri(path.join(base.fsPath, ...parts));
  }
  toString(_skipEncoding?: boolean): string {
    return this.text ?? `file://${this.fsPath}`;
  }
}

export class RelativePattern {
  constructor(readonly base: Uri, readonly pattern: string) {}
}

export class Selection {
  constructor(readonly start: unknown, readonly end: unknown) {}
}

export class FakeWatcher {
  readonly change = new EventEmitter<Uri>();
  readonly create = new EventEmitter<Uri>();
  readonly remove = new EventEmitter<Uri>();
  readonly onDidChange = this.change.event;
  readonly onDidCreate = this.create.event;
  readonly onDidDelete = this.remove.event;
  disposed = false;
  constructor(readonly pattern: RelativePattern | string) {}
  dispose(): void {
    this.disposed = true;
  }
}

export class FakeWebview {
  readonly posted: any[] = [];
  readonly incoming = new EventEmitter<unknown>();
  readonly onDidReceiveMessage = this.incoming.event;
  cspSource = 'fake-csp';
  html = '';
  options: unknown = {};
  async postMessage(message: unknown): Promise<boolean> {
    // Through JSON like the real webview transport, so NaN or Maps would show up as wrong values.
    this.posted.push(JSON.parse(JSON.stringify(message)));
    return true;
  }
  states(): any[] {
    return this.posted.filter((m) => m.kind === 'state').map((m) => m.state);
  }
}

export class TreeItem {
  resourceUri: Uri | undefined;
  contextValue: string | undefined;
  command: unknown;
  description: string | undefined;
  tooltip: string | undefined;
  constructor(readonly label: string, readonly collapsibleState?: number) {}
}

export class ThemeIcon {
  constructor(readonly id: string) {}
}

export class TabInputText {
  constructor(readonly uri: Uri) {}
}
export class TabInputCustom {
  constructor(readonly uri: Uri, readonly viewType: string) {}
}

export interface FakeState {
  watchers: FakeWatcher[];
  /** Locations of every progress shown (15 = notification, 10 = window). */
  progressShown: number[];
  /** Set to cancel the next notification progress right away (as if Cancel were clicked). */
  cancelNextProgress: boolean;
  clipboard: string;
  shownDocuments: { file: string; selection: Selection }[];
  messages: string[];
  quickPickAnswer: ((items: any[]) => any) | undefined;
  /** What window.showInputBox answers (undefined: dismissed). */
  inputBoxAnswer?: ((options: any) => string | undefined) | undefined;
  commands: Map<string, (...args: unknown[]) => unknown>;
  executed: { id: string; args: unknown[] }[];
  activeTab: unknown;
  /** What workspace.findFiles returns. */
  workspaceFiles: Uri[];
}

export function createFakeVscode() {
  const state: FakeState = { progressShown: [], watchers: [], cancelNextProgress: false, clipboard: '', shownDocuments: [], messages: [], quickPickAnswer: undefined,
    commands: new Map(), executed: [], activeTab: undefined, workspaceFiles: [] };
  const api = {
    EventEmitter,
    Uri,
    RelativePattern,
    Selection,
    TreeItem,
    TabInputText,
    TabInputCustom,
    TreeItemCollapsibleState: { None: 0, Collapsed: 1 },
    ThemeIcon,
    commands: {
      registerCommand(id: string, handler: (...args: unknown[]) => unknown) {
        state.commands.set(id, handler);
        return { dispose: () => state.commands.delete(id) };
      },
      async executeCommand(id: string, ...args: unknown[]) {
        state.executed.push({ id, args });
      },
    },
    ProgressLocation: { Notification: 15, Window: 10 },
    ViewColumn: { Beside: -2, Active: -1 },
    window: {
      activeTextEditor: undefined,
      tabGroups: { get activeTabGroup() { return { activeTab: state.activeTab, viewColumn: 1 }; } },
      visibleTextEditors: [] as unknown[],
      async withProgress(options: { location: number }, task: (progress: unknown, token: unknown) => Promise<unknown>) {
        state.progressShown.push(options.location);
        const cancel = new EventEmitter<void>();
        const token = { isCancellationRequested: false, onCancellationRequested: cancel.event };
        const run = task({ report: () => undefined }, token);
        if (state.cancelNextProgress && options.location === 15) {
          state.cancelNextProgress = false;
          token.isCancellationRequested = true;
          cancel.fire();
        }
        return run;
      },
      showInformationMessage: async (m: string) => void state.messages.push(m),
      showWarningMessage: async (m: string) => void state.messages.push(m),
      setStatusBarMessage: () => ({ dispose() {} }),
      showQuickPick: async (items: any[]) => state.quickPickAnswer?.(items),
      showInputBox: async (options: any) => state.inputBoxAnswer?.(options),
      showOpenDialog: async () => undefined,
      showSaveDialog: async () => undefined,
      async showTextDocument(document: { file: string }, options: { selection: Selection }) {
        state.shownDocuments.push({ file: document.file, selection: options.selection });
      },
    },
    workspace: {
      createFileSystemWatcher(pattern: RelativePattern | string) {
        const w = new FakeWatcher(pattern);
        state.watchers.push(w);
        return w;
      },
      findFiles: async (_include: unknown, _exclude?: unknown, maxResults?: number) => state.workspaceFiles.slice(0, maxResults ?? Infinity),
      asRelativePath: (p: Uri | string) => path.basename(typeof p === 'string' ? p : p.fsPath),
      async openTextDocument(uri: Uri) {
        return {
          file: uri.fsPath,
          uri,
          lineCount: 1_000_000,
          lineAt: (i: number) => ({ range: { start: { line: i, character: 0 }, end: { line: i, character: 99 } } }),
        };
      },
      fs: { writeFile: async () => undefined },
    },
    env: { clipboard: { writeText: async (t: string) => void (state.clipboard = t) } },
  };
  return { api, state };
}

/** A workspaceState-like memory. */
export function memento(): { get<T>(key: string): T | undefined; update(key: string, value: unknown): Promise<void> } {
  const values = new Map<string, unknown>();
  return {
    get: <T>(key: string) => values.get(key) as T | undefined,
    update: async (key, value) => void values.set(key, value),
  };
}

/** One instance per test file: the `vi.mock('vscode')` factory and the test share it. */
export const shared = createFakeVscode();
