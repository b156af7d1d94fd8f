import { afterEach, describe, expect, it, vi } from 'vitest';
import { memoryIO } from '../../extension/cli/io';
import { progressLine } from '../../extension/cli/progress';

describe('progress line', () => {
  afterEach(() => vi.useRealTimers());

  it('redraws at most every 200 ms, on one line, and clears itself once', () => {
    vi.useFakeTimers();
    vi.setSystemTime(1_000_000);
    const io = memoryIO();
    const p = progressLine(io, 'big.csv');
    p.reading(0.1);
    p.reading(0.2); // same instant: not drawn
    vi.setSystemTime(1_000_250);
    p.scoring(0.555);
    p.done();
    p.done();
    p.reading(0.9); // after done: nothing
    expect(io.stderr()).toBe('\r\x1b[Kreading big.csv 10%\r\x1b[Kscoring big.csv 55%\r\x1b[K');
    expect(io.stdout()).toBe('');
  });

  it('writes nothing at all when nothing was drawn', () => {
    const io = memoryIO();
    progressLine(io, 'small.csv').done();
    expect(io.stderr()).toBe('');
  });
});
