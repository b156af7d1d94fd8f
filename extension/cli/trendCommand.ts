/**
 * `gainline trend DIR|FILE|PATTERN…`: a model's checkpoints over training. Each dump is read, scored
 * and reduced to its per-query metric columns before the next is read, so a long series never holds
 * more than one dump.
 */
import { readdir, stat } from 'node:fs/promises';
import { basename, dirname, join, relative, resolve } from 'node:path';
import { InputError } from '../engine/errors';
import { formatTrend, TREND_FORMATS, type TrendFormat } from '../engine/report/trendReport';
import { looksLikeDump, nameMatches, orderSeries, type SeriesFile, type SeriesOrder } from '../engine/trend/series';
import { scoreSeries } from '../engine/trend/scoreSeries';
import { DEFAULT_TREND_SETTINGS } from '../presentation/defaults';
import { TrendBuilder } from '../engine/trend/trend';
import { conventionHelp, conventionOptions, parseCommandArgs, scoringSetupFrom } from './conventionArgs';
import { UsageError } from './evalCommand';
import type { CliIO } from './io';
import { progressLine } from './progress';
import { wholeNumber } from './compareCommand';


export const trendUsage = `Usage: gainline trend DIR|FILE|PATTERN… [options]

Scores a series of dumps (one per checkpoint of a training job) under the same conventions and shows
how each metric moved: per checkpoint the mean with a 95% bootstrap interval, the checkpoint where each
metric peaked, and on the first metric the queries that fell most from the first checkpoint to the last
and from their own peak to the last. JSON also holds every query's trajectory.

A folder stands for the dump files in it (.csv .tsv .jsonl .json .run .parquet, optionally .gz); a
PATTERN may use * and ? in its file name part ("ckpt/epoch-*.csv").

Order:
  --order number        (default) by the checkpoint number in each file name: the last run of digits
                        once the extension is removed (run3-epoch-12.csv → 12), so 2 comes before 10.
                        A name without digits, or two files with the same number, is an error.
  --order time          by modification time, oldest first
Statistics:
  --bootstrap N         bootstrap resamples for each checkpoint's interval (default ${DEFAULT_TREND_SETTINGS.bootstrap}; 0 = none)
  --seed S              seed of the bootstrap (default ${DEFAULT_TREND_SETTINGS.seed})
  --top N               how many of the worst queries to list (default ${DEFAULT_TREND_SETTINGS.top})
Output:
  --format F            table (default) | json | markdown | csv (one row per checkpoint)
${conventionHelp}
Checkpoints scoring different query sets are reported (counts and examples per checkpoint), never
intersected: each mean is over its own checkpoint's queries. ERR's highest grade, unless given, is
the first checkpoint's. Checkpoints are scored several at a time (this thread and checkpoint workers,
one per core, up to 4, fewer when the dumps are large), keeping only their per-query values;
--threads 1 scores them one by one on this thread.
Exit status: 0 done, 2 bad input.
`;

const trendOptions = {
  ...conventionOptions,
  order: { type: 'string' },
  bootstrap: { type: 'string' },
  seed: { type: 'string' },
  format: { type: 'string' },
  top: { type: 'string' },
  help: { type: 'boolean', short: 'h' },
} as const;

