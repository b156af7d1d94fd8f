/**
 * The engine thread's warm-up stops for a real read and runs again once the thread has been quiet a
 * while, until a run finishes (worker/warmUpControl.ts). Driven by a fake clock: the scheduled resumes
 * are run by hand, and the warm-up is a promise the test settles.
 */
import { describe, expect, it } from 'vitest';
import { IDLE_BEFORE_RESUME_MS, WarmUpControl, type Schedule } from '../../extension/worker/warmUpControl';

/** A warm-up whose runs the test finishes or sees stopped, and a clock whose timers the test fires. */
function harness() {
  const runs: { signal: AbortSignal; finish: () => void; fail: (error: Error) => void }[] = [];
  const timers: { task: () => void; ms: number; cancelled: boolean }[] = [];
  const schedule: Schedule = (task, ms) => {
    const timer = { task, ms, cancelled: false };
    timers.push(timer);
    return () => void (timer.cancelled = true);
  };
  let clock = 1000;
  const control = new WarmUpControl((signal) => new Promise<void>((resolve, reject) => {
    signal.addEventListener('abort', () => reject(new Error('stopped')));
    runs.push({ signal, finish: resolve, fail: reject });
  }), schedule, () => clock);
  const pending = () => timers.filter((t) => !t.cancelled);
  const fire = () => {
    const due = pending();
    for (const t of due) t.cancelled = true;
    for (const t of due) t.task();
  };
  const settle = () => new Promise<void>((resolve) => setImmediate(resolve));
  return { control, runs, pending, fire, settle, tick: (ms: number) => (clock += ms) };
}

describe('the warm-up around real reads', () => {
  it('a read stops it; once the reads are over it runs again after a quiet while, and its finish is noted', async () => {
    const h = harness();
    h.control.start();
    expect(h.runs).toHaveLength(1);
    h.control.readStarted();
    expect(h.runs[0]!.signal.aborted).toBe(true);
    await h.settle();
    expect(h.control.warmedAt).toBeUndefined();
    // Nothing runs while the read goes on.
    h.control.start();
    expect(h.runs).toHaveLength(1);
    expect(h.pending()).toHaveLength(0);
    h.control.readDone();
    expect(h.pending().map((t) => t.ms)).toEqual([IDLE_BEFORE_RESUME_MS]);
    h.fire();
    expect(h.runs).toHaveLength(2);
    h.tick(250);
    h.runs[1]!.finish();
    await h.settle();
    expect(h.control.warmedAt).toBe(1250);
    // Finished: later reads leave it alone.
    h.control.readStarted();
    h.control.readDone();
    expect(h.pending()).toHaveLength(0);
    expect(h.runs).toHaveLength(2);
  });

  it('waits for the last of overlapping reads, and a read before the quiet while ends puts the run off again', async () => {
    const h = harness();
    h.control.start();
    h.control.readStarted();
    h.control.readStarted();
    h.control.readDone();
    expect(h.pending()).toHaveLength(0);
    h.control.readDone();
    expect(h.pending()).toHaveLength(1);
    // A click within the quiet while: the resume is cancelled, and scheduled anew when that read is over.
    h.control.readStarted();
    expect(h.pending()).toHaveLength(0);
    h.control.readDone();
    expect(h.pending()).toHaveLength(1);
    h.fire();
    expect(h.runs).toHaveLength(2);
    expect(h.runs[1]!.signal.aborted).toBe(false);
  });

  it('a run that fails by itself is not tried again, after a read or asked to start', async () => {
    const h = harness();
    h.control.start();
    h.runs[0]!.fail(new Error('no room in the temp folder'));
    await h.settle();
    h.control.readStarted();
    h.control.readDone();
    h.control.start();
    expect(h.pending()).toHaveLength(0);
    expect(h.runs).toHaveLength(1);
    expect(h.control.warmedAt).toBeUndefined();
  });

  it('a run stopped after it finished its work does not count as finished', async () => {
    const h = harness();
    h.control.start();
    // The read arrives as the run resolves: the stop wins, and the run is due again after the read.
    h.runs[0]!.finish();
    h.control.readStarted();
    await h.settle();
    expect(h.control.warmedAt).toBeUndefined();
    h.control.readDone();
    h.fire();
    expect(h.runs).toHaveLength(2);
  });
});
