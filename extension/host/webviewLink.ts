/**
 * The host's end of one webview, shared by the dump/compare views (viewSession.ts) and the trend view
 * (seriesSession.ts): it keeps the state last pushed, sends it again when the webview (re)starts and
 * says it is ready, hands requests to the view's handlers, and stops posting once disposed (a closed
 * panel's postMessage rejects; a late answer is dropped, as the webview that asked is gone).
 */
import type * as vscode from 'vscode';
import type { HostToView, ViewRequests, ViewState, ViewToHost } from '../protocol/messages';
import { RequestServer, type RequestHandlers } from '../channel/request';

export interface WebviewLinkHooks {
  /** After the state was sent again to a webview that (re)started. */
  readonly onReady?: () => void;
  /** The query the user looks at in the webview. */
  readonly onSelection?: (query: string | null) => void;
}

export class WebviewLink implements vscode.Disposable {
  private current: ViewState;
  private readonly server: RequestServer<ViewRequests>;
  private readonly subscription: vscode.Disposable;
  private disposed = false;

  constructor(
    private readonly webview: vscode.Webview,
    initial: ViewState,
    handlers: RequestHandlers<ViewRequests>,
    private readonly hooks: WebviewLinkHooks = {},
  ) {
    this.current = initial;
    this.server = new RequestServer<ViewRequests>(handlers, (message) => void this.post(message));
    this.subscription = webview.onDidReceiveMessage((message: ViewToHost) => this.onMessage(message));
  }

  get state(): ViewState {
    return this.current;
  }

  setState(state: ViewState): void {
    this.current = state;
    void this.post({ kind: 'state', state });
  }

  post(message: HostToView): Thenable<boolean> {
    if (this.disposed) return Promise.resolve(false);
    return this.webview.postMessage(message).then(undefined, () => false);
  }

  /** Stops posting, cancels the requests still being answered and stops listening to the webview. */
  dispose(): void {
    if (this.disposed) return;
    this.disposed = true;
    this.server.dispose();
    this.subscription.dispose();
  }

  private onMessage(message: ViewToHost): void {
    if (message.kind === 'ready') {
      void this.post({ kind: 'state', state: this.current });
      this.hooks.onReady?.();
    } else if (message.kind === 'selection') {
      this.hooks.onSelection?.(message.query);
    } else {
      this.server.handleMessage(message);
    }
  }
}
