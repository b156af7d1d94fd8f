import { describe, expect, it } from 'vitest';
import { benjaminiHochberg, effectSizeDz } from '../../webview/src/model/compareStats';
import { pythonJson } from '../reference/python.mjs';
import { seededRandom } from '../reference/random';

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
    const ref = pythonJson<{ t: number; dz: number }>(
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
