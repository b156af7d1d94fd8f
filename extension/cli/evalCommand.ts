/**
 * `gainline eval DUMP`: read one prediction dump, score every query, print a report.
 */
import { stat } from 'node:fs/promises';
import { resolve } from 'node:path';
import { InputError } from '../engine/errors';
import { CoreMeter } from '../engine/evaluate/coreMeter';
import { evaluateInParallel } from '../engine/evaluate/parallelEvaluate';
import { readDump } from '../engine/readers/index';
import { formatReport, REPORT_FORMATS, type ReportFormat } from '../engine/report/index';
import { conventionHelp, conventionOptions, parseCommandArgs, scoringSetupFrom } from './conventionArgs';
import type { CliIO } from './io';
import { progressLine } from './progress';

export const evalUsage = `Usage: gainline eval DUMP [options]

Scores every query of one prediction dump and prints the means, the conventions used, what was
skipped or assumed, how the headline metric moves under other conventions, and the worst queries.

Output:
  --format F            table (default) | json | csv | markdown
  --worst N             how many of the worst queries to list (default 10; table and markdown)
  --timings             print how long reading, scoring and writing the report took (standard error)
${conventionHelp}`;

const evalOptions = {
  ...conventionOptions,
  format: { type: 'string' },
  worst: { type: 'string' },
  timings: { type: 'boolean' },
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
  const path = resolve(io.cwd, source);

  const size = (await stat(path)).size;
  const progress = io.isTTY && size >= PROGRESS_FROM_BYTES ? progressLine(io, source) : undefined;
  const started = performance.now();
  // Measures what other programs do during the read, to decide how many threads may score.
  const meter = new CoreMeter();
  try {
    const dump = await readDump(path, { ...setup.read, onProgress: progress?.reading });
    const read = performance.now();
    // CSV and Markdown do not show the sensitivity rows; skipping them saves a third of the scoring time.
    const sensitivity = format === 'table' || format === 'json';
    const evaluation = await evaluateInParallel(dump, setup.metrics, setup.conventions, {
      onProgress: progress?.scoring,
      sensitivity,
      threads: setup.read.threads,
      otherBusyCores: meter.otherBusyCores(),
      ...(format === 'json' ? { renderJsonRecords: dump.queries } : {}),
    });
    const scored = performance.now();
    progress?.done();
    io.out(formatReport(format, { evaluation, queryNames: dump.queries, source, rowCount: dump.rowCount }, { worst }));
    if (values.timings) {
      const s = (ms: number) => (ms / 1000).toFixed(3);
      io.err(`timings: read ${s(read - started)} s, score ${s(scored - read)} s, report ${s(performance.now() - scored)} s (${dump.rowCount} rows)\n`);
    }
  } finally {
    progress?.done();
  }
  return 0;
}

/** Wrong command-line usage: reported on one line with a pointer to help, exit 2. */
export class UsageError extends Error {
  override readonly name = 'UsageError';
}
