/**
 * One request/response helper over any postMessage-like transport (webview ⇄ host, host ⇄ worker,
 * the engine ⇄ its own threads). It imports nothing, so every layer may use it: the engine, which may not
 * import the protocol, included.
 *
 * Every request carries an id; the answer comes back as a `response` envelope with the same id, in any
 * order. A caller is never left hanging: each request has a timeout, a remote failure rejects with the
 * remote message, an AbortSignal sends a `cancel` envelope and rejects at once, and disposing the client
 * rejects everything still pending.
 */

/** A request map: method name → params and result types. */
export type RequestMap = Record<string, { params: unknown; result: unknown }>;
export type Method<M extends RequestMap> = keyof M & string;
export type ParamsOf<M extends RequestMap, K extends Method<M>> = M[K]['params'];
export type ResultOf<M extends RequestMap, K extends Method<M>> = M[K]['result'];

export interface RequestEnvelope<M extends RequestMap = RequestMap, K extends Method<M> = Method<M>> {
  readonly kind: 'request';
  readonly id: number;
  readonly method: K;
  readonly params: ParamsOf<M, K>;
}

export type ResponseEnvelope =
  | { readonly kind: 'response'; readonly id: number; readonly ok: true; readonly result: unknown }
  | { readonly kind: 'response'; readonly id: number; readonly ok: false; readonly error: RemoteErrorInfo };

/** Asks the serving side to abort a request still running (its answer will be ignored). */
export interface CancelEnvelope {
  readonly kind: 'cancel';
  readonly id: number;
}

/** What crosses the boundary about a failure: enough to show it, never a stack. */
export interface RemoteErrorInfo {
  /** The remote error's class name: 'InputError', 'CancelledError', 'Error', ... */
  readonly name: string;
  readonly message: string;
  /**
   * The error's own plain fields (strings and numbers, e.g. an input error's file and line), when it
   * has any, so the asking side can rebuild an error of the same class with the same message.
   */
  readonly fields?: Readonly<Record<string, string | number>>;
}

/** A failure reported by the other side; `remoteName` keeps the remote class name (e.g. InputError). */
export class RemoteError extends Error {
  constructor(readonly remoteName: string, message: string, readonly fields: Readonly<Record<string, string | number>> = {}) {
    super(message);
    this.name = 'RemoteError';
  }
}

export class RequestTimeoutError extends Error {
  constructor(readonly method: string, readonly timeoutMs: number) {
    super(`no answer to '${method}' within ${timeoutMs} ms`);
    this.name = 'RequestTimeoutError';
  }
}

/** Raised for pending requests when the channel is disposed, and for requests made after that. */
export class ChannelClosedError extends Error {
  constructor(reason: string) {
    super(reason);
    this.name = 'ChannelClosedError';
  }
}

/** The caller aborted the request through its AbortSignal. */
export class RequestAbortedError extends Error {
  constructor(readonly method: string) {
    super(`'${method}' was cancelled`);
    this.name = 'RequestAbortedError';
  }
}

export interface RequestOptions {
  /** Overrides the client's default timeout; 0 or Infinity means no timeout. */
  readonly timeoutMs?: number;
  readonly signal?: AbortSignal;
  /** Called with the request id before it is posted (to match side messages such as progress). */
  readonly onId?: (id: number) => void;
}

interface Pending {
  readonly method: string;
  resolve(value: unknown): void;
  reject(error: Error): void;
  cleanup(): void;
}

export function isResponseEnvelope(message: unknown): message is ResponseEnvelope {
  return isEnvelopeOfKind(message, 'response');
}

export function isRequestEnvelope(message: unknown): message is RequestEnvelope {
  return isEnvelopeOfKind(message, 'request') && typeof (message as { method?: unknown }).method === 'string';
}

export function isCancelEnvelope(message: unknown): message is CancelEnvelope {
  return isEnvelopeOfKind(message, 'cancel');
}

function isEnvelopeOfKind(message: unknown, kind: string): boolean {
  return (
    typeof message === 'object' &&
    message !== null &&
    (message as { kind?: unknown }).kind === kind &&
    typeof (message as { id?: unknown }).id === 'number'
  );
}

/** The asking side. Feed every incoming message to `handleMessage`. */
export class RequestClient<M extends RequestMap> {
  private nextId = 1;
  private readonly pending = new Map<number, Pending>();
  private closedReason: string | undefined;

  constructor(
    private readonly post: (message: RequestEnvelope<M> | CancelEnvelope) => void,
    private readonly defaultTimeoutMs = 30_000,
  ) {}

  get pendingCount(): number {
    return this.pending.size;
  }

