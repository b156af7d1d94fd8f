/**
 * Charts drawn with chart.js in theme colours. Only the pieces used are registered, to keep the
 * bundle small. Colours are re-read from the VS Code theme variables whenever the body's theme class
 * changes, and every live chart is restyled in place.
 */
import {
  BarController,
  BarElement,
  CategoryScale,
  Chart,
  Filler,
  Legend,
  LinearScale,
  LineController,
  LineElement,
  PointElement,
  ScatterController,
  Tooltip,
  type ChartConfiguration,
  type ChartEvent,
  type ActiveElement,
} from 'chart.js';
import { formatFixed } from '../model/format';
import { resolvePalette, themeKindFromBodyClass, type ChartPalette } from '../model/themeColors';

Chart.register(BarController, BarElement, CategoryScale, Filler, LinearScale, LineController, LineElement, PointElement, ScatterController, Tooltip, Legend);

let palette: ChartPalette | undefined;
const live = new Set<{ chart: Chart; restyle: (p: ChartPalette) => void }>();

export function currentPalette(): ChartPalette {
  if (!palette) palette = readPalette();
  return palette;
}

function readPalette(): ChartPalette {
  const style = getComputedStyle(document.body);
  return resolvePalette((name) => style.getPropertyValue(name), themeKindFromBodyClass(document.body.className));
}

/** Call once: restyles every chart when VS Code switches theme (it changes the body class). */
export function watchTheme(): void {
  const observer = new MutationObserver(() => {
    palette = readPalette();
    for (const entry of live) {
      entry.restyle(palette);
      entry.chart.update('none');
    }
  });
  observer.observe(document.body, { attributes: true, attributeFilter: ['class'] });
  // The theme's variables live in <html style>; they may change in a separate step from the class.
  observer.observe(document.documentElement, { attributes: true, attributeFilter: ['style'] });
}

function baseOptions(p: ChartPalette, xTitle: string, yTitle: string) {
  const axis = (title: string) => ({
    title: { display: true, text: title, color: p.muted, font: { family: p.font } },
    ticks: { color: p.muted, font: { family: p.font } },
    grid: { color: p.grid },
    border: { color: p.grid },
  });
  return {
    responsive: true,
    maintainAspectRatio: false,
    animation: false as const,
    scales: { x: axis(xTitle), y: axis(yTitle) },
    plugins: {
      legend: { labels: { color: p.foreground, font: { family: p.font } } },
      tooltip: { titleFont: { family: p.font }, bodyFont: { family: p.font } },
    },
  };
}

function track(chart: Chart, restyle: (p: ChartPalette) => void): Chart {
  const entry = { chart, restyle };
  live.add(entry);
  const destroy = chart.destroy.bind(chart);
  chart.destroy = () => {
    live.delete(entry);
    destroy();
  };
  return chart;
}

function restyleAxes(chart: Chart, p: ChartPalette): void {
  for (const scale of Object.values(chart.options.scales ?? {})) {
    if (!scale) continue;
    const s = scale as { ticks?: { color?: unknown }; grid?: { color?: unknown }; title?: { color?: unknown }; border?: { color?: unknown } };
    if (s.ticks) s.ticks.color = p.muted;
    if (s.grid) s.grid.color = p.grid;
    if (s.title) s.title.color = p.muted;
    if (s.border) s.border.color = p.grid;
  }
  const legend = chart.options.plugins?.legend?.labels;
  if (legend) legend.color = p.foreground;
}

export interface BarSeries {
  readonly labels: readonly string[];
  readonly counts: readonly number[];
  /** Tooltip line per bar, saying what the bar is. */
  readonly tooltips: readonly string[];
  readonly xTitle: string;
  readonly yTitle: string;
  readonly seriesLabel: string;
  /** Optional colour role per bar: 'worse' for regressions, 'better' for gains. */
  readonly roles?: readonly ('better' | 'worse' | 'neutral')[];
}

export function barChart(canvas: HTMLCanvasElement, data: BarSeries): Chart {
  const p = currentPalette();
  const colors = (pal: ChartPalette) =>
    data.counts.map((_, i) => {
      const role = data.roles?.[i];
      return role === 'worse' ? pal.worse : role === 'better' ? pal.better : pal.seriesAFill;
    });
  const config: ChartConfiguration<'bar'> = {
    type: 'bar',
    data: {
      labels: [...data.labels],
      datasets: [{ label: data.seriesLabel, data: [...data.counts], backgroundColor: colors(p), borderColor: p.seriesA, borderWidth: 1 }],
    },
    options: {
      ...baseOptions(p, data.xTitle, data.yTitle),
      plugins: {
        ...baseOptions(p, data.xTitle, data.yTitle).plugins,
        legend: { display: false },
        tooltip: { callbacks: { label: (item) => data.tooltips[item.dataIndex] ?? '' } },
      },
    },
  };
  const chart = new Chart(canvas, config);
  return track(chart, (pal) => {
    const ds = chart.data.datasets[0]!;
    ds.backgroundColor = colors(pal);
    ds.borderColor = pal.seriesA;
    restyleAxes(chart, pal);
  });
}

