/**
 * Cancellation that reaches a busy thread: the host writes a request's id into a shared slot; the
 * worker's progress callbacks read it between chunks of synchronous work.
 */
export const CANCEL_SLOTS = 1024;

export function createCancelFlags(): SharedArrayBuffer {
  return new SharedArrayBuffer(CANCEL_SLOTS * Int32Array.BYTES_PER_ELEMENT);
}

export function markCancelled(flags: Int32Array, id: number): void {
  Atomics.store(flags, id % CANCEL_SLOTS, id);
}

export function isCancelled(flags: Int32Array | undefined, id: number): boolean {
  return flags !== undefined && Atomics.load(flags, id % CANCEL_SLOTS) === id;
}
