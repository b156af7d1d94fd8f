/**
 * A stand-in for the extension host, for driving the webview bundle in a plain browser page: it
 * answers the protocol's requests from a generated hardware-store search data set. The numbers are
 * plausible, not evaluated with the engine (the engine has its own tests); this exists to test the
 * screens' behaviour: paging, sorting, ids, keyboard, text-only rendering, refresh and errors.
 */
import type {
  CompareOverviewModel,
  CompareRow,
  HostToView,
  OverviewModel,
  PositionView,
  QueryDetailView,
  QueryRow,
  ScoreDiagnosticsView,
  ViewRequests,
  ViewState,
} from '../../../extension/protocol/messages';
import { RequestServer, type RequestHandlers } from '../../../extension/channel/request';
import { seededRandom } from '../../reference/random';
import { fakeSeries, seriesHandlers } from './fakeSeries';

interface FakeQuery {
  id: string;
  locale: string;
  labels: number[];
  scoresA: number[];
  scoresB: number[];
  ndcgA: number;
  ndcgB: number;
  inversions: number;
}

const PRODUCTS = ['cordless drill 18v', 'wood screws 4x40', 'hex key set', 'masking tape 50mm', 'pipe wrench', 'led bulb e27', 'garden hose 25m', 'wall plugs 6mm', 'sanding discs 125mm', 'spirit level 60cm'];
const LOCALES = ['en-GB', 'de-DE', 'fr-FR', 'nl-NL'];

function order(scores: number[]): number[] {
  return scores.map((s, i) => ({ s, i })).sort((a, b) => b.s - a.s || a.i - b.i).map((x) => x.i);
}

function ndcgAt(labels: number[], ranking: number[], k: number): number {
  const gain = (g: number) => 2 ** g - 1;
  let dcg = 0;
  ranking.slice(0, k).forEach((i, p) => (dcg += gain(labels[i]!) / Math.log2(p + 2)));
  const ideal = [...labels].sort((a, b) => b - a);
  let idcg = 0;
  ideal.slice(0, k).forEach((g, p) => (idcg += gain(g) / Math.log2(p + 2)));
  return idcg === 0 ? NaN : dcg / idcg;
}

export function makeQueries(count: number, seed = 1, bigItems = 0): FakeQuery[] {
  const r = seededRandom(seed);
  const out: FakeQuery[] = [];
  for (let q = 0; q < count; q++) {
    // Query 0 can be made long (many items) to time the detail view on a heavy list.
    const n = q === 0 && bigItems > 0 ? bigItems : 3 + Math.floor(r() * 20);
    const labels = Array.from({ length: n }, () => Math.floor(r() * r() * 4));
    const scoresA = labels.map((g) => g * 0.3 + r());
    const scoresB = labels.map((g, i) => g * 0.35 + r() * 0.9 + (i === 0 ? 0.1 : 0));
    const base = PRODUCTS[q % PRODUCTS.length]!;
    const id = q === 7 ? '<img src=x onerror=alert(1)>' : `${base} #${q}`;
    const rankA = order(scoresA);
    let inversions = 0;
    for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) if (labels[rankA[j]!]! > labels[rankA[i]!]!) inversions++;
    out.push({ id, locale: LOCALES[q % LOCALES.length]!, labels, scoresA, scoresB, ndcgA: ndcgAt(labels, rankA, 10), ndcgB: ndcgAt(labels, order(scoresB), 10), inversions });
  }
  return out;
}

const METRICS = [
  { key: 'ndcg@10', label: 'NDCG@10' },
  { key: 'ap', label: 'AP' },
];

/** The extension's default metric set (two cut-offs), for layout checks: values derived from NDCG, Kendall's τ negative. */
const FULL_METRICS: readonly { key: string; label: string; of: (ndcg: number) => number }[] = [
  { key: 'ndcg@10', label: 'NDCG@10', of: (x) => x },
  { key: 'ndcg@5', label: 'NDCG@5', of: (x) => x * 0.97 },
  { key: 'err@10', label: 'ERR@10', of: (x) => x * 0.8 },
  { key: 'ap', label: 'AP', of: (x) => x * 0.9 },
  { key: 'rr', label: 'RR', of: (x) => Math.min(1, x * 1.1) },
  { key: 'p@10', label: 'P@10', of: (x) => x * 0.5 },
  { key: 'p@5', label: 'P@5', of: (x) => x * 0.6 },
  { key: 'r@10', label: 'R@10', of: (x) => x * 0.95 },
  { key: 'r@5', label: 'R@5', of: (x) => x * 0.7 },
  { key: 'rbp', label: 'RBP', of: (x) => x * 0.6 },
  { key: 'tau', label: "Kendall's τ", of: (x) => 2 * x - 1 },
];

