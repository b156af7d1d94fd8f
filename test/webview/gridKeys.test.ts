import { describe, expect, it } from 'vitest';
import { navigate } from '../../webview/src/model/gridKeys';
import { seededRandom } from '../reference/random';

describe('navigate (WAI-ARIA grid row keys)', () => {
  const s = { active: 5, total: 100, pageRows: 10 };
  it('moves by one, by a page, and to the ends', () => {
    expect(navigate(s, { key: 'ArrowDown' }).active).toBe(6);
    expect(navigate(s, { key: 'ArrowUp' }).active).toBe(4);
    expect(navigate(s, { key: 'PageDown' }).active).toBe(14); // a viewport minus one row of context
    expect(navigate(s, { key: 'PageUp' }).active).toBe(0);
    expect(navigate(s, { key: 'Home' }).active).toBe(0);
    expect(navigate(s, { key: 'End' }).active).toBe(99);
  });
  it('opens on Enter and ignores keys that are not its own', () => {
    expect(navigate(s, { key: 'Enter' })).toEqual({ active: 5, open: true, handled: true });
    expect(navigate({ ...s, active: -1 }, { key: 'Enter' }).open).toBe(false);
    expect(navigate(s, { key: 'a' }).handled).toBe(false);
  });
  it('starts at the first row and copes with an empty table', () => {
    expect(navigate({ active: -1, total: 10, pageRows: 5 }, { key: 'ArrowUp' }).active).toBe(0);
    expect(navigate({ active: -1, total: 0, pageRows: 5 }, { key: 'End' }).active).toBe(-1);
  });
  it('always stays inside the table (seeded random key sequences)', () => {
    const rand = seededRandom(5);
    const keys = ['ArrowDown', 'ArrowUp', 'PageDown', 'PageUp', 'Home', 'End', 'Enter', 'x'];
    for (let t = 0; t < 200; t++) {
      const total = 1 + Math.floor(rand() * 50);
      let state = { active: -1, total, pageRows: 1 + Math.floor(rand() * 20) };
      for (let i = 0; i < 50; i++) {
        const r = navigate(state, { key: keys[Math.floor(rand() * keys.length)]! });
        if (r.active !== -1) {
          expect(r.active).toBeGreaterThanOrEqual(0);
          expect(r.active).toBeLessThan(total);
        }
        state = { ...state, active: r.active };
      }
    }
  });
});
