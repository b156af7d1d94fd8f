/**
 * The one side message a thread sends besides the channel's answers: how far a request has got.
 * It names the request's id, so the pool hands it to that request's caller.
 */
export interface ProgressEnvelope {
  readonly kind: 'progress';
  readonly id: number;
  /** The request's own measure: bytes parsed, chunks claimed, ... */
  readonly value: number;
}

export function isProgressEnvelope(message: unknown): message is ProgressEnvelope {
  return (
    typeof message === 'object' &&
    message !== null &&
    (message as { kind?: unknown }).kind === 'progress' &&
    typeof (message as { id?: unknown }).id === 'number' &&
    typeof (message as { value?: unknown }).value === 'number'
  );
}