export interface FakeHostOptions {
  readonly mode: 'single' | 'compare' | 'series';
  readonly queries: number;
  /** When set, the first state is an error with this message. */
  readonly error?: string;
  /** Delay for every answer, to exercise loading states. */
  readonly delayMs?: number;
  /** Items of query 0 (default: like the others). */
  readonly bigItems?: number;
  /** Show the extension's full default metric set instead of two metrics. */
  readonly allMetrics?: boolean;
  /** The overview's diagnostics are answered only when the page calls `releaseDiagnostics()` (or fail with its message). */
  readonly holdDiagnostics?: boolean;
  /** The overview comes without its sensitivity rows (`sensitivityLater`), as the extension sends it; they come on request. */
  readonly sensitivityLater?: boolean;
}

export interface FakeHost {
  send(message: HostToView): void;
  calls: { method: string; params: unknown }[];
  queries: FakeQuery[];
  overview: OverviewModel;
  /** With `holdDiagnostics`: answers the diagnostics requests waiting so far, or fails them with `error`. */
  releaseDiagnostics(error?: string): void;
  /** The training job writes its next checkpoint: the host reads it and sends the grown series. */
  growSeries(): void;
}

export function startFakeHost(options: FakeHostOptions): FakeHost {
  const queries = makeQueries(options.queries, 1, options.bigItems ?? 0);
  const byId = new Map(queries.map((q) => [q.id, q]));
  const calls: { method: string; params: unknown }[] = [];
  const nul = (v: number) => (Number.isNaN(v) ? null : v);
  const totalLoss = queries.reduce((s, q) => s + (Number.isNaN(q.ndcgA) ? 0 : 1 - q.ndcgA), 0);
  const row = (q: FakeQuery, index: number): QueryRow => ({
    query: q.id,
    index,
    values: options.allMetrics ? FULL_METRICS.map((m) => nul(m.of(q.ndcgA))) : [nul(q.ndcgA), nul(q.ndcgA * 0.9)],
    items: q.labels.length,
    relevant: q.labels.filter((g) => g > 0).length,
    inversions: q.inversions,
    inversionCost: q.inversions * 0.01,
    lossShare: Number.isNaN(q.ndcgA) ? null : (1 - q.ndcgA) / totalLoss,
    skipped: Number.isNaN(q.ndcgA),
  });
  const mean = (xs: number[]) => {
    const f = xs.filter((x) => !Number.isNaN(x));
    return f.length ? f.reduce((a, b) => a + b, 0) / f.length : null;
  };
  const counts = new Array<number>(10).fill(0);
  for (const q of queries) if (!Number.isNaN(q.ndcgA)) counts[Math.min(9, Math.floor(q.ndcgA * 10))]!++;
  const overview: OverviewModel = {
    file: { path: '/demo/hardware-store/run-a.csv', name: 'run-a.csv', format: 'csv', rowCount: queries.reduce((s, q) => s + q.labels.length, 0), sizeBytes: 1, textual: true },
    queryCount: queries.length,
    metrics: options.allMetrics
      ? FULL_METRICS.map((m) => ({ key: m.key, label: m.label, mean: mean(queries.map((q) => m.of(q.ndcgA))), counted: queries.filter((q) => !Number.isNaN(q.ndcgA)).length }))
      : [
          { ...METRICS[0]!, mean: mean(queries.map((q) => q.ndcgA)), counted: queries.filter((q) => !Number.isNaN(q.ndcgA)).length },
          { ...METRICS[1]!, mean: mean(queries.map((q) => q.ndcgA * 0.9)), counted: queries.filter((q) => !Number.isNaN(q.ndcgA)).length },
        ],
    headline: 0,
    conventions: { gain: 'exponential (2^g − 1)', ties: 'average', noRelevant: 'skip', relevantFrom: 1, maxGrade: null, rbpPersistence: 0.8, summary: 'gain exponential · ties average · no-relevant skip · relevant ≥ 1' },
    sensitivity: [{ label: 'gain: exponential (as configured)', mean: 0.62, counted: 10, delta: 0, current: true }, { label: 'gain: linear', mean: 0.61, counted: 10, delta: -0.01, current: false }],
    degenerate: { singleItemQueries: 0, noRelevantQueries: queries.filter((q) => Number.isNaN(q.ndcgA)).length, duplicateRows: 2, missingScoreRows: 1, unjudgedRows: 0, tiedScoreRows: 4 },
    histogram: { lower: 0, upper: 1, counts },
    segmentColumns: ['locale'],
    warnings: ['2 duplicate rows: the first of each was kept.'],
    loadMs: 42,
  };
  const diagnostics: ScoreDiagnosticsView = {
    scoresByGrade: {
      edges: [0, 0.25, 0.5, 0.75, 1],
      grades: [
        { grade: 0, count: 40, missing: 1, q1: 0.1, median: 0.2, q3: 0.35, mean: 0.24, bins: [20, 14, 5, 1] },
        { grade: 2, count: 12, missing: 0, q1: 0.55, median: 0.7, q3: 0.8, mean: 0.66, bins: [0, 2, 4, 6] },
        { grade: null, count: 3, missing: 0, q1: 0.3, median: 0.4, q3: 0.5, mean: 0.4, bins: [0, 2, 1, 0] },
      ],
    },
    dcgByPosition: { k: 10, depth: 3, queries: 480, predicted: [0.4, 0.15, 0.08, 0.05], ideal: [0.55, 0.25, 0.12, 0.08] },
  };
  const heldDiagnostics: ((error?: string) => void)[] = [];
  const sortCache = new Map<string, FakeQuery[]>();
  const list = (key: string, descending: boolean, filter?: string, locale?: string): FakeQuery[] => {
    const cacheKey = `${key}|${descending}|${filter ?? ''}|${locale ?? ''}`;
    let rows = sortCache.get(cacheKey);
    if (rows) return rows;
    const f = filter?.toLowerCase();
    rows = queries.filter((q) => (!f || q.id.toLowerCase().includes(f)) && (!locale || q.locale === locale));
    const value = (q: FakeQuery): number | string =>
      key === 'query' ? q.id : key === 'inversions' || key === 'inversionCost' ? q.inversions : key === 'items' ? q.labels.length : key === 'lossShare' ? 1 - q.ndcgA : key === 'ap' ? q.ndcgA * 0.9 : q.ndcgA;
    rows = [...rows].sort((a, b) => {
      const va = value(a);
      const vb = value(b);
      const na = typeof va === 'number' && Number.isNaN(va);
      const nb = typeof vb === 'number' && Number.isNaN(vb);
      if (na || nb) return na === nb ? 0 : na ? 1 : -1;
      const c = va < vb ? -1 : va > vb ? 1 : 0;
      return descending ? -c : c;
    });
    sortCache.set(cacheKey, rows);
    return rows;
  };
  const detail = (q: FakeQuery, run: 'a' | 'b' = 'a'): QueryDetailView => {
    const scores = run === 'a' ? q.scoresA : q.scoresB;
    const ranking = order(scores);
    const idealIdx = q.labels.map((g, i) => ({ g, i })).sort((a, b) => b.g - a.g || a.i - b.i).map((x) => x.i);
    const idealPos = new Map(idealIdx.map((i, p) => [i, p + 1]));
    let cum = 0;
    let icum = 0;
    const positions: PositionView[] = ranking.map((i, p) => {
      const gain = 2 ** q.labels[i]! - 1;
      const discount = 1 / Math.log2(p + 2);
      const contribution = p < 10 ? gain * discount : 0;
      cum += contribution;
      icum += p < 10 ? (2 ** q.labels[idealIdx[p]!]! - 1) * discount : 0;
      return { position: p + 1, row: i, line: i + 2, item: `sku-${i}`, label: q.labels[i]!, score: scores[i]!, gain, discount, contribution, cumulativeDcg: cum, idealCumulativeDcg: icum, idealPosition: idealPos.get(i)!, tieGroupSize: 1, withinCutoff: p < 10 };
    });
    if (q.id.startsWith('<img')) (positions[0] as { item: string }).item = '<b>bold</b>';
    const rankPos = new Map(ranking.map((i, p) => [i, p + 1]));
    return {
      query: q.id,
      k: 10,
      headlineKey: 'ndcg@10',
      positions,
      ideal: idealIdx.map((i, p) => ({ position: p + 1, row: i, item: positions[rankPos.get(i)! - 1]!.item, label: q.labels[i]!, gain: 2 ** q.labels[i]! - 1, predictedPosition: rankPos.get(i)!, retrieved: true })),
      dcg: cum,
      idealDcg: icum,
      ndcg: nul(q.ndcgA),
      invertedPairs: [],
      invertedPairsTotal: 0,
      values: [nul(run === 'a' ? q.ndcgA : q.ndcgB), null],
      segments: { locale: q.locale },
    };
  };
  const compareRow = (q: FakeQuery, index: number): CompareRow => {
    const d = q.ndcgB - q.ndcgA;
    return { query: q.id, index, a: nul(q.ndcgA), b: nul(q.ndcgB), delta: nul(d), outcome: Number.isNaN(d) ? null : d > 0.001 ? 'win' : d < -0.001 ? 'loss' : 'tie' };
  };
  const compare: CompareOverviewModel = {
    runA: overview.file,
    runB: { ...overview.file, path: '/demo/hardware-store/run-b.csv', name: 'run-b.csv' },
    conventions: overview.conventions,
    headline: 0,
    metrics: METRICS.map((m, i) => ({
      key: m.key,
      label: m.label,
      meanA: 0.6,
      meanB: 0.62 + i * 0.01,
      delta: 0.02 + i * 0.01,
      wins: queries.filter((q) => q.ndcgB - q.ndcgA > 0.001).length,
      ties: queries.filter((q) => Math.abs(q.ndcgB - q.ndcgA) <= 0.001).length,
      losses: queries.filter((q) => q.ndcgB - q.ndcgA < -0.001).length,
      tests: [
        { test: 'paired t-test', statistic: 2.5 + i, pValue: 0.013 / (i + 1), adjustedP: 0.026 },
        { test: 'Wilcoxon signed-rank', statistic: 1234, pValue: 0.02, adjustedP: 0.04 },
        { test: 'randomization (paired permutation)', statistic: null, pValue: 0.011, adjustedP: 0.022 },
      ],
      intervalLow: 0.005,
      intervalHigh: 0.035,
    })),
    pairedQueries: queries.length,
    onlyInA: 0,
    onlyInB: 0,
    tieTolerance: 0.001,
    segmentColumns: ['locale'],
    warnings: [],
    loadMs: 77,
  };

  let series = fakeSeries(4);
  const handlers: RequestHandlers<ViewRequests> = {
    queryPage: (p) => {
      const rows = list(p.sort?.key ?? 'ndcg@10', p.sort?.descending ?? false, p.filter, p.segment?.value);
      return { total: rows.length, offset: p.offset, rows: rows.slice(p.offset, p.offset + p.limit).map((q, i) => row(q, p.offset + i)) };
    },
    queryDetail: (p) => {
      const q = byId.get(p.query);
      if (!q) throw new Error(`no query '${p.query}'`);
      return detail(q, p.run);
    },
    overviewSensitivity: () => overview.sensitivity,
    overviewDiagnostics: () => options.holdDiagnostics ? new Promise<ScoreDiagnosticsView>((resolve, reject) => {
      heldDiagnostics.push((error) => (error === undefined ? resolve(diagnostics) : reject(new Error(error))));
    }) : diagnostics,
    segments: (p) => ({
      column: p.column,
      rows: LOCALES.map((value) => {
        const qs = queries.filter((q) => q.locale === value);
        return { value, queries: qs.length, skipped: qs.filter((q) => Number.isNaN(q.ndcgA)).length, means: [mean(qs.map((q) => q.ndcgA)), null], headlineDelta: 0.01, lossShare: 0.25 };
      }),
    }),
    exportView: () => ({ done: true, target: '/tmp/export.md' }),
    copyQueryJson: () => ({ copied: true }),
    revealRow: (p) => ({ revealed: true, line: p.row + 2 }),
    compareOverview: () => compare,
    comparePage: (p) => {
      const rows = [...queries].sort((a, b) => (p.sort?.descending ? -1 : 1) * ((a.ndcgB - a.ndcgA || 0) - (b.ndcgB - b.ndcgA || 0)));
      return { total: rows.length, offset: p.offset, metric: p.metric ?? 'ndcg@10', rows: rows.slice(p.offset, p.offset + p.limit).map((q, i) => compareRow(q, p.offset + i)) };
    },
    queryMovement: (p) => {
      const q = byId.get(p.query);
      if (!q) throw new Error(`no query '${p.query}'`);
      const oa = order(q.scoresA);
      const ob = order(q.scoresB);
      const ra = new Map(oa.map((i, k) => [i, k + 1]));
      const rb = new Map(ob.map((i, k) => [i, k + 1]));
      const contribution = (i: number | undefined, k: number) => (i === undefined || k >= 10 ? 0 : (2 ** q.labels[i]! - 1) / Math.log2(k + 2));
      const positions = Array.from({ length: Math.min(10, q.labels.length) }, (_, k) => {
        const ca = contribution(oa[k], k);
        const cb = contribution(ob[k], k);
        return { position: k + 1, itemA: `sku-${oa[k]}`, itemB: `sku-${ob[k]}`, contributionA: ca, contributionB: cb, change: cb - ca };
      });
      return {
        query: q.id,
        k: 10,
        a: nul(q.ndcgA),
        b: nul(q.ndcgB),
        dcgA: positions.reduce((s2, x) => s2 + x.contributionA, 0),
        dcgB: positions.reduce((s2, x) => s2 + x.contributionB, 0),
        rows: ob.map((i) => ({ item: `sku-${i}`, label: q.labels[i]!, positionA: ra.get(i)!, positionB: rb.get(i)!, moved: ra.get(i)! - rb.get(i)! })),
        fixedPairs: [{ higherGraded: 'sku-1', lowerGraded: 'sku-2', ndcgRecovered: 0.05 }],
        introducedPairs: [],
        fixedTotal: 1,
        introducedTotal: 0,
        keptPairs: 0,
        droppedPairs: 0,
        invertedTotalA: 1,
        invertedTotalB: 0,
        pairsTruncated: false,
        positions,
      };
    },
    ...seriesHandlers(() => series),
    compareSegments: (p) => ({ column: p.column, metric: 'ndcg@10', rows: LOCALES.map((value) => ({ value, queries: 10, skipped: 0, meanA: 0.6, meanB: 0.61, delta: 0.01, wins: 5, ties: 2, losses: 3, intervalLow: -0.02, intervalHigh: 0.04, tTestP: 0.41, randomizationP: 0.43 })) }),
  };

  const toView = (message: HostToView) => window.dispatchEvent(new MessageEvent('message', { data: JSON.parse(JSON.stringify(message)) }));
  const server = new RequestServer<ViewRequests>(
    new Proxy(handlers, {
      get(target, method: string) {
        const h = target[method as keyof ViewRequests] as ((p: unknown, c: unknown) => unknown) | undefined;
        if (!h) return undefined;
        return async (params: unknown, ctx: unknown) => {
          calls.push({ method, params });
          if (options.delayMs) await new Promise((r) => setTimeout(r, options.delayMs));
          return h(params, ctx);
        };
      },
      has: (target, method) => method in target,
    }) as RequestHandlers<ViewRequests>,
    (response) => setTimeout(() => toView(response), 0),
  );
  let state: unknown;
  const initial: ViewState = options.error
    ? { status: 'error', message: options.error }
    : options.mode === 'compare'
      ? { status: 'loaded', mode: 'compare', compare }
      : options.mode === 'series'
        ? { status: 'loaded', mode: 'series', series, seriesKey: 'folder:run-7' }
        : { status: 'loaded', mode: 'single', overview: options.sensitivityLater ? { ...overview, sensitivity: [], sensitivityLater: true } : overview };
  (window as unknown as { acquireVsCodeApi: () => unknown }).acquireVsCodeApi = () => ({
    postMessage: (message: { kind: string }) => {
      const copy = JSON.parse(JSON.stringify(message));
      if (copy.kind === 'ready') setTimeout(() => toView({ kind: 'state', state: initial }), 0);
      else if (copy.kind === 'selection') calls.push({ method: 'selection', params: copy });
      else server.handleMessage(copy);
    },
    getState: () => state,
    setState: (s: unknown) => (state = s),
  });
  const releaseDiagnostics = (error?: string) => {
    for (const answer of heldDiagnostics.splice(0)) answer(error);
  };
  /** The training job writes its next checkpoint: the host reads it and sends the grown series. */
  const growSeries = (): void => {
    series = fakeSeries(series.checkpoints.length + 1);
    toView({ kind: 'state', state: { status: 'reloaded', mode: 'series', series, seriesKey: 'folder:run-7' } });
  };
  return { send: toView, calls, queries, overview, releaseDiagnostics, growSeries };
}
