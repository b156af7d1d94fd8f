/**
 * The tab table: every screen of the webview, in tab order, with the modes it appears in. Adding a
 * screen is one file under screens/ and one row here (DEVELOPERS.md, "Adding a screen").
 */
import { formatCount } from './model/format';
import { CompareScreen } from './screens/compare';
import { DeltasScreen } from './screens/deltas';
import { DetailScreen } from './screens/detail';
import { MovementScreen } from './screens/movement';
import { OverviewScreen } from './screens/overview';
import { SegmentsScreen } from './screens/segments';
import { TrendScreen } from './screens/trend';
import { WorstScreen } from './screens/worst';
import type { LoadedView, TabSpec } from './ui/screen';

export type TabName = 'overview' | 'compare' | 'worst' | 'deltas' | 'movement' | 'detail' | 'segments' | 'trend';

/** The metric list, conventions and headline of whichever result is loaded. */
function summaryOf(data: LoadedView | undefined) {
  const model = data?.mode === 'single' ? data.overview : data?.mode === 'compare' ? data.compare : undefined;
  return {
    metrics: model?.metrics ?? [],
    headline: model?.headline ?? 0,
    conventions: model?.conventions.summary ?? '',
    segmentColumns: model?.segmentColumns ?? [],
  };
}

export const TABS: readonly TabSpec<TabName>[] = [
  {
    name: 'overview', label: 'Overview', icon: 'dashboard', modes: ['single'],
    create: (ctx) => {
      const screen = new OverviewScreen(ctx);
      return { element: screen.element, load: (d) => d.mode === 'single' && screen.render(d.overview) };
    },
  },
  {
    name: 'compare', label: 'A vs B', icon: 'diff', modes: ['compare'],
    create: (ctx) => {
      const screen = new CompareScreen(ctx);
      return { element: screen.element, load: (d, keep) => d.mode === 'compare' && screen.render(d.compare, keep) };
    },
  },
  {
    name: 'worst', label: 'Worst queries', icon: 'list-ordered', modes: ['single'], fill: true,
    badge: (d) => (d.mode === 'single' ? formatCount(d.overview.queryCount) : undefined),
    create: (ctx) => {
      const screen = new WorstScreen(ctx);
      return { element: screen.element, load: (d, keep) => d.mode === 'single' && screen.setModel(d.overview, keep) };
    },
  },
  {
    name: 'deltas', label: 'Per-query Δ', icon: 'arrow-swap', modes: ['compare'], fill: true,
    badge: (d) => (d.mode === 'compare' ? formatCount(d.compare.pairedQueries) : undefined),
    create: (ctx) => {
      const screen = new DeltasScreen(ctx);
      return { element: screen.element, load: (d, keep) => d.mode === 'compare' && screen.setModel(d.compare, keep) };
    },
  },
  {
    name: 'movement', label: 'Movement', icon: 'git-compare', modes: ['compare'],
    create: (ctx) => {
      let data: LoadedView | undefined;
      const screen = new MovementScreen(ctx, () => {
        const s = summaryOf(data);
        return s.metrics[s.headline]?.label ?? '';
      });
      return { element: screen.element, load: (d) => void (data = d), showQuery: (q) => screen.show(q), clearQuery: () => screen.clear() };
    },
  },
  {
    name: 'detail', label: 'Query detail', icon: 'list-tree', modes: ['single', 'compare'],
    create: (ctx) => {
      let data: LoadedView | undefined;
      const screen = new DetailScreen(ctx, {
        metricKeys: () => summaryOf(data).metrics.map((m) => m.key),
        conventionsSummary: () => summaryOf(data).conventions,
        compareMode: () => data?.mode === 'compare',
      });
      return { element: screen.element, load: (d) => void (data = d), showQuery: (q) => screen.show(q), clearQuery: () => screen.clear() };
    },
  },
  {
    name: 'segments', label: 'Segments', icon: 'group-by-ref-type', modes: ['single', 'compare'], fill: true,
    create: (ctx) => {
      const screen = new SegmentsScreen(ctx);
      return {
        element: screen.element,
        load: (d, keep) => {
          const s = summaryOf(d);
          screen.configure({ compare: d.mode === 'compare', columns: s.segmentColumns, metrics: s.metrics, headline: s.headline, conventionsSummary: s.conventions }, keep);
        },
      };
    },
  },
  {
    name: 'trend', label: 'Training trend', icon: 'graph-line', modes: ['series'],
    badge: (d) => (d.mode === 'series' ? formatCount(d.series.checkpoints.length) : undefined),
    create: (ctx) => {
      const screen = new TrendScreen(ctx);
      return {
        element: screen.element,
        load: (d, keep) => d.mode === 'series' && screen.render(d.series, keep),
        showQuery: (q) => screen.show(q),
        clearQuery: () => screen.clear(),
      };
    },
  },
];
