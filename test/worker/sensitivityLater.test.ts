/**
 * The overview's sensitivity rows computed after the headline (worker/sensitivityLater.ts) against the
 * plain one-pass way (evaluateDump with its sensitivity pass, then overviewModel), bit for bit, on
 * seeded random dumps: several metric lists (headline NDCG, headline ERR, no NDCG at all, NDCG without a
 * cut-off), other conventions, ties in the scores, queries with nothing relevant, and query weights.
 * The headline's own scoring without the rows must give the very means of the one-pass scoring.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { evaluateDump, readDump } from '../../extension/engine/index';
import { DEFAULT_CONVENTIONS, type Conventions } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { groupByQuery } from '../../extension/engine/model/groups';
import { withSideTables } from '../../extension/engine/tables/join';
import { sensitivityLater, sensitivityMetrics } from '../../extension/worker/sensitivityLater';
import { overviewModel } from '../../extension/worker/viewModels';
import { QUERY_NAMES, seededRandom } from '../reference/random';

const dir = mkdtempSync(join(tmpdir(), 'gainline-sensitivity-later-'));

/** A dump of `queries` queries, 1–30 items each, grades 0–4 (some queries all 0), scores rounded so ties occur. */
function writeDump(seed: number, queries: number): { dump: string; weights: string } {
  const r = seededRandom(seed);
  const lines = ['query_id,product_id,grade,score'];
  const weights = ['query_id\tweight'];
  for (let q = 0; q < queries; q++) {
    const id = `${QUERY_NAMES[q % QUERY_NAMES.length]} ${q}`;
    const nothingRelevant = r() < 0.1;
    const n = 1 + Math.floor(r() * 30);
    for (let i = 0; i < n; i++) {
      const grade = nothingRelevant ? 0 : Math.floor(r() * r() * 5);
      lines.push(`${id},SKU-${seed}-${q}-${i},${grade},${(Math.round((grade * 0.4 + r()) * 8) / 8).toFixed(3)}`);
    }
    if (r() < 0.9) weights.push(`${id}\t${(0.5 + r() * 3).toFixed(2)}`);
  }
  const dump = join(dir, `dump-${seed}.csv`);
  const weightFile = join(dir, `queries-${seed}.tsv`);
  writeFileSync(dump, lines.join('\n') + '\n');
  writeFileSync(weightFile, weights.join('\n') + '\n');
  return { dump, weights: weightFile };
}

const METRIC_LISTS = ['ndcg@10,ap,rr,err@10,rbp,tau', 'err@10,ndcg@5,ndcg@20,ap', 'ap,rr,p@5', 'ndcg,err', 'ndcg@3'];
const CONVENTIONS: Conventions[] = [
  DEFAULT_CONVENTIONS,
  { ...DEFAULT_CONVENTIONS, gain: { kind: 'linear' }, ties: 'pessimistic', noRelevant: 'zero' },
  { ...DEFAULT_CONVENTIONS, ties: 'file-order', noRelevant: 'one', relevantFrom: 2 },
];

describe('sensitivity rows after the headline', () => {
  it('scores the one metric that fixes the headline cut-off (scorer.ts headlineCutoff)', () => {
    expect(sensitivityMetrics(parseMetricList('err@10,ndcg@5,ndcg@20')).map((m) => m.key)).toEqual(['ndcg@5']);
    expect(sensitivityMetrics(parseMetricList('ap,rr')).map((m) => m.key)).toEqual(['ndcg@10']);
    expect(sensitivityMetrics(parseMetricList('ndcg,ap')).map((m) => m.key)).toEqual(['ndcg']);
  });

  for (const weighted of [false, true]) {
    it(`gives the one-pass rows and means bit for bit${weighted ? ', with query weights' : ''}`, async () => {
      let compared = 0;
      for (let seed = 1; seed <= 4; seed++) {
        const files = writeDump(seed + (weighted ? 100 : 0), 40 + seed * 15);
        const plain = await readDump(files.dump);
        const dump = weighted ? await withSideTables(plain, { queries: files.weights }) : plain;
        const groups = groupByQuery(dump);
        for (const list of METRIC_LISTS) {
          for (const conventions of CONVENTIONS) {
            const metrics = parseMetricList(list);
            const onePass = await evaluateDump(dump, metrics, conventions, { groups });
            const headlineFirst = await evaluateDump(dump, metrics, conventions, { groups, sensitivity: false });
            const expected = overviewModel(dump, onePass, 0);
            const first = overviewModel(dump, headlineFirst, 0);
            expect(first.sensitivity).toEqual([]);
            // Everything but the rows is the one-pass overview's.
            expect({ ...first, sensitivity: expected.sensitivity }).toEqual(expected);
            const later = await sensitivityLater(dump, groups, headlineFirst, conventions);
            expect(later, `${list} seed ${seed}`).toEqual(expected.sensitivity);
            expect(later.length).toBeGreaterThan(3);
            compared++;
          }
        }
      }
      expect(compared).toBe(4 * METRIC_LISTS.length * CONVENTIONS.length);
    });
  }
});
