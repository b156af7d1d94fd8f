/**
 * When the engine thread's warm-up (warmUp.ts) runs. It starts with the thread; a real read stops it where
 * it is, since the user's dump goes first. A warm-up stopped that way used to be gone for good: its last
 * step starts the kept parse and score threads, so a view opened right after a window reload left them
 * unstarted for every later dump (the first-screen benchmark's 1M-row samples had no warm-up mark). So a
 * stopped warm-up runs again once the thread has had nothing to read for IDLE_BEFORE_RESUME_MS, until one
 * run finishes. In a bare Node process the same 1M-row file read in 0.24-0.42 s with kept threads against
 * 0.30-0.44 s without; in the editor the read shares two cores with code-server and Chromium, and the
 * benchmark's first screen did not measurably change.
 */

/** Quiet time after the last read before a stopped warm-up runs again (a user's next click usually takes longer). */
export const IDLE_BEFORE_RESUME_MS = 1_000;

/** Runs `task` after `ms`; the function returned cancels it. setTimeout in the thread, a fake clock in tests. */
export type Schedule = (task: () => void, ms: number) => () => void;

export const realSchedule: Schedule = (task, ms) => {
  const timer = setTimeout(task, ms);
  timer.unref?.();
  return () => clearTimeout(timer);
};

export class WarmUpControl {
  /** When a warm-up run finished (epoch ms), for the first screen's timeline. */
  warmedAt: number | undefined;
  private running: AbortController | undefined;
  private cancelResume: (() => void) | undefined;
  /** Reads going on now: the warm-up waits for none of them to be left. */
  private reads = 0;
  private givenUp = false;

  constructor(
    private readonly run: (signal: AbortSignal) => Promise<void>,
    private readonly schedule: Schedule = realSchedule,
    private readonly now: () => number = Date.now,
  ) {}

  /** Starts a run unless one is going, one has finished, a read is going on, or a run failed. */
  start(): void {
    if (this.running !== undefined || this.warmedAt !== undefined || this.reads > 0 || this.givenUp) return;
    const stop = new AbortController();
    this.running = stop;
    this.run(stop.signal).then(
      () => {
        if (!stop.signal.aborted) this.warmedAt = this.now();
      },
      // Stopped by a read: it runs again later. Failed otherwise: it costs only the speed it was for, and
      // a run that failed once would fail again.
      () => void (this.givenUp ||= !stop.signal.aborted),
    ).finally(() => {
      if (this.running === stop) this.running = undefined;
    });
  }

  /** A real read begins: the warm-up stops where it is and waits until the reads are over. */
  readStarted(): void {
    this.reads++;
    this.cancelResume?.();
    this.cancelResume = undefined;
    this.running?.abort();
    this.running = undefined;
  }

  /** A real read is over (answered or failed): with no other going on, a stopped warm-up runs again after a quiet while. */
  readDone(): void {
    this.reads = Math.max(0, this.reads - 1);
    if (this.reads > 0 || this.warmedAt !== undefined || this.givenUp) return;
    this.cancelResume?.();
    this.cancelResume = this.schedule(() => {
      this.cancelResume = undefined;
      this.start();
    }, IDLE_BEFORE_RESUME_MS);
  }
}
