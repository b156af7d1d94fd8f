/**
 * `gainline eval DUMP`: read one prediction dump, score every query, print a report.
 */
import { stat } from 'node:fs/promises';
import { resolve } from 'node:path';
import { InputError } from '../engine/errors';
import { evaluateDump, READING_MODES, segmentRowsOf, streamOrRead, type ReadingMode, type StreamPartial } from '../engine/index';
import { partialHeadlineText, type PartialHeadline } from '../presentation/partialText';
import { formatReport, REPORT_FORMATS, writeReport, type ReportFormat } from '../engine/report/index';
import { queryFacts, streamedQueryFacts } from '../engine/tables/queryFacts';
import { withSideTables } from '../engine/tables/join';
import { conventionHelp, conventionOptions, parseCommandArgs, scoringSetupFrom, type ScoringSetup } from './conventionArgs';
import { detailJson, detailOf, detailText, diagnosticsReport, findQuery, segmentReport, worstOrder } from './evalViews';
import { renameInputError, spoolStdin, STDIN_NAME } from './stdin';
import type { CliIO } from './io';
import { largePagesOn } from './largePages';
import { progressLine } from './progress';
import { chooseEngine, evaluateElsewhere } from './sqlEngines';

export const evalUsage = `Usage: gainline eval DUMP [options]

Scores every query of one prediction dump and prints the means, the conventions used, what was
skipped or assumed, how the headline metric moves under other conventions, and the worst queries.
DUMP - reads the dump from standard input (the format, and gzip, found from the content).

Output:
  --format F            table (default) | json | csv | markdown
  --worst N             how many of the worst queries to list (default 10; table and markdown)
  --sort KEY            order of the worst list: a metric of --metrics (lowest first, default the
                        first), loss-share (share of the first metric's loss) or inversion-cost
  --query Q             one query in detail instead of the report: values, predicted against ideal
                        order with each position's contribution, inverted pairs (table or json)
  --segment COL         the means per value of one segment column instead of the report (table or json)
  --diagnostics         instead of the report: the score distribution per grade (do the grades separate?)
                        and each position's share of the ideal DCG, model against ideal (table or json)
  --timings             print how long reading, scoring and writing the report took (standard error)
  --reading R           auto (default) | stream | memory: stream scores a CSV/TSV file whose rows are
                        grouped by query block by block without keeping its rows (auto: from 1 GiB),
                        joining --judgments block by block and --queries once every query is
                        known; a file that turns out not grouped, or with a quoted newline where
                        it is cut into blocks, is read into memory instead, as is one with
                        --items, --query or --diagnostics
Where the numbers are computed:
  --engine E            local (default) | duckdb: DuckDB embedded computes the per-query table from a
                        CSV, TSV or Parquet file, or a folder of Parquet parts, in place (needs the npm
                        package @duckdb/node-api next to gainline)
  --memory-limit SIZE   DuckDB's memory cap, e.g. 2GB; past it DuckDB spills to a temporary folder
  --order-column NAME   ClickHouse: the column giving the rows' order (repeated rows, file-order ties)
  A DUMP of the form clickhouse://HOST:PORT/DATABASE.TABLE is computed on that ClickHouse server (HTTP
  interface), each shard of a Distributed table computing its own queries. The user and password come
  from GAINLINE_CLICKHOUSE_USER and GAINLINE_CLICKHOUSE_PASSWORD; they are never printed.
  The SQL engines compute every metric but tau, and ERR only without average ties (naming either in
  --metrics is refused; without --metrics they compute the rest of the default list, and say so). The
  convention sensitivity rows (table and json formats) cost one more per-query table in SQL for each
  other gain and tie convention. In the editor: "Gainline: Open Through DuckDB" and "Gainline: Open a
  ClickHouse Table..." show the same per-query table (settings gainline.duckdb.*, gainline.clickhouse.*).
${conventionHelp}`;

const evalOptions = {
  ...conventionOptions,
  format: { type: 'string' },
  worst: { type: 'string' },
  sort: { type: 'string' },
  query: { type: 'string' },
  segment: { type: 'string' },
  diagnostics: { type: 'boolean' },
  timings: { type: 'boolean' },
  reading: { type: 'string' },
  engine: { type: 'string' },
  'memory-limit': { type: 'string' },
  'order-column': { type: 'string' },
  help: { type: 'boolean', short: 'h' },
} as const;

/** Files at least this big get a progress line (when standard error is a terminal). */
const PROGRESS_FROM_BYTES = 32 * 1024 * 1024;