export interface LineSeriesInput {
  readonly x: readonly number[];
  readonly a: readonly number[];
  readonly b: readonly number[];
  readonly aLabel: string;
  readonly bLabel: string;
  readonly xTitle: string;
  readonly yTitle: string;
}

/** Two step-free lines over the same x (e.g. cumulative DCG against the ideal). */
export function twoLineChart(canvas: HTMLCanvasElement, data: LineSeriesInput): Chart {
  const p = currentPalette();
  const config: ChartConfiguration<'line'> = {
    type: 'line',
    data: {
      labels: data.x.map(String),
      datasets: [
        { label: data.aLabel, data: [...data.a], borderColor: p.seriesA, backgroundColor: p.seriesA, pointRadius: 2, borderWidth: 2 },
        { label: data.bLabel, data: [...data.b], borderColor: p.seriesB, backgroundColor: p.seriesB, pointRadius: 2, borderWidth: 2, borderDash: [5, 3] },
      ],
    },
    options: { ...baseOptions(p, data.xTitle, data.yTitle), interaction: { mode: 'index', intersect: false } },
  };
  const chart = new Chart(canvas, config);
  return track(chart, (pal) => {
    const [a, b] = chart.data.datasets;
    if (a) a.borderColor = a.backgroundColor = pal.seriesA;
    if (b) b.borderColor = b.backgroundColor = pal.seriesB;
    restyleAxes(chart, pal);
  });
}

export interface SeriesLinesInput {
  /** Category labels along x. */
  readonly labels: readonly string[];
  /** `muted` series (e.g. unjudged rows) are drawn in the muted colour, outside the ramp. */
  readonly series: readonly { readonly label: string; readonly values: readonly (number | null)[]; readonly muted?: boolean }[];
  readonly xTitle: string;
  readonly yTitle: string;
}

/**
 * Several lines over the same categories (e.g. the score distribution of each grade). Colours run from
 * the "worse" to the "better" theme colour in series order; dashes differ too, so colour is not the only cue.
 */
export function seriesLinesChart(canvas: HTMLCanvasElement, data: SeriesLinesInput): Chart {
  const colorsOf = (pal: ChartPalette) => {
    const ramp = [pal.worse, pal.seriesB, pal.seriesA, pal.better];
    const n = data.series.filter((s) => !s.muted).length;
    return data.series.map((s, i) => (s.muted ? pal.muted : ramp[n <= 1 ? ramp.length - 1 : Math.round((i * (ramp.length - 1)) / (n - 1))]!));
  };
  const dashes = [[], [6, 3], [2, 2], [8, 3, 2, 3], [4, 4]];
  const p = currentPalette();
  const colors = colorsOf(p);
  const config: ChartConfiguration<'line'> = {
    type: 'line',
    data: {
      labels: [...data.labels],
      datasets: data.series.map((s, i) => ({
        label: s.label, data: [...s.values], borderColor: colors[i], backgroundColor: colors[i], pointRadius: 1, borderWidth: 2, borderDash: dashes[i % dashes.length],
      })),
    },
    options: { ...baseOptions(p, data.xTitle, data.yTitle), interaction: { mode: 'index', intersect: false } },
  };
  const chart = new Chart(canvas, config);
  return track(chart, (pal) => {
    const fresh = colorsOf(pal);
    chart.data.datasets.forEach((ds, i) => {
      ds.borderColor = ds.backgroundColor = fresh[i]!;
    });
    restyleAxes(chart, pal);
  });
}

export interface ScatterInput {
  readonly points: readonly { x: number; y: number; query: string }[];
  readonly xTitle: string;
  readonly yTitle: string;
  readonly onPick: (query: string) => void;
}

