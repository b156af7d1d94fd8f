/**
 * The fake host's training series: a few checkpoints of an invented hardware-store search model whose
 * NDCG@10 rises, peaks and falls back a little, with hand-set intervals and falls, so the trend screen's
 * rendering can be checked value by value. `grow` adds the next checkpoint, as a training job would.
 */
import type { SeriesOverviewModel, ViewRequests } from '../../../extension/protocol/messages';
import type { RequestHandlers } from '../../../extension/channel/request';

type SeriesHandlers = Pick<RequestHandlers<ViewRequests>, 'seriesTrajectory' | 'seriesQueries' | 'openCheckpoint' | 'compareCheckpoints'>;

/** NDCG@10 and ERR@10 per epoch (epochs 1, 2, 5, 10, then 20 when grown). */
export const SERIES_EPOCHS = [1, 2, 5, 10, 20];
export const SERIES_NDCG = [0.61, 0.66, 0.7125, 0.69, 0.7];
const ERR = [0.41, 0.44, 0.47, 0.5, 0.49];
export const SERIES_QUERIES = ['cordless drill 18v', 'wood screws 4x40', 'hex key set', 'masking tape 50mm'];

export function fakeSeries(checkpoints: number): SeriesOverviewModel {
  const k = Math.min(checkpoints, SERIES_EPOCHS.length);
  const runs = SERIES_EPOCHS.slice(0, k).map((e) => `epoch-${e}.csv`);
  const peakOf = (values: number[]) => values.slice(0, k).reduce((best, v, i) => (v > values[best]! ? i : best), 0);
  return {
    name: 'training/run-7/',
    orderRule: 'ordered by the checkpoint number in each file name',
    metrics: [{ key: 'ndcg@10', label: 'NDCG@10' }, { key: 'err@10', label: 'ERR@10' }],
    headline: 0,
    conventions: { gain: 'exponential (2^g − 1)', ties: 'average', noRelevant: 'skip', relevantFrom: 1, maxGrade: 3, rbpPersistence: 0.8, summary: 'gain exponential · ties average' },
    checkpoints: runs.map((run, i) => ({
      run, path: `/demo/training/run-7/${run}`, position: SERIES_EPOCHS[i]!, queries: 4,
      means: [SERIES_NDCG[i]!, ERR[i]!], lower: [SERIES_NDCG[i]! - 0.02, ERR[i]! - 0.03], upper: [SERIES_NDCG[i]! + 0.02, ERR[i]! + 0.03], counted: [4, 4], missing: 0,
    })),
    peaks: [peakOf(SERIES_NDCG), peakOf(ERR)],
    worstFirstToLast: [{ query: 'hex key set', from: 0.9, fromCheckpoint: 0, last: 0.5, delta: -0.4 }],
    worstPeakToLast: [{ query: 'wood screws 4x40', from: 1, fromCheckpoint: 2, last: 0.75, delta: -0.25 }],
    comparableFirstToLast: 4,
    queryCount: 4,
    inEveryCheckpoint: 4,
    unread: [],
    warnings: [],
    bootstrap: { resamples: 1000, seed: 1 },
    scoredNow: k,
    loadMs: 40,
  };
}

/** Answers of the series requests; a query's value at checkpoint i is (query index + 1) / 10 + i / 100. */
export function seriesHandlers(current: () => SeriesOverviewModel): SeriesHandlers {
  return {
    seriesTrajectory: (p) => {
      const q = SERIES_QUERIES.indexOf(p.query);
      if (q < 0) throw new Error(`no query '${p.query}'`);
      const values = current().checkpoints.map((_, i) => (q + 1) / 10 + i / 100);
      return { query: p.query, values: [values, values.map((v) => v / 2)] };
    },
    seriesQueries: (p) => {
      const found = SERIES_QUERIES.filter((q) => q.includes(p.filter.toLowerCase()));
      return { total: found.length, queries: found.slice(0, p.limit) };
    },
    openCheckpoint: () => ({ opened: true }),
    compareCheckpoints: () => ({ opened: true }),
  };
}