export async function runEval(argv: string[], io: CliIO): Promise<number> {
  const { values, positionals } = parseCommandArgs(argv, evalOptions);
  if (values.help) {
    io.out(evalUsage);
    return 0;
  }
  if (positionals.length !== 1) {
    throw new UsageError(positionals.length === 0 ? 'eval needs the dump file to read' : `eval reads one dump; got ${positionals.length} files`);
  }
  const source = positionals[0]!;
  const format = (values.format ?? 'table') as ReportFormat;
  if (!REPORT_FORMATS.includes(format)) {
    throw new InputError(`one of ${REPORT_FORMATS.join(', ')}`, '--format', undefined, values.format);
  }
  const worst = values.worst === undefined ? 10 : Number(values.worst);
  if (!Number.isSafeInteger(worst) || worst < 0) {
    throw new InputError('a whole number of queries, 0 or more', '--worst', undefined, values.worst);
  }
  const setup = scoringSetupFrom(values, (p) => resolve(io.cwd, p));
  if (values['missing-queries'] !== undefined && setup.read.judgments === undefined) {
    throw new InputError('--judgments FILE to go with it', '--missing-queries', undefined, values['missing-queries']);
  }
  const views = [values.query !== undefined && '--query', values.segment !== undefined && '--segment', values.diagnostics && '--diagnostics'].filter(Boolean);
  if (views.length > 1) throw new UsageError(`${views.join(' and ')} each replace the report; give one of them`);
  if (views.length > 0 && format !== 'table' && format !== 'json') {
    throw new InputError(`table or json with ${views[0]}`, '--format', undefined, format);
  }
  const reading = (values.reading ?? 'auto') as ReadingMode;
  if (!READING_MODES.includes(reading)) throw new InputError(`one of ${READING_MODES.join(', ')}`, '--reading', undefined, values.reading);
  const engine = chooseEngine(source, values);
  const local = [setup.tables.queries !== undefined && '--queries', setup.tables.items !== undefined && '--items', values.sort !== undefined && '--sort', ...views]
    .filter(Boolean);
  if (engine !== 'local' && local.length > 0) {
    // The SQL engines compute the per-query table where the data is; side tables and these views need the local engine.
    throw new InputError(`--engine local with ${local.join(' and ')}`, '--engine', undefined, engine);
  }
  if (engine !== 'local') {
    const started = performance.now();
    // As with the local engine, only the formats that show the sensitivity rows pay for their tables.
    const result = await evaluateElsewhere(engine, source, resolve(io.cwd, source), setup, values, format === 'table' || format === 'json');
    const scored = performance.now();
    io.out(formatReport(format, { ...result, source }, { worst }));
    if (values.timings) {
      const s = (ms: number) => (ms / 1000).toFixed(3);
      io.err(`timings: ${engine} ${s(scored - started)} s, report ${s(performance.now() - scored)} s (${result.rowCount} rows)\n`);
    }
    return 0;
  }
  const spooled = source === STDIN_NAME ? await spoolStdin(io) : undefined;
  try {
    return await evalFile(spooled?.path ?? resolve(io.cwd, source), source, format, worst, setup, { ...values, reading }, io);
  } catch (e) {
    throw spooled ? renameInputError(e, spooled) : e;
  } finally {
    await spooled?.remove();
  }
}

