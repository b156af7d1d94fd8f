/**
 * `gainline compare A B`: score two runs of the same query set under the same conventions, pair them
 * query by query and report the paired statistics. With --fail-if-worse it doubles as a CI gate.
 */
import { stat } from 'node:fs/promises';
import { resolve } from 'node:path';
import { DEFAULT_COMPARE_OPTIONS } from '../engine/compare/compare';
import { compareRuns } from '../engine/index';
import { withSideTables } from '../engine/tables/join';
import { InputError } from '../engine/errors';
import { formatDelta, formatP, formatCountInText } from '../presentation/numbers';
import { COMPARE_FORMATS, formatComparison, type CompareFormat } from '../engine/report/compareReport';
import { conventionHelp, conventionOptions, parseCommandArgs, readRequestFrom, scoringSetupFrom } from './conventionArgs';
import { UsageError } from './evalCommand';
import type { CliIO } from './io';
import { progressLine } from './progress';
import { compareCandidates } from './candidatesCommand';
import { readRuns } from './readRuns';

export const compareUsage = `Usage: gainline compare A B [options]
       gainline compare BASELINE CANDIDATE1 CANDIDATE2 … [options]

Scores two runs (for example yesterday's model as A, today's as B) on the queries they share, under
the same conventions, and tests the per-query differences B − A: mean difference with a bootstrap
interval, paired t-test, Wilcoxon signed-rank and sign-flip randomization p-values (with Holm and
Benjamini–Hochberg adjustments across metrics), wins / ties / losses, and the queries that moved most.
Queries found in one run only are counted and left out.

With three or more runs the first is the baseline and every other run a candidate. Each candidate is
compared with the baseline exactly as "compare BASELINE CANDIDATE" would (same options, same seed, the
queries that pair shares; queries only in the baseline or only in a candidate are counted per candidate,
with examples, and left out of that candidate's tests). Holm and Benjamini–Hochberg adjust the p-values
across all candidates × metrics, separately per test. Candidates are ranked by the mean Δ of the first
metric, highest first (equal means keep the order given).

Each run may be read its own way: an input option followed by -a or -b applies to that run only and
replaces the plain option for it, e.g. two formats (--input-format-a run --input-format-b parquet) or
two judgments files (--judgments-a old.qrels --judgments-b new.qrels). With one --judgments file both
runs are scored against the same judgments, and --missing-queries zero gives both runs every judged query.
With several candidates, -a applies to the baseline and -b to every candidate.

Per run:
  --input-format-a F, --input-format-b F, --columns-a ROLES, --columns-b ROLES, --judgments-a FILE,
  --judgments-b FILE, --judgments-columns-a ROLES, --judgments-columns-b ROLES, --scores-a FILE, --scores-b FILE

Statistics:
  --permutations N      random sign patterns for the randomization test (default ${DEFAULT_COMPARE_OPTIONS.permutations})
  --bootstrap N         bootstrap resamples for the 95% interval (default ${DEFAULT_COMPARE_OPTIONS.bootstrap}; 0 = none)
  --seed S              seed of both resampling procedures (default ${DEFAULT_COMPARE_OPTIONS.seed})
  --tie-tolerance X     |B − A| <= X counts as a tie (default ${DEFAULT_COMPARE_OPTIONS.tieTolerance})
  --fail-if-worse ALPHA exit 1 when B is worse than A on the first metric with randomization p <= ALPHA;
                        with several candidates: when any candidate is worse than the baseline on the
                        first metric with Holm-adjusted randomization p <= ALPHA
Output:
  --format F            table (default) | json | markdown | csv (one row per run × metric)
  --top N               how many of the biggest drops and gains to list (default 10; two runs only)
${conventionHelp}
Exit status: 0 done (and not worse, with --fail-if-worse), 1 B (or any candidate) significantly worse,
2 bad input.
`;

/** The input options that compare also takes per run, with -a / -b appended. */
const PER_RUN = ['input-format', 'columns', 'judgments', 'judgments-columns', 'scores'] as const;
const perRunOptions = Object.fromEntries(
  PER_RUN.flatMap((name) => [[`${name}-a`, { type: 'string' }], [`${name}-b`, { type: 'string' }]]),
) as Record<`${(typeof PER_RUN)[number]}-${'a' | 'b'}`, { type: 'string' }>;

const compareOptions = {
  ...conventionOptions,
  ...perRunOptions,
  permutations: { type: 'string' },
  bootstrap: { type: 'string' },
  seed: { type: 'string' },
  'tie-tolerance': { type: 'string' },
  'fail-if-worse': { type: 'string' },
  format: { type: 'string' },
  top: { type: 'string' },
  help: { type: 'boolean', short: 'h' },
} as const;

const PROGRESS_FROM_BYTES = 32 * 1024 * 1024;

