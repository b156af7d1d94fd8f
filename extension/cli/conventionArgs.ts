/**
 * Options shared by every command that reads a dump and scores it (`eval`, `compare`): where the
 * data is, how to read it, which metrics, and under which conventions. One definition so both
 * commands spell and validate them the same way.
 */
import { parseArgs, type ParseArgsConfig } from 'node:util';
import { InputError } from '../engine/errors';
import { DEFAULT_CONVENTIONS, type Conventions } from '../engine/metrics/conventions';
import { DEFAULT_METRICS, metricSyntax, type MetricSpec } from '../engine/metrics/registry';
import { DEFAULT_CONVENTION_SETTINGS } from '../presentation/defaults';

type ParseArgsOptionsConfig = NonNullable<ParseArgsConfig['options']>;
import type { DumpFormat } from '../engine/model/dump';
import { parseColumnRoles, type ReadOptions } from '../engine/readers/index';
import type { SideTableFiles } from '../engine/tables/join';
import { parseGain, parseMetricList, parseNoRelevant, parseTies } from '../engine/metrics/parse';

/**
 * node:util parseArgs, except that a value starting with a dash is taken as the option's value
 * ("--permutations -5" reaches the option's own check and its message, instead of the parser's
 * "ambiguous argument"). Only string options take values, so a following "-5" can mean nothing else.
 */
export function parseCommandArgs<T extends ParseArgsOptionsConfig>(argv: readonly string[], options: T) {
  const joined: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i]!;
    const name = arg.startsWith('--') && !arg.includes('=') ? arg.slice(2) : undefined;
    const next = argv[i + 1];
    if (name !== undefined && options[name]?.type === 'string' && next !== undefined && next.startsWith('-') && next !== '--') {
      joined.push(`${arg}=${next}`);
      i++;
    } else joined.push(arg);
  }
  return parseArgs({ args: joined, options, allowPositionals: true, strict: true });
}

/** node:util parseArgs option definitions; spread them into a command's own table. */
export const conventionOptions = {
  judgments: { type: 'string' },
  queries: { type: 'string' },
  items: { type: 'string' },
  'judgments-columns': { type: 'string' },
  'missing-queries': { type: 'string' },
  scores: { type: 'string' },
  columns: { type: 'string' },
  'input-format': { type: 'string' },
  metrics: { type: 'string' },
  gain: { type: 'string' },
  ties: { type: 'string' },
  'no-relevant': { type: 'string' },
  'relevant-from': { type: 'string' },
  'max-grade': { type: 'string' },
  'rbp-persistence': { type: 'string' },
  threads: { type: 'string' },
} as const;

/** The parsed values of `conventionOptions` (every one optional, all strings). */
export type ConventionValues = { readonly [K in keyof typeof conventionOptions]?: string | undefined };

/** Help text lines for the shared options, aligned for the usage screen. */
export const conventionHelp = `Input:
  --input-format F      csv | tsv | jsonl | run | sparse | parquet (default: from the content and name)
  --columns ROLES       which column plays which role, e.g. query=sid,item=pid,label=grade,score=p
  --judgments FILE      graded judgments for any format: qrels lines (query 0 item grade) or a CSV, TSV,
                        JSON Lines or Parquet table naming query, item and grade; they replace any labels
                        in the dump, and judged items the run never retrieved count in the ideal ranking
  --judgments-columns ROLES  column names in a tabular judgments file, e.g. query=sid,item=pid,label=grade
  --missing-queries M   judged queries with no row in the run: skip (default) | zero (0 on every metric,
                        as evaluation campaigns count them)
  --scores FILE         one score per line, for sparse feature lines
  --queries FILE        query id -> text, segments (other columns) and an optional weight column
  --items FILE          item id -> title and attributes, shown in --query detail and JSON
  --threads N           threads for reading large text files and scoring large dumps (default: from the size)
Metrics and conventions:
  --metrics LIST        comma-separated, first = headline; default ${DEFAULT_METRICS}
                        keys: ${metricSyntax()}
  --gain G              exponential (2^g-1) | linear (g) | map:0=0,1=1,2=3,3=7 (default ${DEFAULT_CONVENTION_SETTINGS.gain})
  --ties T              average | pessimistic | optimistic | file-order (default ${DEFAULT_CONVENTION_SETTINGS.ties})
  --no-relevant P       queries with nothing relevant: skip | zero | one (default ${DEFAULT_CONVENTION_SETTINGS.noRelevant})
  --relevant-from N     a grade >= N counts as relevant (default ${DEFAULT_CONVENTION_SETTINGS.relevantFrom})
  --max-grade N         highest grade for ERR (default: highest grade in the data)
  --rbp-persistence P   RBP persistence, 0 < P < 1 (default ${DEFAULT_CONVENTION_SETTINGS.rbpPersistence})
`;

const INPUT_FORMATS: readonly DumpFormat[] = ['csv', 'tsv', 'jsonl', 'run', 'sparse', 'parquet'];
/** Earlier spellings still read, so existing scripts keep working; not listed in help. */
const FORMAT_ALIASES: Readonly<Record<string, DumpFormat>> = { svmlight: 'sparse' };
const MISSING_QUERIES = ['skip', 'zero'] as const;

/** What to pass to the reader besides the path (signal and progress are added by the caller). */
export type DumpReadRequest = Omit<ReadOptions, 'signal' | 'onProgress'>;