async function evalFile(path: string, source: string, format: ReportFormat, worst: number, setup: ScoringSetup,
  values: { sort?: string | undefined; query?: string | undefined; segment?: string | undefined; diagnostics?: boolean | undefined; timings?: boolean | undefined;
    reading: ReadingMode },
  io: CliIO): Promise<number> {
  const size = (await stat(path)).size;
  const progress = io.isTTY && size >= PROGRESS_FROM_BYTES ? progressLine(io, source) : undefined;
  const started = performance.now();
  const s = (ms: number) => (ms / 1000).toFixed(3);
  // CSV and Markdown do not show the sensitivity rows; skipping them saves a third of the scoring time.
  const sensitivity = format === 'table' || format === 'json';
  try {
    // The views that read rows, and an items table (joined by item), need the dump in memory; the report and
    // the segment means need only the per-query table (with each query's segment values), and a queries
    // table joins to that.
    const rowsNeeded = values.query !== undefined ? '--query reads the rows of its query'
      : values.diagnostics ? '--diagnostics reads every row'
      : setup.tables.items !== undefined ? 'an items table (--items) joins by item, which needs the rows' : undefined;
    // Without those, nothing goes back to a row's bytes: a large file's read keeps no row offsets. Segment
    // columns are read only for --segment and for a queries table's facts (the other views show none).
    const lean = rowsNeeded === undefined;
    const segmentsShown = values.segment !== undefined || setup.tables.queries !== undefined;
    const readOptions = { ...setup.read, onProgress: progress?.reading, ...(lean ? { rowOffsets: false } : {}),
      ...(lean && !segmentsShown ? { columns: { ...setup.read.columns, others: 'skipped' as const } } : {}) };
    const outcome = await streamOrRead(path, readOptions, setup.metrics, setup.conventions,
      { reading: rowsNeeded !== undefined ? 'memory' : values.reading, sensitivity, segments: values.segment !== undefined,
        ...(setup.tables.queries !== undefined ? { queriesTable: { path: setup.tables.queries } } : {}),
        ...(progress ? { onPartial: (p: StreamPartial) => progress.partial(p.bytesRead / p.totalBytes, partialHeadlineText(headlineOf(p))) } : {}) });
    if (outcome.kind === 'streamed') {
      const scored = performance.now();
      progress?.done();
      const { evaluation, dump } = outcome;
      if (values.segment !== undefined) io.out(segmentReport(segmentRowsOf(dump), evaluation, values.segment, format === 'json' ? 'json' : 'text'));
      else {
        const worstOrderBy = values.sort === undefined ? undefined : worstOrder(evaluation, values.sort, worst);
        // In pieces: the JSON records of a million queries are hundreds of MB as one string.
        const facts = streamedQueryFacts(dump);
        await writeReport(format, { evaluation, queryNames: dump.queries, source, rowCount: dump.rowCount, ...(facts ? { facts } : {}) },
          { worst, ...(worstOrderBy ? { worstOrder: worstOrderBy } : {}) }, io.out, setup.read.threads);
      }
      if (values.timings) {
        io.err(`timings: streamed read and score ${s(scored - started)} s, report ${s(performance.now() - scored)} s (${dump.rowCount} rows; ` +
          `${outcome.blocks} blocks on ${outcome.threads} threads)\n`);
      }
      return 0;
    }
    // A large file that was meant to stream says why it did not; asking for a stream or for timings always says.
    if ((outcome.tried && values.reading === 'auto') || (values.timings && (outcome.tried || values.reading === 'stream'))) {
      io.err(`reading: in memory, since ${rowsNeeded ?? outcome.why}\n`);
    }
    const dump = await withSideTables(outcome.dump, setup.tables);
    const read = performance.now();
    if (values.query !== undefined) {
      const detail = detailOf(dump, findQuery(dump, values.query), setup.metrics, setup.conventions);
      io.out(format === 'json' ? detailJson(dump, detail, source) : detailText(dump, detail, source));
      return 0;
    }
    if (values.diagnostics) {
      io.out(diagnosticsReport(dump, setup.metrics, setup.conventions, format === 'json' ? 'json' : 'text', source));
      return 0;
    }
    const facts = queryFacts(dump);
    const evaluation = await evaluateDump(dump, setup.metrics, setup.conventions, {
      onProgress: progress?.scoring,
      sensitivity,
      threads: setup.read.threads,
    });
    const scored = performance.now();
    progress?.done();
    if (values.segment !== undefined) {
      io.out(segmentReport(dump, evaluation, values.segment, format === 'json' ? 'json' : 'text'));
      return 0;
    }
    const worstOrderBy = values.sort === undefined ? undefined : worstOrder(evaluation, values.sort, worst);
    const input = { evaluation, queryNames: dump.queries, source, rowCount: dump.rowCount, ...(facts ? { facts } : {}) };
    await writeReport(format, input, { worst, ...(worstOrderBy ? { worstOrder: worstOrderBy } : {}) }, io.out, setup.read.threads);
    if (values.timings) {
      io.err(`timings: read ${s(read - started)} s, score ${s(scored - read)} s, report ${s(performance.now() - scored)} s (${dump.rowCount} rows` +
        `${largePagesOn() ? '; large pages' : ''})\n`);
    }
  } finally {
    progress?.done();
  }
  return 0;
}

/** The first metric's mean so far, for the progress line while a dump streams in. */
function headlineOf(p: StreamPartial): PartialHeadline {
  const first = p.summary[0];
  return { key: first?.key ?? '', mean: first?.mean ?? NaN, queries: p.queries, rows: p.rows, bytesRead: p.bytesRead, totalBytes: p.totalBytes };
}

/** Wrong command-line usage: reported on one line with a pointer to help, exit 2. */
export class UsageError extends Error {
  override readonly name = 'UsageError';
}
