/**
 * The lifecycle both view sessions share (extension/host/sessionLife.ts), on a fake clock: reloads
 * debounced, one load at a time, and an end after which nothing runs and the worker's session is freed.
 */
import { afterEach, describe, expect, it, vi } from 'vitest';
import { SessionLife } from '../../extension/host/sessionLife';

function life(running = true) {
  const call = vi.fn(async () => undefined);
  const link = { dispose: vi.fn() };
  const watcher = { dispose: vi.fn() };
  const l = new SessionLife({ running, call } as never, 'view-7', link as never);
  l.disposables.push(watcher);
  return { l, call, link, watcher };
}

afterEach(() => {
  vi.useRealTimers();
});

describe('SessionLife', () => {
  it('runs a reload once the changes settle: the last delay counts', async () => {
    vi.useFakeTimers();
    const { l } = life();
    const load = vi.fn();
    l.debounce(300, load);
    await vi.advanceTimersByTimeAsync(200);
    l.debounce(300, load);
    await vi.advanceTimersByTimeAsync(299);
    expect(load).not.toHaveBeenCalled();
    await vi.advanceTimersByTimeAsync(1);
    expect(load).toHaveBeenCalledTimes(1);
    expect(vi.getTimerCount()).toBe(0);
  });

  it('a new load aborts the one under way; stop drops the pending reload and aborts', async () => {
    vi.useFakeTimers();
    const { l } = life();
    const first = l.nextLoad();
    const second = l.nextLoad();
    expect(first.signal.aborted).toBe(true);
    expect(second.signal.aborted).toBe(false);
    const load = vi.fn();
    l.debounce(300, load);
    l.stop();
    expect(second.signal.aborted).toBe(true);
    expect(vi.getTimerCount()).toBe(0);
    await vi.advanceTimersByTimeAsync(1000);
    expect(load).not.toHaveBeenCalled();
  });

  it('the end: aborts, lets go of the page and the watchers, frees the worker session once, and schedules nothing after', async () => {
    vi.useFakeTimers();
    const { l, call, link, watcher } = life();
    const load = l.nextLoad();
    l.debounce(300, vi.fn());
    l.dispose();
    l.dispose();
    expect(l.disposed).toBe(true);
    expect(load.signal.aborted).toBe(true);
    expect(link.dispose).toHaveBeenCalledTimes(1);
    expect(watcher.dispose).toHaveBeenCalledTimes(1);
    expect(call.mock.calls).toEqual([['unload', { session: 'view-7' }]]);
    l.debounce(300, vi.fn());
    expect(vi.getTimerCount()).toBe(0);
  });

  it('a worker that is not running is not started to free a session', () => {
    const { l, call } = life(false);
    l.dispose();
    expect(call).not.toHaveBeenCalled();
  });
});
