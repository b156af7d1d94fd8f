/**
 * A training series held by the engine worker for one trend view. It keeps, per checkpoint file, only
 * the per-query columns and intervals it scored (never a dump), keyed by the file's size and time and
 * the settings, so when a job writes one more checkpoint only that file is read; a rewritten file is
 * read again. A checkpoint that cannot be read now (half-written, or rewritten while it was read) is
 * listed as unread with its one-line error and tried again on the next load, as the viewer does with a
 * file that changes under it.
 */
import { stat } from 'node:fs/promises';
import { InputError } from '../engine/errors';
import { parseMetricList } from '../engine/metrics/parse';
import type { ReadOptions } from '../engine/readers/index';
import { conventionsAsJson } from '../engine/report/reportInput';
import type { CheckpointTask, ScoredCheckpoint } from '../engine/trend/checkpoint';
import { scoreSeries } from '../engine/trend/scoreSeries';
import { orderSeries, type SeriesFile } from '../engine/trend/series';
import { TrendBuilder, type QueryDrop, type Trend } from '../engine/trend/trend';
import type { DropView, SeriesOverviewModel, SeriesQueries, TrajectoryView, UnreadCheckpoint } from '../protocol/messages';
import type { DumpSource, LoadSeriesParams } from '../protocol/worker';
import { conventionsView, metricLabel } from './viewModels';

const finite = (x: number): number | null => (Number.isFinite(x) ? x : null);

/** What a checkpoint is read with: the dump and its labels (queries and items tables add nothing to a trend). */
function readOptionsOf(source: DumpSource): Omit<ReadOptions, 'signal' | 'onProgress'> {
  return {
    ...(source.format ? { format: source.format as ReadOptions['format'] } : {}),
    ...(source.columns ? { columns: source.columns } : {}),
    // A judgments file found by the naming rule beside a dump with labels of its own may belong to other data.
    ...(source.judgments && !source.judgmentsFound ? { judgments: source.judgments } : {}),
    ...(source.scores ? { scores: source.scores } : {}),
    ...(source.missingQueries && source.judgments && !source.judgmentsFound ? { missingQueries: source.missingQueries } : {}),
  };
}

/** The order rule's errors name the command line's option; in the editor the setting does that job. */
function inEditorTerms<T>(run: () => T): T {
  try {
    return run();
  } catch (error) {
    if (error instanceof InputError) throw new InputError(error.expected.replace('--order time', 'the setting gainline.series.order set to "time"'), error.file, error.line, error.found);
    throw error;
  }
}

function messageOf(error: unknown): string {
  return (error instanceof Error ? error.message : String(error)).split('\n')[0]!;
}

interface Kept {
  readonly key: string;
  readonly scored: ScoredCheckpoint;
}

export class SeriesStore {
  /** By file path: what was scored and under which key. */
  private readonly kept = new Map<string, Kept>();
  /**
   * One string per query name across the kept checkpoints: each checkpoint's read makes its own copies,
   * and 50 checkpoints of 100k queries would otherwise keep 5M strings instead of 100k.
   */
  private readonly names = new Map<string, string>();
  private readonly sharedAlready = new WeakSet<ScoredCheckpoint>();
  private trend: Trend | undefined;

