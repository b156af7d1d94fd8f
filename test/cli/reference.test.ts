// End-to-end: `gainline eval --format json` on seeded random dumps against scikit-learn and scipy.
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { requirePython, runPython } from '../reference/python.mjs';
import { fixtureDir, REPO, runCli } from './support/runCli';

type Reference = Record<string, { ndcg10: number | null; dcg5: number | null; ap: number | null; tau: number | null }>;
type Ours = { query: string; skipped: boolean; 'ndcg@10': number | null; 'dcg@5': number | null; ap: number | null; tau: number | null };

/** A seeded linear congruential generator; any fixed sequence will do. */
function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => (s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32;
}

/** Random product-search queries with 1–25 items, grades 0–4 leaning low, scores tied or not. */
function randomDump(seed: number, tiedScores: boolean): string {
  const rand = lcg(seed);
  const lines = ['query,product_id,grade,score'];
  for (let q = 0; q < 60; q++) {
    const size = 1 + Math.floor(rand() * 25);
    const noneRelevant = rand() < 0.1;
    for (let i = 0; i < size; i++) {
      const grade = noneRelevant ? 0 : Math.min(4, Math.floor(-Math.log(1 - rand()) * 1.2));
      const raw = 0.5 * grade + rand() * 2;
      const score = tiedScores ? Math.round(raw * 2) / 2 : raw + i * 1e-9;
      lines.push(`search ${q} wall plugs,SKU-${100000 + q * 100 + i},${grade},${score}`);
    }
  }
  return lines.join('\n') + '\n';
}

function compare(seed: number, tiedScores: boolean) {
  const dir = fixtureDir({ 'dump.csv': randomDump(seed, tiedScores) });
  const r = runCli(['eval', 'dump.csv', '--format', 'json', '--metrics', 'ndcg@10,dcg@5,ap,tau'], dir);
  expect(r.stderr).toBe('');
  expect(r.code).toBe(0);
  const ours: Ours[] = JSON.parse(r.stdout).queries;
  const script = join(REPO, 'test/cli/support/reference_metrics.py');
  const reference: Reference = JSON.parse(runPython([script, join(dir, 'dump.csv')], { what: 'the scikit-learn/scipy reference' }));
  return { ours, reference };
}

describe('eval output against scikit-learn and scipy', () => {
  beforeAll(() => requirePython('sklearn, scipy, numpy'));

  for (const seed of [11, 22, 33]) {
    it(`NDCG@10, DCG@5 and tau-b with tied scores agree (seed ${seed})`, () => {
      const { ours, reference } = compare(seed, true);
      expect(ours.map((q) => q.query)).toEqual(Object.keys(reference));
      let checked = 0;
      let tauChecked = 0;
      for (const q of ours) {
        const ref = reference[q.query]!;
        // sklearn.metrics.ndcg_score, ignore_ties=False (tie averaging, McSherry & Najork 2008).
        if (ref.ndcg10 !== null) {
          expect(q['ndcg@10'], q.query).toBeCloseTo(ref.ndcg10, 10);
          checked++;
        } else if (!q.skipped) {
          // Single-item query (sklearn refuses it): relevant → 1 by definition of NDCG.
          expect(q['ndcg@10'], q.query).toBe(1);
        }
        // sklearn.metrics.dcg_score(k=5).
        if (ref.dcg5 !== null && !q.skipped) expect(q['dcg@5'], q.query).toBeCloseTo(ref.dcg5, 10);
        // scipy.stats.kendalltau, tau-b (Kendall 1945).
        if (ref.tau !== null) {
          expect(q.tau, q.query).toBeCloseTo(ref.tau, 10);
          tauChecked++;
        }
      }
      expect(checked).toBeGreaterThan(40);
      expect(tauChecked).toBeGreaterThan(40);
      // Skipped exactly where nothing is relevant (default no-relevant policy: skip).
      const skipped = ours.filter((q) => q.skipped).map((q) => q.query);
      expect(skipped.length).toBeGreaterThan(0);
      for (const name of skipped) expect(reference[name]!.ndcg10).toBeNull();
    });
  }

  it('average precision without ties agrees with sklearn.metrics.average_precision_score', () => {
    const { ours, reference } = compare(44, false);
    let checked = 0;
    for (const q of ours) {
      const ref = reference[q.query]!;
      if (ref.ap === null || q.skipped) continue;
      expect(q.ap, q.query).toBeCloseTo(ref.ap, 10);
      checked++;
    }
    expect(checked).toBeGreaterThan(40);
  });
});
