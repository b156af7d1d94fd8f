/**
 * The real worker thread, bundled from source into a temp folder (the same esbuild settings as
 * build.mjs), driven through the host's EngineWorker handle: load → page → detail → segments, errors,
 * cancellation, and compare mode.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EngineWorker } from '../../extension/host/workerHost';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { RemoteError, RequestAbortedError } from '../../extension/channel/request';
import type { EvaluationSettings } from '../../extension/protocol/worker';
import { bundleEngineWorker } from './support/workers';

const dir = mkdtempSync(join(tmpdir(), 'gainline-worker-'));
/** The engine worker bundled from source (beforeAll). */
let script = '';
let worker: EngineWorker;

// Three queries of an invented hardware store. Hand-derived NDCG@10, exponential gain 2^g − 1,
// discount 1/log2(position + 1) (Järvelin & Kekäläinen 2002; exponential gain: Burges et al. 2005):
//  "cordless drill 18v": order by score = grades 2, 0, 1 → DCG = 3/1 + 0 + 1/2 = 3.5;
//     ideal 2, 1, 0 → 3 + 1/log2(3) = 3.630930; NDCG = 0.963946.
//  "wood screws 4x40": grades 0, 1 → DCG = 1/log2(3) = 0.630930; ideal = 1; NDCG = 0.630930.
//  "hammer": nothing relevant → skipped from the mean (default no-relevant policy).
const RUN_A = [
  'query_id,item_id,label,score,aisle',
  'cordless drill 18v,drill-a,2,0.9,tools',
  'cordless drill 18v,drill-b,0,0.8,tools',
  'cordless drill 18v,drill-c,1,0.1,tools',
  'wood screws 4x40,screw-a,0,0.7,fixings',
  'wood screws 4x40,screw-b,1,0.2,fixings',
  'hammer,hammer-a,0,0.5,tools',
  'hammer,hammer-b,0,0.4,tools',
].join('\n');
// Run B fixes the screws query (NDCG 1) and leaves the drill query as it was.
const RUN_B = RUN_A.replace('wood screws 4x40,screw-a,0,0.7', 'wood screws 4x40,screw-a,0,0.1');
const DRILL = 3.5 / (3 + 1 / Math.log2(3));
const SCREWS = 1 / Math.log2(3);

const settings: EvaluationSettings = { metrics: 'ndcg@10,ap', conventions: DEFAULT_CONVENTIONS };
const fileA = join(dir, 'run-a.csv');
const fileB = join(dir, 'run-b.csv');

beforeAll(async () => {
  script = await bundleEngineWorker(dir);
  writeFileSync(fileA, RUN_A + '\n');
  writeFileSync(fileB, RUN_B + '\n');
  worker = new EngineWorker(script);
});

afterAll(() => worker?.dispose());