export async function runCompare(argv: string[], io: CliIO): Promise<number> {
  const { values, positionals } = parseCommandArgs(argv, compareOptions);
  if (values.help) {
    io.out(compareUsage);
    return 0;
  }
  if (positionals.length < 2) {
    throw new UsageError(`compare needs two runs, A and B, or a baseline and candidates; got ${positionals.length} file${positionals.length === 1 ? '' : 's'}`);
  }
  const format = (values.format ?? 'table') as CompareFormat;
  if (!COMPARE_FORMATS.includes(format)) {
    throw new InputError(`one of ${COMPARE_FORMATS.join(', ')}`, '--format', undefined, values.format);
  }
  // Upper limits keep a typo (1e12) from running for days; the seed feeds a 32-bit generator.
  const permutations = wholeNumber('--permutations', values.permutations, DEFAULT_COMPARE_OPTIONS.permutations, 1, 100_000_000);
  const bootstrap = wholeNumber('--bootstrap', values.bootstrap, DEFAULT_COMPARE_OPTIONS.bootstrap, 0, 10_000_000);
  const seed = wholeNumber('--seed', values.seed, DEFAULT_COMPARE_OPTIONS.seed, 0, 0xffffffff);
  const top = wholeNumber('--top', values.top, 10, 0, Number.MAX_SAFE_INTEGER);
  const tieTolerance = numberAtLeastZero('--tie-tolerance', values['tie-tolerance'], DEFAULT_COMPARE_OPTIONS.tieTolerance);
  const alpha = values['fail-if-worse'] === undefined ? undefined : significance(values['fail-if-worse']);
  const resolvePath = (p: string) => resolve(io.cwd, p);
  const shared = scoringSetupFrom(values, resolvePath);
  const readA = { ...shared.read, ...readRequestFrom(values, '-a', resolvePath) };
  const readB = { ...shared.read, ...readRequestFrom(values, '-b', resolvePath) };
  for (const [read, side] of [[readA, '-a'], [readB, '-b']] as const) {
    if (read.judgmentsColumns !== undefined && read.judgments === undefined) {
      throw new InputError(`--judgments${side} or --judgments FILE to go with it`, `--judgments-columns${side}`);
    }
  }
  const judged = readA.judgments !== undefined || readB.judgments !== undefined;
  if (values['missing-queries'] !== undefined && !judged) {
    throw new InputError('--judgments FILE to go with it', '--missing-queries', undefined, values['missing-queries']);
  }
  const missingQueries = judged ? (shared.conventions.missingQueries ?? 'skip') : undefined;
  const conventions = missingQueries ? { ...shared.conventions, missingQueries } : shared.conventions;
  for (const read of [readA, readB]) if (read.judgments !== undefined) read.missingQueries = missingQueries;
  const setup = { ...shared, conventions };
  if (positionals.length > 2) {
    const statistics = { permutations, bootstrap, seed, tieTolerance };
    return compareCandidates(positionals, { setup, readBaseline: readA, readCandidate: readB, statistics, format, alpha }, io);
  }

  const [sourceA, sourceB] = positionals as [string, string];
  const pathA = resolve(io.cwd, sourceA);
  const pathB = resolve(io.cwd, sourceB);
  const sizeB = (await stat(pathB)).size;
  const large = (await stat(pathA)).size + sizeB >= PROGRESS_FROM_BYTES;
  const progress = io.isTTY && large ? progressLine(io, `${sourceA} vs ${sourceB}`) : undefined;
  try {
    const [runA, runB] = await readRuns(pathA, pathB, [readA, readB], { sizeB, onProgress: progress?.reading });
    // One queries table and one items table serve both runs (the same queries, the same catalogue).
    const [a, b] = [await withSideTables(runA, setup.tables), await withSideTables(runB, setup.tables)];
    const comparison = await compareRuns(a, b, setup.metrics, setup.conventions, {
      permutations,
      bootstrap,
      seed,
      tieTolerance,
      onProgress: progress?.scoring,
      ...(setup.read.threads !== undefined ? { threads: setup.read.threads } : {}),
    });
    progress?.done();
    io.out(formatComparison(format, { comparison, queryNamesA: a.queries, sourceA, sourceB }, { top }));
    if (alpha === undefined) return 0;
    const headline = comparison.byMetric[comparison.headline]!;
    const worse = headline.summary.meanDifference < 0 && headline.randomization.p <= alpha;
    if (worse) {
      io.err(
        `gainline compare: B is worse than A on ${headline.key} (Δ ${formatDelta(headline.summary.meanDifference)}, ` +
          `randomization p ${formatP(headline.randomization.p)} <= ${alpha})\n`,
      );
    }
    return worse ? 1 : 0;
  } finally {
    progress?.done();
  }
}

export function wholeNumber(option: string, text: string | undefined, fallback: number, min: number, max: number): number {
  if (text === undefined) return fallback;
  const n = text.trim() === '' ? Number.NaN : Number(text);
  if (!Number.isSafeInteger(n) || n < min || n > max) {
    const range = max === Number.MAX_SAFE_INTEGER ? `${min} or more` : `from ${min} to ${formatCountInText(max)}`;
    throw new InputError(`a whole number ${range}`, option, undefined, text);
  }
  return n;
}

function numberAtLeastZero(option: string, text: string | undefined, fallback: number): number {
  if (text === undefined) return fallback;
  const n = text.trim() === '' ? Number.NaN : Number(text);
  if (!(Number.isFinite(n) && n >= 0)) throw new InputError('a number, 0 or more', option, undefined, text);
  return n;
}

function significance(text: string): number {
  const n = text.trim() === '' ? Number.NaN : Number(text);
  if (!(n > 0 && n < 1)) throw new InputError('a significance level strictly between 0 and 1', '--fail-if-worse', undefined, text);
  return n;
}