  async load(params: LoadSeriesParams, signal?: AbortSignal): Promise<SeriesOverviewModel> {
    const started = performance.now();
    const unread: UnreadCheckpoint[] = [...params.unreadable];
    const present: (SeriesFile & { source: DumpSource; size: number })[] = [];
    for (const f of params.files) {
      try {
        const info = await stat(f.source.path);
        present.push({ path: f.source.path, name: f.name, modifiedMs: info.mtimeMs, size: info.size, source: f.source });
      } catch (error) {
        unread.push({ run: f.name, path: f.source.path, message: messageOf(error) });
      }
    }
    const ordered = inEditorTerms(() => orderSeries(present, params.order));
    const byPath = new Map(present.map((p) => [p.path, p]));
    const metrics = parseMetricList(params.settings.metrics);
    const builder = new TrendBuilder(metrics, { bootstrap: params.bootstrap, seed: params.seed, top: params.top });
    const keyOf = (task: CheckpointTask): string => {
      const file = byPath.get(task.path)!;
      return JSON.stringify([file.size, file.modifiedMs, params.settings.metrics, conventionsAsJson(task.conventions), task.read, task.bootstrap]);
    };
    let conventions = params.settings.conventions;
    let scoredNow = 0;
    const added: { checkpoint: (typeof ordered)[number] }[] = [];
    if (ordered.length > 0) {
      const scored = await scoreSeries({
        paths: ordered.map((c) => c.path),
        read: (i) => readOptionsOf(byPath.get(ordered[i]!.path)!.source),
        metrics,
        conventions,
        bootstrap: { resamples: params.bootstrap, seed: params.seed },
        ...(signal ? { signal } : {}),
        known: (_i, task) => {
          const kept = this.kept.get(task.path);
          return kept && kept.key === keyOf(task) ? kept.scored : undefined;
        },
      });
      conventions = scored.conventions;
      scoredNow = scored.scoredNow;
      for (let i = 0; i < ordered.length; i++) {
        const checkpoint = ordered[i]!;
        try {
          const result = this.shareNames(await scored.results[i]!);
          this.kept.set(checkpoint.path, { key: keyOf(scored.tasks[i]!), scored: result });
          await builder.add(checkpoint.name, checkpoint.position, result.columns, result.intervals);
          added.push({ checkpoint });
        } catch (error) {
          if (signal?.aborted) throw error;
          this.kept.delete(checkpoint.path);
          unread.push({ run: checkpoint.name, path: checkpoint.path, message: error instanceof InputError ? error.message : messageOf(error) });
        }
      }
    }
    for (const path of [...this.kept.keys()]) if (!byPath.has(path)) this.kept.delete(path);
    const trend = builder.finish();
    this.trend = trend;
    const drop = (d: QueryDrop): DropView => ({ query: d.query, from: finite(d.from), fromCheckpoint: d.fromCheckpoint, last: finite(d.last), delta: finite(d.delta) });
    return {
      name: params.name,
      orderRule: params.order === 'number' ? 'ordered by the checkpoint number in each file name' : 'ordered by modification time, oldest first',
      metrics: metrics.map((m) => ({ key: m.key, label: metricLabel(m) })),
      headline: 0,
      conventions: conventionsView(conventions),
      checkpoints: trend.checkpoints.map((c, k) => ({
        run: c.run,
        path: added[k]!.checkpoint.path,
        position: c.position,
        queries: c.queries,
        means: c.means.map(finite),
        lower: c.intervals.map((x) => finite(x.low)),
        upper: c.intervals.map((x) => finite(x.high)),
        counted: [...c.counted],
        missing: trend.querySets[k]!.missing,
      })),
      peaks: trend.peaks.map((p) => (p < 0 ? null : p)),
      worstFirstToLast: trend.worstFirstToLast.map(drop),
      worstPeakToLast: trend.worstPeakToLast.map(drop),
      comparableFirstToLast: trend.comparableFirstToLast,
      queryCount: trend.queryNames.length,
      inEveryCheckpoint: trend.inEveryCheckpoint,
      unread,
      warnings: [...trend.warnings, ...unread.map((u) => `${u.run} was not read: ${u.message}`)],
      bootstrap: { resamples: params.bootstrap, seed: params.seed },
      scoredNow,
      loadMs: Math.round(performance.now() - started),
    };
  }

  private shareNames(scored: ScoredCheckpoint): ScoredCheckpoint {
    if (this.sharedAlready.has(scored)) return scored; // kept from an earlier load
    const shared = scored.columns.queryNames.map((n) => {
      const known = this.names.get(n);
      if (known !== undefined) return known;
      this.names.set(n, n);
      return n;
    });
    const result = { ...scored, columns: { ...scored.columns, queryNames: shared } };
    this.sharedAlready.add(result);
    return result;
  }

  trajectory(query: string): TrajectoryView {
    const trend = this.loaded();
    const id = trend.queryNames.indexOf(query);
    if (id < 0) throw new InputError('a query of this series', undefined, undefined, query);
    const c = trend.checkpoints.length;
    return { query, values: trend.trajectories.map((matrix) => Array.from(matrix.subarray(id * c, id * c + c), finite)) };
  }

  queries(filter: string, limit: number): SeriesQueries {
    const needle = filter.toLowerCase();
    const matching = this.loaded().queryNames.filter((q) => q.toLowerCase().includes(needle));
    return { total: matching.length, queries: matching.slice(0, Math.max(0, limit)) };
  }

  private loaded(): Trend {
    if (!this.trend) throw new Error('no series is loaded in this view');
    return this.trend;
  }
}
