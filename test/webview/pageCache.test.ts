import { describe, expect, it } from 'vitest';
import { PageCache, type PageAnswer } from '../../webview/src/model/pageCache';

interface Deferred {
  offset: number;
  limit: number;
  resolve(answer: PageAnswer<number>): void;
  reject(error: Error): void;
}

function harness(pageSize = 10, maxPages = 64) {
  const calls: Deferred[] = [];
  let changes = 0;
  const fetcher = (offset: number, limit: number) =>
    new Promise<PageAnswer<number>>((resolve, reject) => calls.push({ offset, limit, resolve, reject }));
  const cache = new PageCache<number>(fetcher, pageSize, () => changes++, maxPages);
  const answer = (call: Deferred, total: number) =>
    call.resolve({ total, offset: call.offset, rows: Array.from({ length: Math.min(call.limit, total - call.offset) }, (_, i) => call.offset + i) });
  return { cache, calls, answer, changes: () => changes };
}

const flush = () => new Promise((r) => setTimeout(r, 0));

describe('PageCache', () => {
  it('fetches each missing page once and serves rows by index', async () => {
    const h = harness();
    expect(h.cache.ensure([0, 1])).toBe(2);
    expect(h.cache.ensure([0, 1])).toBe(0); // already in flight
    h.answer(h.calls[0]!, 25);
    h.answer(h.calls[1]!, 25);
    await flush();
    expect(h.cache.total).toBe(25);
    expect(h.cache.row(13)).toBe(13);
    expect(h.cache.row(21)).toBeUndefined();
    expect(h.changes()).toBe(2);
    expect(h.cache.ensure([5])).toBe(0); // beyond the total
  });

  it('drops answers that arrive after a reset (new sort or filter)', async () => {
    const h = harness();
    h.cache.ensure([0]);
    h.cache.reset();
    h.answer(h.calls[0]!, 25);
    await flush();
    expect(h.cache.row(0)).toBeUndefined();
    expect(h.cache.total).toBeUndefined();
    expect(h.changes()).toBe(0);
  });

  it('keeps the error message and can retry', async () => {
    const h = harness();
    h.cache.ensure([0]);
    h.calls[0]!.reject(new Error('host is busy'));
    await flush();
    expect(h.cache.error).toBe('host is busy');
    expect(h.cache.ensure([0])).toBe(1);
  });

  it('evicts the least recently used page beyond its capacity', async () => {
    const h = harness(10, 2);
    h.cache.ensure([0, 1]);
    h.answer(h.calls[0]!, 100);
    h.answer(h.calls[1]!, 100);
    await flush();
    h.cache.ensure([0]); // touch page 0, so page 1 is the oldest
    h.cache.ensure([2]);
    h.answer(h.calls[2]!, 100);
    await flush();
    expect(h.cache.row(5)).toBe(5);
    expect(h.cache.row(15)).toBeUndefined();
    expect(h.cache.loadedRows()).toEqual([...Array.from({ length: 10 }, (_, i) => i), ...Array.from({ length: 10 }, (_, i) => 20 + i)]);
  });
});
