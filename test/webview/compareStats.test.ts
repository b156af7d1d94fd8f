import { describe, expect, it } from 'vitest';
import { benjaminiHochberg, effectSizeDz, pairChanges, type MovementItem } from '../../webview/src/model/compareStats';
import { runPython, seededRandom } from './pythonReference';

describe('benjaminiHochberg', () => {
  it('matches a hand-worked example of the step-up rule (Benjamini & Hochberg 1995)', () => {
    // m = 4, sorted p = 0.01, 0.02, 0.03, 0.5 → m·p/rank = 0.04, 0.04, 0.04, 0.5; already monotone.
    expect(benjaminiHochberg([0.5, 0.01, 0.03, 0.02])).toEqual([0.5, 0.04, 0.04, 0.04]);
    // Monotonicity step: p = 0.03, 0.031 → raw 0.06 and 0.031; the smaller p takes min(0.06, 0.031) = 0.031.
    const adj = benjaminiHochberg([0.03, 0.031]);
    expect(adj[0]).toBeCloseTo(0.031, 12);
    expect(adj[1]).toBeCloseTo(0.031, 12);
    expect(benjaminiHochberg([null, 0.2])).toEqual([null, 0.2]);
    expect(benjaminiHochberg([0.9, 0.95])).toEqual([0.95, 0.95]);
  });

  it('equals the definition min_{j ≥ i} m·p_(j)/j on seeded random p-values', () => {
    const rand = seededRandom(8);
    for (let t = 0; t < 100; t++) {
      const m = 1 + Math.floor(rand() * 12);
      const p = Array.from({ length: m }, () => rand() ** 3);
      const order = p.map((v, i) => ({ v, i })).sort((a, b) => a.v - b.v);
      const slow = new Array<number>(m);
      order.forEach((o, r) => {
        let best = Infinity;
        for (let j = r; j < m; j++) best = Math.min(best, (m * order[j]!.v) / (j + 1));
        slow[o.i] = Math.min(1, best);
      });
      const ours = benjaminiHochberg(p);
      ours.forEach((v, i) => expect(v).toBeCloseTo(slow[i]!, 12));
    }
  });
});

describe('effectSizeDz', () => {
  it('equals mean/sd of the differences, checked against scipy.stats.ttest_rel on seeded data', () => {
    const rand = seededRandom(12);
    const a = Array.from({ length: 40 }, () => rand());
    const b = a.map((x) => Math.min(1, x + (rand() - 0.4) * 0.2));
    const ref = runPython<{ t: number; dz: number }>(
      [
        'import json,sys',
        'import numpy as np',
        'from scipy import stats',
        'd=json.load(sys.stdin); a=np.array(d["a"]); b=np.array(d["b"])',
        'diff=b-a',
        'print(json.dumps({"t": float(stats.ttest_rel(b,a).statistic), "dz": float(diff.mean()/diff.std(ddof=1))}))',
      ].join('\n'),
      { a, b },
    );
    expect(effectSizeDz(ref.t, a.length)).toBeCloseTo(ref.dz, 10);
    expect(effectSizeDz(null, 10)).toBeNull();
    expect(effectSizeDz(2, 1)).toBeNull();
  });
});

describe('pairChanges', () => {
  const item = (id: string, label: number | null, a: number | null, b: number | null): MovementItem => ({ item: id, label, positionA: a, positionB: b });

  it('finds fixed and introduced pairs (hand cases)', () => {
    // A ranks x (grade 0) above y (2) and z (1): pairs (y,x) and (z,x) are inverted, (y,z) is in order.
    // B ranks y, z, x: nothing inverted, so both of A's inversions are fixed.
    const c = pairChanges([item('x', 0, 1, 3), item('y', 2, 2, 1), item('z', 1, 3, 2)]);
    expect(c).toMatchObject({ invertedA: 2, invertedB: 0, introduced: [], notComparable: 0 });
    expect(c.fixed).toEqual([
      { better: 'y', worse: 'x' },
      { better: 'z', worse: 'x' },
    ]);
    // A: y, z, x (in order); B: z, y, x → the (y, z) pair is introduced.
    const d = pairChanges([item('y', 2, 1, 2), item('z', 1, 2, 1), item('x', 0, 3, 3)]);
    expect(d.introduced).toEqual([{ better: 'y', worse: 'z' }]);
    expect(d.fixed).toEqual([]);
  });

  it('skips items missing from a run and counts unjudged as grade 0', () => {
    const c = pairChanges([item('a', 1, 1, null), item('b', null, 2, 1), item('c', 3, 3, 2)]);
    expect(c.notComparable).toBe(2); // a with b, a with c
    expect(c.invertedA).toBe(1); // c (3) below b (unjudged = 0)
    expect(c.fixed).toEqual([]);
    expect(c.invertedB).toBe(1);
  });

  it('keeps invertedB − invertedA = introduced − fixed, and counts inversions like a brute-force discordance count (seeded)', () => {
    const rand = seededRandom(21);
    for (let t = 0; t < 60; t++) {
      const n = 2 + Math.floor(rand() * 30);
      const permA = Array.from({ length: n }, (_, i) => i + 1).sort(() => rand() - 0.5);
      const permB = Array.from({ length: n }, (_, i) => i + 1).sort(() => rand() - 0.5);
      const items = permA.map((pa, i) => item(`i${i}`, Math.floor(rand() * 4), pa, permB[i]!));
      const c = pairChanges(items);
      expect(c.invertedB - c.invertedA).toBe(c.introduced.length - c.fixed.length);
      // Independent count: walk A's order top-down and count, for each item, better-graded items already passed below it.
      const byA = [...items].sort((x, y) => x.positionA! - y.positionA!);
      let slow = 0;
      for (let i = 0; i < byA.length; i++) for (let j = i + 1; j < byA.length; j++) if ((byA[j]!.label ?? 0) > (byA[i]!.label ?? 0)) slow++;
      expect(c.invertedA).toBe(slow);
    }
  });
});
