/**
 * What every view session backed by the engine worker shares (ViewSession, SeriesSession): one load at
 * a time (a new one aborts the last), reloads debounced, and an end that stops both, lets go of the
 * webview and the watchers, and frees the worker's copy of the session.
 */
import type * as vscode from 'vscode';
import type { WebviewLink } from './webviewLink';
import type { EngineWorker } from './workerHost';

export class SessionLife implements vscode.Disposable {
  /** Watchers and listeners that end with the session. */
  readonly disposables: vscode.Disposable[] = [];
  private loadAbort: AbortController | undefined;
  private reloadTimer: ReturnType<typeof setTimeout> | undefined;
  private ended = false;

  constructor(
    private readonly worker: EngineWorker,
    /** The session's key in the worker. */
    private readonly session: string,
    private readonly link: WebviewLink,
  ) {}

  get disposed(): boolean {
    return this.ended;
  }

  /** Aborts the load under way, if any, and gives the controller of the one starting now. */
  nextLoad(): AbortController {
    this.loadAbort?.abort();
    this.loadAbort = new AbortController();
    return this.loadAbort;
  }

  /** Runs `load` once `delayMs` pass without another call (a writer touches a file many times); never after the end. */
  debounce(delayMs: number, load: () => void): void {
    if (this.ended) return;
    if (this.reloadTimer) clearTimeout(this.reloadTimer);
    this.reloadTimer = setTimeout(() => {
      this.reloadTimer = undefined;
      load();
    }, delayMs);
  }

  /** Drops the pending reload and aborts the load under way (the file is gone, or the session ends). */
  stop(): void {
    if (this.reloadTimer) clearTimeout(this.reloadTimer);
    this.reloadTimer = undefined;
    this.loadAbort?.abort();
  }

  dispose(): void {
    if (this.ended) return;
    this.ended = true;
    this.stop();
    this.link.dispose();
    for (const d of this.disposables) d.dispose();
    if (this.worker.running) void this.worker.call('unload', { session: this.session }).catch(() => undefined);
  }
}