export async function runTrend(argv: string[], io: CliIO): Promise<number> {
  const { values, positionals } = parseCommandArgs(argv, trendOptions);
  if (values.help) {
    io.out(trendUsage);
    return 0;
  }
  if (positionals.length === 0) throw new UsageError('trend needs a folder, files or a pattern naming the checkpoint dumps');
  const format = (values.format ?? 'table') as TrendFormat;
  if (!TREND_FORMATS.includes(format)) throw new InputError(`one of ${TREND_FORMATS.join(', ')}`, '--format', undefined, values.format);
  const order = (values.order ?? 'number') as SeriesOrder;
  if (order !== 'number' && order !== 'time') throw new InputError('number or time', '--order', undefined, values.order);
  const bootstrap = wholeNumber('--bootstrap', values.bootstrap, DEFAULT_TREND_SETTINGS.bootstrap, 0, 10_000_000);
  const seed = wholeNumber('--seed', values.seed, DEFAULT_TREND_SETTINGS.seed, 0, 0xffffffff);
  const top = wholeNumber('--top', values.top, DEFAULT_TREND_SETTINGS.top, 0, Number.MAX_SAFE_INTEGER);
  const setup = scoringSetupFrom(values, (p) => resolve(io.cwd, p));
  if (values['missing-queries'] !== undefined && setup.read.judgments === undefined) {
    throw new InputError('--judgments FILE to go with it', '--missing-queries', undefined, values['missing-queries']);
  }

  const files = await seriesFiles(positionals, io.cwd);
  const series = orderSeries(files, order);
  if (series.length < 2) throw new UsageError(`trend needs at least two checkpoints; found ${series.length}`);
  const builder = new TrendBuilder(setup.metrics, { bootstrap, seed, top });
  const progress = io.isTTY ? progressLine(io, `${series.length} checkpoints`) : undefined;
  let conventions = setup.conventions;
  // After a failure no lane starts another checkpoint.
  const stop = new AbortController();
  try {
    const scored = await scoreSeries({
      signal: stop.signal,
      paths: series.map((c) => c.path),
      read: () => setup.read,
      metrics: setup.metrics,
      conventions,
      bootstrap: { resamples: bootstrap, seed },
      ...(setup.read.threads === 1 ? { lanes: 1 } : {}),
    });
    conventions = scored.conventions;
    for (let i = 0; i < series.length; i++) {
      const checkpoint = await scored.results[i]!;
      await builder.add(series[i]!.name, series[i]!.position, checkpoint.columns, checkpoint.intervals);
      progress?.scoring((i + 1) / series.length);
    }
  } catch (error) {
    stop.abort();
    throw error;
  } finally {
    progress?.done();
  }
  const trend = builder.finish();
  const orderRule = order === 'number' ? 'ordered by the checkpoint number in each file name' : 'ordered by modification time, oldest first';
  io.out(
    formatTrend(format, {
      trend,
      conventions,
      orderRule,
      methodNotes: [
        `Each checkpoint's mean is over its own queries (queries skipped under the no-relevant policy left out).`,
        `95% interval: percentile bootstrap of each checkpoint's mean, ${bootstrap} resamples, seed ${seed}.`,
        `Peak: the checkpoint with the highest mean (the earliest on equal means).`,
        `First to last: last − first per query, over queries scored at both; peak to last: last − the query's highest earlier value.`,
      ],
    }),
  );
  return 0;
}

/** Expands folders and name patterns; a file named twice is an error, not a silent merge. */
async function seriesFiles(arguments_: readonly string[], cwd: string): Promise<SeriesFile[]> {
  const found: SeriesFile[] = [];
  const seen = new Map<string, string>();
  const add = async (path: string, name: string) => {
    const earlier = seen.get(path);
    if (earlier !== undefined) throw new InputError(`each checkpoint once (also named as ${JSON.stringify(earlier)})`, name);
    seen.set(path, name);
    found.push({ path, name, modifiedMs: (await stat(path)).mtimeMs });
  };
  for (const argument of arguments_) {
    const path = resolve(cwd, argument);
    if (/[*?]/.test(basename(argument))) {
      const folder = dirname(path);
      const names = (await readdir(folder)).filter((n) => nameMatches(basename(argument), n)).sort();
      if (names.length === 0) throw new InputError('a pattern matching at least one file', argument);
      for (const n of names) await add(join(folder, n), relative(cwd, join(folder, n)) || n);
      continue;
    }
    const info = await stat(path);
    if (info.isDirectory()) {
      const names = (await readdir(path, { withFileTypes: true })).filter((e) => e.isFile() && looksLikeDump(e.name)).map((e) => e.name).sort();
      if (names.length === 0) throw new InputError('a folder holding dump files (.csv .tsv .jsonl .json .run .parquet)', argument);
      for (const n of names) await add(join(path, n), relative(cwd, join(path, n)) || n);
    } else await add(path, argument);
  }
  return found;
}