export interface ScoringSetup {
  readonly read: DumpReadRequest;
  readonly metrics: MetricSpec[];
  readonly conventions: Conventions;
  /** Queries and items tables to join to each dump read. */
  readonly tables: SideTableFiles;
}

/** Validates the shared options; any bad value is an InputError naming the option. */
export function scoringSetupFrom(values: ConventionValues, resolvePath: (p: string) => string = (p) => p): ScoringSetup {
  const read: DumpReadRequest = {};
  Object.assign(read, readRequestFrom(values, '', resolvePath));
  const missingQueries = values['missing-queries'] === undefined ? undefined : oneOf('--missing-queries', values['missing-queries'], MISSING_QUERIES);
  if (read.judgmentsColumns !== undefined && read.judgments === undefined) {
    throw new InputError('--judgments FILE to go with it', '--judgments-columns', undefined, values['judgments-columns']);
  }
  const tables: SideTableFiles = {
    ...(values.queries !== undefined ? { queries: resolvePath(values.queries) } : {}),
    ...(values.items !== undefined ? { items: resolvePath(values.items) } : {}),
  };
  if (values.threads !== undefined) read.threads = integerIn('--threads', values.threads, 1, 64);

  const metrics = withOptionName('--metrics', () => parseMetricList(values.metrics ?? DEFAULT_METRICS));

  const conventions: Conventions = {
    gain: values.gain === undefined ? DEFAULT_CONVENTIONS.gain : withOptionName('--gain', () => parseGain(values.gain!)),
    ties: values.ties === undefined ? DEFAULT_CONVENTIONS.ties : withOptionName('--ties', () => parseTies(values.ties!)),
    noRelevant:
      values['no-relevant'] === undefined
        ? DEFAULT_CONVENTIONS.noRelevant
        : withOptionName('--no-relevant', () => parseNoRelevant(values['no-relevant']!)),
    relevantFrom:
      values['relevant-from'] === undefined ? DEFAULT_CONVENTIONS.relevantFrom : finiteNumber('--relevant-from', values['relevant-from']),
    rbpPersistence:
      values['rbp-persistence'] === undefined ? DEFAULT_CONVENTIONS.rbpPersistence : persistence(values['rbp-persistence']),
    ...(values['max-grade'] !== undefined ? { maxGrade: positiveNumber('--max-grade', values['max-grade']) } : {}),
    ...(missingQueries !== undefined || read.judgments !== undefined ? { missingQueries: missingQueries ?? 'skip' } : {}),
  };
  if (conventions.missingQueries !== undefined) read.missingQueries = conventions.missingQueries;
  return { read, metrics, conventions, tables };
}

/** The per-file input options, spelled `--NAME` + `suffix` (compare's `-a` / `-b` forms use a suffix). */
export interface InputValues {
  readonly [name: string]: string | boolean | undefined;
}

/**
 * Reads `--input-format`, `--columns`, `--judgments`, `--judgments-columns` and `--scores` (each with the
 * suffix appended to its name). An option given without the file it belongs to is an error.
 */
export function readRequestFrom(values: InputValues, suffix: string, resolvePath: (p: string) => string): DumpReadRequest {
  const read: DumpReadRequest = {};
  const text = (name: string) => values[`${name}${suffix}`] as string | undefined;
  const format = text('input-format');
  if (format !== undefined) read.format = FORMAT_ALIASES[format] ?? oneOf(`--input-format${suffix}`, format, INPUT_FORMATS);
  const columns = text('columns');
  if (columns !== undefined) read.columns = withOptionName(`--columns${suffix}`, () => parseColumnRoles(columns));
  const judgments = text('judgments');
  if (judgments !== undefined) read.judgments = resolvePath(judgments);
  const judgmentsColumns = text('judgments-columns');
  if (judgmentsColumns !== undefined) {
    read.judgmentsColumns = withOptionName(`--judgments-columns${suffix}`, () => parseColumnRoles(judgmentsColumns));
  }
  const scores = text('scores');
  if (scores !== undefined) read.scores = resolvePath(scores);
  return read;
}

function oneOf<T extends string>(option: string, text: string, allowed: readonly T[]): T {
  if ((allowed as readonly string[]).includes(text)) return text as T;
  throw new InputError(`one of ${allowed.join(', ')}`, option, undefined, text);
}

function finiteNumber(option: string, text: string): number {
  const n = text.trim() === '' ? NaN : Number(text);
  if (!Number.isFinite(n)) throw new InputError('a number', option, undefined, text);
  return n;
}

function positiveNumber(option: string, text: string): number {
  const n = finiteNumber(option, text);
  if (n <= 0) throw new InputError('a number above 0', option, undefined, text);
  return n;
}

function integerIn(option: string, text: string, min: number, max: number): number {
  const n = finiteNumber(option, text);
  if (!Number.isInteger(n) || n < min || n > max) {
    throw new InputError(`a whole number from ${min} to ${max}`, option, undefined, text);
  }
  return n;
}

function persistence(text: string): number {
  const p = finiteNumber('--rbp-persistence', text);
  if (!(p > 0 && p < 1)) throw new InputError('a number strictly between 0 and 1', '--rbp-persistence', undefined, text);
  return p;
}

/**
 * Re-labels a parser's InputError so the user sees which option it came from; the option stands
 * where a file name would ("--ties: expected …").
 */
function withOptionName<T>(option: string, parse: () => T): T {
  try {
    return parse();
  } catch (e) {
    if (e instanceof InputError && e.file === undefined) throw new InputError(e.expected, option, undefined, e.found);
    throw e;
  }
}