/** Per-query A against B, with the y = x diagonal; clicking a point picks its query. */
export function scatterChart(canvas: HTMLCanvasElement, data: ScatterInput): Chart {
  const p = currentPalette();
  const pointColors = (pal: ChartPalette) => data.points.map((pt) => (pt.y > pt.x ? pal.better : pt.y < pt.x ? pal.worse : pal.muted));
  let lo = 0;
  let hi = 1;
  for (const pt of data.points) {
    lo = Math.min(lo, pt.x, pt.y);
    hi = Math.max(hi, pt.x, pt.y);
  }
  const config: ChartConfiguration<'scatter'> = {
    type: 'scatter',
    data: {
      datasets: [
        {
          label: 'Queries',
          data: data.points.map((pt) => ({ x: pt.x, y: pt.y })),
          pointBackgroundColor: pointColors(p),
          pointBorderWidth: 0,
          pointRadius: data.points.length > 5000 ? 1.5 : 3,
          pointHoverRadius: 5,
        },
        {
          type: 'line',
          label: 'No change (B = A)',
          data: [
            { x: lo, y: lo },
            { x: hi, y: hi },
          ],
          borderColor: p.grid,
          borderWidth: 1,
          pointRadius: 0,
        } as never,
      ],
    },
    options: {
      ...baseOptions(p, data.xTitle, data.yTitle),
      onClick: (_e: ChartEvent, elements: ActiveElement[]) => {
        const hit = elements.find((e) => e.datasetIndex === 0);
        if (hit) data.onPick(data.points[hit.index]!.query);
      },
      plugins: {
        ...baseOptions(p, data.xTitle, data.yTitle).plugins,
        // Point colours encode better/worse per point; the caption under the chart says so.
        legend: { display: false },
        tooltip: {
          filter: (item) => item.datasetIndex === 0,
          callbacks: {
            label: (item) => {
              const pt = data.points[item.dataIndex]!;
              return `${pt.query}: A ${formatFixed(pt.x)}, B ${formatFixed(pt.y)} (click to see its movement)`;
            },
          },
        },
      },
    },
  };
  const chart = new Chart(canvas, config);
  return track(chart, (pal) => {
    const ds = chart.data.datasets[0] as { pointBackgroundColor?: unknown };
    ds.pointBackgroundColor = pointColors(pal);
    (chart.data.datasets[1] as { borderColor?: unknown }).borderColor = pal.grid;
    restyleAxes(chart, pal);
  });
}

export interface BandInput {
  /** Category labels along x (one per point). */
  readonly labels: readonly string[];
  readonly values: readonly (number | null)[];
  readonly lower: readonly (number | null)[];
  readonly upper: readonly (number | null)[];
  readonly seriesLabel: string;
  readonly bandLabel: string;
  /** Index of a point drawn larger (the peak), or null. */
  readonly marked: number | null;
  readonly xTitle: string;
  readonly yTitle: string;
  /** Tooltip lines of each point. */
  readonly tooltips: readonly string[];
  readonly onPick: (index: number) => void;
}

/**
 * A line of values with a shaded band between a lower and an upper bound at each point (a mean and its
 * interval over checkpoints). Clicking a point (or near it on the x axis) picks its index.
 */
export function bandChart(canvas: HTMLCanvasElement, data: BandInput): Chart {
  const p = currentPalette();
  const radii = data.values.map((_, i) => (i === data.marked ? 6 : 3));
  const config: ChartConfiguration<'line'> = {
    type: 'line',
    data: {
      labels: [...data.labels],
      datasets: [
        { label: `${data.bandLabel} (upper)`, data: [...data.upper], borderWidth: 0, pointRadius: 0, pointHitRadius: 0, fill: false, borderColor: p.seriesAFill, backgroundColor: p.seriesAFill },
        { label: data.bandLabel, data: [...data.lower], borderWidth: 0, pointRadius: 0, pointHitRadius: 0, fill: '-1', borderColor: p.seriesAFill, backgroundColor: p.seriesAFill },
        { label: data.seriesLabel, data: [...data.values], borderColor: p.seriesA, backgroundColor: p.seriesA, borderWidth: 2, pointRadius: radii, pointHoverRadius: 7, fill: false },
      ],
    },
    options: {
      ...baseOptions(p, data.xTitle, data.yTitle),
      interaction: { mode: 'index', intersect: false },
      onClick: (_e: ChartEvent, elements: ActiveElement[]) => {
        const hit = elements.find((e) => e.datasetIndex === 2) ?? elements[0];
        if (hit) data.onPick(hit.index);
      },
      plugins: {
        ...baseOptions(p, data.xTitle, data.yTitle).plugins,
        legend: { labels: { color: p.foreground, font: { family: p.font }, filter: (item) => !item.text.endsWith('(upper)') } },
        tooltip: {
          filter: (item) => item.datasetIndex === 2,
          callbacks: { label: (item) => data.tooltips[item.dataIndex] ?? '' },
        },
      },
    },
  };
  const chart = new Chart(canvas, config);
  return track(chart, (pal) => {
    const [upper, lower, line] = chart.data.datasets;
    for (const band of [upper, lower]) if (band) band.borderColor = band.backgroundColor = pal.seriesAFill;
    if (line) line.borderColor = line.backgroundColor = pal.seriesA;
    restyleAxes(chart, pal);
  });
}