  request<K extends Method<M>>(method: K, params: ParamsOf<M, K>, options: RequestOptions = {}): Promise<ResultOf<M, K>> {
    if (this.closedReason !== undefined) return Promise.reject(new ChannelClosedError(this.closedReason));
    if (options.signal?.aborted) return Promise.reject(new RequestAbortedError(method));
    const id = this.nextId++;
    return new Promise<ResultOf<M, K>>((resolve, reject) => {
      const timeoutMs = options.timeoutMs ?? this.defaultTimeoutMs;
      const timer =
        timeoutMs > 0 && Number.isFinite(timeoutMs)
          ? setTimeout(() => this.settleWithCancel(id, new RequestTimeoutError(method, timeoutMs)), timeoutMs)
          : undefined;
      const onAbort = (): void => this.settleWithCancel(id, new RequestAbortedError(method));
      options.signal?.addEventListener('abort', onAbort, { once: true });
      this.pending.set(id, {
        method,
        resolve: resolve as (value: unknown) => void,
        reject,
        cleanup: () => {
          if (timer !== undefined) clearTimeout(timer);
          options.signal?.removeEventListener('abort', onAbort);
        },
      });
      try {
        options.onId?.(id);
        this.post({ kind: 'request', id, method, params });
      } catch (error) {
        this.settle(id, error instanceof Error ? error : new Error(String(error)));
      }
    });
  }

  /** Returns true when the message was a response meant for this client. Unknown ids are ignored. */
  handleMessage(message: unknown): boolean {
    if (!isResponseEnvelope(message)) return false;
    const entry = this.pending.get(message.id);
    if (!entry) return true; // late answer to a request that timed out or was cancelled
    if (message.ok) this.settle(message.id, undefined, message.result);
    else this.settle(message.id, new RemoteError(message.error.name, message.error.message, message.error.fields));
    return true;
  }

  /** Rejects every pending request and refuses new ones. */
  dispose(reason = 'the channel was closed'): void {
    this.closedReason ??= reason;
    for (const id of [...this.pending.keys()]) this.settle(id, new ChannelClosedError(reason));
  }

  private settleWithCancel(id: number, error: Error): void {
    if (!this.pending.has(id)) return;
    this.settle(id, error);
    try {
      this.post({ kind: 'cancel', id });
    } catch {
      // The transport is gone; nothing is left to cancel.
    }
  }

  private settle(id: number, error?: Error, result?: unknown): void {
    const entry = this.pending.get(id);
    if (!entry) return;
    this.pending.delete(id);
    entry.cleanup();
    if (error) entry.reject(error);
    else entry.resolve(result);
  }
}

export interface HandlerContext {
  /** The request's id (lets a handler tag progress events it sends on the side). */
  readonly id: number;
  /** Aborted when the asking side cancels the request or the server is disposed. */
  readonly signal: AbortSignal;
}

export type RequestHandlers<M extends RequestMap> = {
  [K in Method<M>]: (params: ParamsOf<M, K>, context: HandlerContext) => ResultOf<M, K> | Promise<ResultOf<M, K>>;
};

/** The answering side. Feed every incoming message to `handleMessage`. */
export class RequestServer<M extends RequestMap> {
  private readonly running = new Map<number, AbortController>();

  constructor(
    private readonly handlers: RequestHandlers<M>,
    private readonly post: (message: ResponseEnvelope) => void,
  ) {}

  get runningCount(): number {
    return this.running.size;
  }

  /** Returns true when the message was a request or cancel envelope (handled here). */
  handleMessage(message: unknown): boolean {
    if (isCancelEnvelope(message)) {
      this.running.get(message.id)?.abort();
      return true;
    }
    if (!isRequestEnvelope(message)) return false;
    void this.run(message as RequestEnvelope<M>);
    return true;
  }

  dispose(): void {
    for (const controller of this.running.values()) controller.abort();
    this.running.clear();
  }

  private async run(message: RequestEnvelope<M>): Promise<void> {
    const { id, method } = message;
    const handler = Object.prototype.hasOwnProperty.call(this.handlers, method) ? this.handlers[method] : undefined;
    if (!handler) {
      this.safePost({ kind: 'response', id, ok: false, error: { name: 'Error', message: `unknown method '${method}'` } });
      return;
    }
    const controller = new AbortController();
    this.running.set(id, controller);
    try {
      const result = await handler(message.params, { id, signal: controller.signal });
      if (!controller.signal.aborted) this.safePost({ kind: 'response', id, ok: true, result });
    } catch (error) {
      if (!controller.signal.aborted) this.safePost({ kind: 'response', id, ok: false, error: toErrorInfo(error) });
    } finally {
      this.running.delete(id);
    }
  }

  private safePost(message: ResponseEnvelope): void {
    try {
      this.post(message);
    } catch {
      // The asking side is gone (panel closed, worker terminated): its client rejects on dispose.
    }
  }
}

export function toErrorInfo(error: unknown): RemoteErrorInfo {
  if (error instanceof RemoteError) return withFields({ name: error.remoteName, message: error.message }, error.fields);
  if (error instanceof Error) return withFields({ name: error.name || 'Error', message: error.message }, error);
  return { name: 'Error', message: String(error) };
}

/** Adds the source's own string and number fields, but for the ones every error has. */
function withFields(info: RemoteErrorInfo, source: object): RemoteErrorInfo {
  const fields: Record<string, string | number> = {};
  for (const [key, value] of Object.entries(source)) {
    if (key === 'name' || key === 'message' || key === 'stack' || key === 'remoteName' || key === 'fields') continue;
    if (typeof value === 'string' || typeof value === 'number') fields[key] = value;
  }
  return Object.keys(fields).length > 0 ? { ...info, fields } : info;
}
