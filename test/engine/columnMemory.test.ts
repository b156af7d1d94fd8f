/**
 * The per-query columns' memory (evaluate/columnMemory.ts): plain arrays, or views carved from one shared
 * buffer laid out by a first pass that only measures.
 */
import { describe, expect, it } from 'vitest';
import { PLAIN_COLUMNS, sharedColumnMemory, type ColumnMemory } from '../../extension/engine/evaluate/columnMemory';
import { allocatePerQuery, sensitivityColumns } from '../../extension/engine/evaluate/evaluate';
import { SensitivityPass } from '../../extension/engine/evaluate/sensitivity';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';

describe('per-query column memory', () => {
  it('plain memory gives zeroed arrays of their own', () => {
    const a = PLAIN_COLUMNS.f64(3);
    const b = PLAIN_COLUMNS.u8(5);
    expect([a.length, b.length, a.buffer === b.buffer as unknown]).toEqual([3, 5, false]);
    expect([...a, ...b]).toEqual([0, 0, 0, 0, 0, 0, 0, 0]);
  });

  it('shared memory carves every column from one buffer, 8-byte aligned, without overlap, sized exactly', () => {
    // Odd lengths, so a column that ends off an 8-byte boundary is followed by one that must be realigned.
    const lay = (m: ColumnMemory) => [m.u8(3), m.f64(5), m.u32(7), m.u8(1), m.f64(2)];
    const columns = lay(sharedColumnMemory(lay));
    const buffer = columns[0]!.buffer;
    expect(buffer).toBeInstanceOf(SharedArrayBuffer);
    expect(columns.every((c) => c.buffer === buffer)).toBe(true);
    expect(columns.map((c) => c.length)).toEqual([3, 5, 7, 1, 2]);
    expect(columns.map((c) => c.byteOffset)).toEqual([0, 8, 48, 80, 88]);
    expect(buffer.byteLength).toBe(104);
    // Writing every column in full leaves the others as they were.
    columns.forEach((c, k) => c.fill(k + 1));
    columns.forEach((c, k) => expect([...c].every((v) => v === k + 1)).toBe(true));
  });

  it('asking for more than was laid out throws rather than handing out overlapping views', () => {
    const memory = sharedColumnMemory((m) => void m.f64(2));
    memory.f64(2);
    expect(() => memory.u8(1)).toThrow(/more than the 16 bytes laid out/);
  });

  it('an evaluation laid out in shared memory gets the same columns as in plain memory, all in one buffer', () => {
    const metrics = parseMetricList('ndcg@10,rbp,ap');
    const pass = new SensitivityPass(DEFAULT_CONVENTIONS, 10, () => undefined);
    const layout = (m: ColumnMemory) => ({ perQuery: allocatePerQuery(1001, metrics, true, m), recorded: sensitivityColumns(pass, 1001, m) });
    const shared = layout(sharedColumnMemory(layout));
    const plain = layout(PLAIN_COLUMNS);
    const shape = (l: typeof plain) => [l.perQuery.items.length, l.perQuery.values.map((v) => v.length), l.perQuery.rbpResidual?.length,
      l.recorded.value.map((v) => v.length)];
    expect(shape(shared)).toEqual(shape(plain));
    const views = [shared.perQuery.items, shared.perQuery.relevant, shared.perQuery.unretrieved!, ...shared.perQuery.values, shared.perQuery.inversions,
      shared.perQuery.inversionCost, shared.perQuery.skipped, shared.perQuery.rbpResidual!, ...shared.recorded.value];
    expect(new Set(views.map((v) => v.buffer)).size).toBe(1);
    // No two views share a byte.
    const spans = views.map((v) => [v.byteOffset, v.byteOffset + v.byteLength] as const).sort((a, b) => a[0] - b[0]);
    for (let i = 1; i < spans.length; i++) expect(spans[i]![0]).toBeGreaterThanOrEqual(spans[i - 1]![1]);
  });
});