describe('engine worker', () => {
  it('loads a CSV and returns the overview with hand-derived values', async () => {
    const overview = await worker.call('load', { session: 's1', source: { path: fileA }, settings });
    expect(overview.queryCount).toBe(3);
    expect(overview.file).toMatchObject({ name: 'run-a.csv', format: 'csv', rowCount: 7, textual: true });
    expect(overview.metrics[0]!.label).toBe('NDCG@10');
    expect(overview.metrics[0]!.mean).toBeCloseTo((DRILL + SCREWS) / 2, 10);
    expect(overview.metrics[0]!.counted).toBe(2);
    expect(overview.degenerate.noRelevantQueries).toBe(1);
    expect(overview.segmentColumns).toEqual(['aisle']);
    expect(overview.histogram.counts.reduce((a, b) => a + b, 0)).toBe(2);
    // JSON-safe: no NaN anywhere (NaN would become null silently in a webview, or break equality).
    expect(JSON.stringify(overview)).not.toContain('NaN');
  });

  it('answers the overview’s score diagnostics on their own request, after the load, with hand-derived values', async () => {
    const overview = await worker.call('load', { session: 's1', source: { path: fileA }, settings });
    // The load carries only the first screen; its timeline is in step order.
    expect(overview).not.toHaveProperty('diagnostics');
    const t = overview.timeline;
    expect(t.threadReady <= t.received && t.received <= t.read && t.read <= t.scored).toBe(true);
    const d = await worker.call('overviewDiagnostics', { session: 's1' });
    // Scores per grade: grade 0 = 0.8, 0.7, 0.5, 0.4; grade 1 = 0.2, 0.1; grade 2 = 0.9.
    expect(d.scoresByGrade.grades.map((g) => [g.grade, g.count])).toEqual([[0, 4], [1, 2], [2, 1]]);
    expect(d.scoresByGrade.grades[0]!.mean).toBeCloseTo(0.6, 12);
    expect(d.scoresByGrade.grades[1]!.mean).toBeCloseTo(0.15, 12);
    // Each position's share of its query's ideal DCG@10, over the two queries with something relevant:
    // drill 3/IDCG, 0, (1/2)/IDCG against ideal 3/IDCG, (1/log2 3)/IDCG, 0; screws 0, 1/log2 3 against 1, 0.
    const idcg = 3 + 1 / Math.log2(3);
    expect(d.dcgByPosition.queries).toBe(2);
    expect(d.dcgByPosition.predicted[0]).toBeCloseTo((3 / idcg) / 2, 12);
    expect(d.dcgByPosition.predicted[1]).toBeCloseTo((1 / Math.log2(3)) / 2, 12);
    expect(d.dcgByPosition.predicted[2]).toBeCloseTo((0.5 / idcg) / 2, 12);
    expect(d.dcgByPosition.ideal[0]).toBeCloseTo((3 / idcg + 1) / 2, 12);
    expect(d.dcgByPosition.ideal[1]).toBeCloseTo((1 / Math.log2(3) / idcg) / 2, 12);
    // Asked again, the same answer (kept with the session); the times say when it was asked.
    const { times, ...first } = d;
    const { times: againTimes, ...again } = await worker.call('overviewDiagnostics', { session: 's1' });
    expect(again).toEqual(first);
    expect(times!.started <= times!.done && times!.done <= againTimes!.started).toBe(true);
    await expect(worker.call('overviewDiagnostics', { session: 'never-loaded' })).rejects.toThrow(/nothing is loaded/);
  });

  it('sends the headline without the sensitivity rows, and gives them on their own request, hand-derived', async () => {
    const overview = await worker.call('load', { session: 's1', source: { path: fileA }, settings });
    expect(overview.sensitivity).toEqual([]);
    expect(overview.sensitivityLater).toBe(true);
    const { rows, times } = await worker.call('overviewSensitivity', { session: 's1' });
    expect(times.started).toBeGreaterThanOrEqual(overview.timeline.scored);
    const row = (label: RegExp) => rows.find((r) => label.test(r.label))!;
    // The current conventions: the headline itself, Δ 0.
    const current = rows.filter((r) => r.current);
    expect(current.length).toBeGreaterThan(0);
    for (const r of current) expect([r.mean, r.delta, r.counted]).toEqual([overview.metrics[0]!.mean, 0, 2]);
    // "hammer" has nothing relevant: zero enters it as 0 over 3 queries, one as 1 (hand-derived from the values above).
    expect(row(/zero/).mean).toBeCloseTo((DRILL + SCREWS) / 3, 12);
    expect(row(/zero/).counted).toBe(3);
    expect(row(/\bone\b/).mean).toBeCloseTo((DRILL + SCREWS + 1) / 3, 12);
    // Linear gain: drill DCG = 2 + 1/2 against ideal 2 + 1/log2 3; screws unchanged (grade 1 has gain 1 both ways).
    expect(row(/linear/).mean).toBeCloseTo((2.5 / (2 + 1 / Math.log2(3)) + SCREWS) / 2, 12);
    expect(row(/linear/).delta).toBeCloseTo(row(/linear/).mean! - overview.metrics[0]!.mean!, 15);
  });

  it('pages queries worst first with loss shares', async () => {
    const page = await worker.call('queryPage', { session: 's1', offset: 0, limit: 10 });
    expect(page.total).toBe(3);
    expect(page.rows.map((r) => r.query)).toEqual(['wood screws 4x40', 'cordless drill 18v', 'hammer']);
    expect(page.rows[0]!.values[0]).toBeCloseTo(SCREWS, 10);
    const lossScrews = 1 - SCREWS;
    const lossDrill = 1 - DRILL;
    expect(page.rows[0]!.lossShare).toBeCloseTo(lossScrews / (lossScrews + lossDrill), 10);
    expect(page.rows[2]).toMatchObject({ skipped: true, lossShare: null });
    const filtered = await worker.call('queryPage', { session: 's1', offset: 0, limit: 10, segment: { column: 'aisle', value: 'tools' } });
    expect(filtered.rows.map((r) => r.query)).toEqual(['cordless drill 18v', 'hammer']);
  });

  it('answers a query detail: predicted order, ideal order, inverted pairs, lines', async () => {
    const detail = await worker.call('queryDetail', { session: 's1', query: 'cordless drill 18v' });
    expect(detail.positions.map((p) => p.item)).toEqual(['drill-a', 'drill-b', 'drill-c']);
    expect(detail.ideal.map((p) => p.item)).toEqual(['drill-a', 'drill-c', 'drill-b']);
    expect(detail.positions.map((p) => p.line)).toEqual([2, 3, 4]);
    expect(detail.dcg).toBeCloseTo(3.5, 12);
    expect(detail.ndcg).toBeCloseTo(DRILL, 10);
    expect(detail.invertedPairsTotal).toBe(1);
    expect(detail.invertedPairs[0]).toMatchObject({ aboveItem: 'drill-b', belowItem: 'drill-c', abovePosition: 2, belowPosition: 3 });
    expect(detail.segments).toEqual({ aisle: 'tools' });
    const where = await worker.call('rowLocation', { session: 's1', row: detail.positions[2]!.row });
    expect(where).toMatchObject({ line: 4, path: fileA });
  });

  it('gives segment rows and the query as JSON', async () => {
    const table = await worker.call('segments', { session: 's1', column: 'aisle' });
    const tools = table.rows.find((r) => r.value === 'tools')!;
    expect(tools.queries).toBe(2);
    expect(tools.means[0]).toBeCloseTo(DRILL, 10);
    const { json } = await worker.call('queryJson', { session: 's1', query: 'wood screws 4x40' });
    expect(JSON.parse(json)).toMatchObject({ query: 'wood screws 4x40', items: [{ item: 'screw-a', grade: 0 }, { item: 'screw-b', grade: 1 }] });
  });

  it('reports input errors as one line and unknown sessions clearly', async () => {
    const bad = join(dir, 'bad.csv');
    writeFileSync(bad, 'query_id,item_id,label,score\nhammer,h1,1,abc\n');
    const error = await worker.call('load', { session: 's2', source: { path: bad }, settings }).catch((e: RemoteError) => e);
    expect(error).toBeInstanceOf(RemoteError);
    expect((error as RemoteError).remoteName).toBe('InputError');
    expect((error as RemoteError).message).toContain('bad.csv');
    expect((error as RemoteError).message).not.toContain('\n');
    await expect(worker.call('queryPage', { session: 'nope', offset: 0, limit: 1 })).rejects.toThrow('nothing is loaded');
  });

  it('a cancelled load rejects at once and the worker keeps answering', async () => {
    const controller = new AbortController();
    const pending = worker.call('load', { session: 's3', source: { path: fileA }, settings }, { signal: controller.signal });
    controller.abort();
    await expect(pending).rejects.toBeInstanceOf(RequestAbortedError);
    const page = await worker.call('queryPage', { session: 's1', offset: 0, limit: 1 });
    expect(page.rows[0]!.query).toBe('wood screws 4x40');
  });

  it('compares two runs: wins, deltas page, movement', async () => {
    const model = await worker.call('loadCompare', {
      session: 'c1', a: { path: fileA }, b: { path: fileB },
      settings: { ...settings, permutations: 1000, bootstrapResamples: 300, seed: 3, tieTolerance: 1e-9 },
    });
    expect(model.pairedQueries).toBe(3);
    // The resample count set in the settings reaches the engine (it is named in the method note).
    expect(model.warnings.some((w) => w.includes('300 resamples'))).toBe(true);
    const headline = model.metrics[model.headline]!;
    expect(headline).toMatchObject({ wins: 1, losses: 0 });
    expect(headline.delta).toBeCloseTo((1 - SCREWS) / 2, 10);
    const page = await worker.call('comparePage', { session: 'c1', offset: 0, limit: 10, sort: { key: 'delta', descending: true } });
    expect(page.rows[0]).toMatchObject({ query: 'wood screws 4x40', outcome: 'win' });
    expect(page.rows[0]!.delta).toBeCloseTo(1 - SCREWS, 10);
    const movement = await worker.call('queryMovement', { session: 'c1', query: 'wood screws 4x40' });
    expect(movement.rows.map((r) => [r.item, r.positionA, r.positionB])).toEqual([['screw-b', 2, 1], ['screw-a', 1, 2]]);
    expect(movement.fixedTotal).toBe(1);
    const detailB = await worker.call('queryDetail', { session: 'c1', query: 'wood screws 4x40', run: 'b' });
    expect(detailB.ndcg).toBeCloseTo(1, 12);
  });

  it('reports progress for the load request', async () => {
    const seen: (number | null)[] = [];
    await worker.call('load', { session: 's4', source: { path: fileA }, settings }, { onProgress: (f) => seen.push(f) });
    expect(seen.length).toBeGreaterThan(0);
    expect(seen.every((f) => f === null || (f >= 0 && f <= 1))).toBe(true);
  });
});
