/**
 * Keeps long resampling loops responsive: reports progress, honours an AbortSignal and hands control
 * back to the event loop now and then, so a cancel request (or a UI message) can arrive mid-test.
 */
import { CancelledError } from '../errors';

export type ProgressCallback = (done: number, total: number) => void;

export interface LoopControl {
  readonly signal?: AbortSignal;
  readonly onProgress?: ProgressCallback;
}

/** How long a loop may hold the thread before yielding; short enough for a responsive cancel. */
const SLICE_MS = 40;

export class Pacer {
  private sliceStart = Date.now();

  constructor(
    private readonly control: LoopControl,
    private readonly total: number,
  ) {
    this.throwIfAborted();
  }

  /** Call every few hundred iterations; resolves at once unless the current time slice is used up. */
  async tick(done: number): Promise<void> {
    this.throwIfAborted();
    const now = Date.now();
    if (now - this.sliceStart < SLICE_MS) return;
    this.control.onProgress?.(done, this.total);
    await new Promise<void>((resolve) => setTimeout(resolve, 0));
    this.sliceStart = Date.now();
    this.throwIfAborted();
  }

  finish(): void {
    this.control.onProgress?.(this.total, this.total);
  }

  private throwIfAborted(): void {
    if (this.control.signal?.aborted) throw new CancelledError();
  }
}
