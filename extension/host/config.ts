/**
 * Every `gainline.*` setting, read once into one typed object. No `vscode` import: the caller injects
 * a getter (`vscode.workspace.getConfiguration('gainline').get`), so this is unit-tested in plain Node.
 * A bad value never stops the viewer: it falls back to the default and is reported in `problems`.
 */
import { DEFAULT_CONVENTIONS, type Conventions, type NoRelevantPolicy, type TieConvention } from '../engine/metrics/conventions';
import { parseGain, parseMetricList } from '../engine/metrics/parse';
import { describeConventions } from '../presentation/conventionsLine';
import { DEFAULT_COMPARE_SETTINGS, DEFAULT_CONVENTION_SETTINGS, DEFAULT_METRIC_KEYS, DEFAULT_READING_SETTINGS, DEFAULT_SERIES_SETTINGS } from '../presentation/defaults';
import type { CompareSettings, EvaluationSettings } from '../protocol/worker';
import { globToRegExp } from './glob';

/** Reads one setting below `gainline.`; returns undefined when unset. */
export type SettingGetter = (key: string) => unknown;

/** Column role → column name in the dump (query, item, label, score, rank). */
export type ColumnMapping = Readonly<Record<string, string>>;

/** Files read with a dump: labels, query facts, item facts. */
export interface SideFiles {
  readonly judgments?: string;
  readonly queries?: string;
  readonly items?: string;
}

const SIDE_FILE_KEYS = ['judgments', 'queries', 'items'] as const;

export interface GainlineConfig {
  /** The metric list, comma-separated as the engine parses it; the first is the headline. */
  readonly metrics: string;
  readonly conventions: Conventions;
  /** Glob on the file path → column mapping for dumps whose headers are not recognised. */
  readonly columnsByPattern: Readonly<Record<string, ColumnMapping>>;
  /** Glob on the file path → judgments, queries and items files (paths relative to the workspace folder). */
  readonly sideFilesByPattern: Readonly<Record<string, SideFiles>>;
  /** Judged queries a dump lacks, when its labels come from a judgments file: left out, or scored 0. */
  readonly missingQueries: 'skip' | 'zero';
  /** Which files the Ranked Lists view lists. */
  readonly dumpGlob: string;
  readonly dumpExclude: string;
  /** How the Runs view groups dumps into training series. */
  readonly series: {
    /** Globs on the workspace-relative path, each one series; files no pattern takes are grouped by folder. */
    readonly patterns: readonly string[];
    readonly order: 'number' | 'time';
  };
  readonly compare: {
    readonly permutations: number;
    readonly bootstrapResamples: number;
    readonly seed: number;
    readonly tieTolerance: number;
  };
  /** Plain CSV/TSV dumps of this many bytes or more are scored as they stream in (setting in megabytes). */
  readonly streamFromBytes: number;
  /** Views computed where the data lives (ClickHouse tables, files served through DuckDB). */
  readonly sql: SqlSettings;
  /** One sentence per setting that was ignored. */
  readonly problems: readonly string[];
}

export interface SqlSettings {
  readonly clickhouseUser?: string;
  /** The column giving a ClickHouse table's row order. */
  readonly clickhouseOrderColumn?: string;
  /** Column roles of ClickHouse tables whose names are not recognised. */
  readonly clickhouseColumns?: ColumnMapping;
  /** DuckDB's memory cap, e.g. "2GB". */
  readonly duckdbMemoryLimit?: string;
  /** Folder of an installed @duckdb/node-api (the extension ships no native modules). */
  readonly duckdbPackageFolder?: string;
}

/** The shared defaults (presentation/defaults.ts, also the CLI's) plus the editor's own file settings. */
export const CONFIG_DEFAULTS = {
  metrics: DEFAULT_METRIC_KEYS,
  gain: DEFAULT_CONVENTION_SETTINGS.gain,
  ties: DEFAULT_CONVENTION_SETTINGS.ties as TieConvention,
  noRelevant: DEFAULT_CONVENTION_SETTINGS.noRelevant as NoRelevantPolicy,
  missingQueries: 'skip' as 'skip' | 'zero',
  relevantFrom: DEFAULT_CONVENTION_SETTINGS.relevantFrom,
  rbpPersistence: DEFAULT_CONVENTION_SETTINGS.rbpPersistence,
  dumpGlob: '**/*.{csv,tsv,jsonl,parquet,run,gz}',
  dumpExclude: '**/node_modules/**',
  seriesPatterns: DEFAULT_SERIES_SETTINGS.patterns,
  seriesOrder: DEFAULT_SERIES_SETTINGS.order,
  permutations: DEFAULT_COMPARE_SETTINGS.permutations,
  bootstrapResamples: DEFAULT_COMPARE_SETTINGS.bootstrap,
  seed: DEFAULT_COMPARE_SETTINGS.seed,
  tieTolerance: DEFAULT_COMPARE_SETTINGS.tieTolerance,
  streamFromMegabytes: DEFAULT_READING_SETTINGS.streamFromMegabytes,
} as const;

const TIES: readonly TieConvention[] = ['average', 'pessimistic', 'optimistic', 'file-order'];
const POLICIES: readonly NoRelevantPolicy[] = ['skip', 'zero', 'one'];

/** Settings whose change means open views must be recomputed. */
export const RECOMPUTE_KEYS = [
  'metrics', 'cutoffs', 'gain', 'ties', 'noRelevant', 'missingQueries', 'relevantFrom', 'rbpPersistence', 'maxGrade', 'columnsByPattern',
  'sideFilesByPattern', 'clickhouse.user', 'clickhouse.orderColumn', 'clickhouse.columns', 'duckdb.memoryLimit', 'duckdb.packageFolder',
  'compare.permutations', 'compare.bootstrapResamples', 'compare.seed', 'compare.tieTolerance', 'reading.streamFromMegabytes',
] as const;

export function readConfig(get: SettingGetter): GainlineConfig {
  const problems: string[] = [];
  const reject = (key: string, expected: string, value: unknown): void => {
    problems.push(`gainline.${key}: expected ${expected}, found ${JSON.stringify(value)}; using the default`);
  };
  const number = (key: string, fallback: number, ok: (n: number) => boolean, expected: string): number => {
    const v = get(key);
    if (v === undefined || v === null) return fallback;
    if (typeof v === 'number' && Number.isFinite(v) && ok(v)) return v;
    reject(key, expected, v);
    return fallback;
  };
  const choice = <T extends string>(key: string, allowed: readonly T[], fallback: T): T => {
    const v = get(key);
    if (v === undefined || v === null) return fallback;
    if (typeof v === 'string' && (allowed as readonly string[]).includes(v)) return v as T;
    reject(key, `one of ${allowed.join(', ')}`, v);
    return fallback;
  };

  const metrics = readMetrics(get('metrics'), get('cutoffs'), reject, problems);
  const gainText = get('gain');
  let gain = DEFAULT_CONVENTIONS.gain;
  if (gainText !== undefined && gainText !== null) {
    try {
      gain = parseGain(String(gainText));
    } catch {
      reject('gain', '"exponential", "linear" or "map:0=0,1=1,2=3"', gainText);
    }
  }
  const maxGradeRaw = get('maxGrade');
  const maxGrade =
    maxGradeRaw === undefined || maxGradeRaw === null
      ? undefined
      : number('maxGrade', NaN, (n) => n > 0, 'a number > 0, or null for the highest grade in the data');
  const conventions: Conventions = {
    gain,
    ties: choice('ties', TIES, CONFIG_DEFAULTS.ties),
    noRelevant: choice('noRelevant', POLICIES, CONFIG_DEFAULTS.noRelevant),
    relevantFrom: number('relevantFrom', CONFIG_DEFAULTS.relevantFrom, () => true, 'a number'),
    rbpPersistence: number('rbpPersistence', CONFIG_DEFAULTS.rbpPersistence, (n) => n > 0 && n < 1, 'a number in (0, 1)'),
    ...(maxGrade !== undefined && Number.isFinite(maxGrade) ? { maxGrade } : {}),
  };

  return {
    metrics,
    conventions,
    missingQueries: choice('missingQueries', ['skip', 'zero'] as const, CONFIG_DEFAULTS.missingQueries),
    columnsByPattern: readColumnsByPattern(get('columnsByPattern'), reject),
    sideFilesByPattern: readSideFilesByPattern(get('sideFilesByPattern'), reject),
    dumpGlob: stringSetting(get('dumpGlob'), CONFIG_DEFAULTS.dumpGlob, 'dumpGlob', reject),
    dumpExclude: CONFIG_DEFAULTS.dumpExclude,
    series: {
      patterns: readSeriesPatterns(get('series.patterns'), reject),
      order: choice('series.order', ['number', 'time'] as const, CONFIG_DEFAULTS.seriesOrder),
    },
    compare: {
      permutations: number('compare.permutations', CONFIG_DEFAULTS.permutations, (n) => Number.isInteger(n) && n >= 100 && n <= 1e7,
        'a whole number from 100 to 10000000'),
      bootstrapResamples: number('compare.bootstrapResamples', CONFIG_DEFAULTS.bootstrapResamples,
        (n) => Number.isInteger(n) && n >= 0 && n <= 1e6, 'a whole number from 0 (no interval) to 1000000'),
      seed: number('compare.seed', CONFIG_DEFAULTS.seed, Number.isInteger, 'a whole number'),
      tieTolerance: number('compare.tieTolerance', CONFIG_DEFAULTS.tieTolerance, (n) => n >= 0, 'a number >= 0'),
    },
    streamFromBytes: number('reading.streamFromMegabytes', CONFIG_DEFAULTS.streamFromMegabytes, (n) => n >= 0, 'a number of megabytes >= 0') * 1e6,
    sql: readSqlSettings(get, reject),
    problems,
  };
}

function readSeriesPatterns(value: unknown, reject: (k: string, e: string, v: unknown) => void): readonly string[] {
  if (value === undefined || value === null) return CONFIG_DEFAULTS.seriesPatterns;
  if (Array.isArray(value) && value.every((p) => typeof p === 'string' && p.length > 0)) return value as string[];
  reject('series.patterns', 'a list of glob patterns, e.g. ["training/run-7/epoch-*.csv"]', value);
  return CONFIG_DEFAULTS.seriesPatterns;
}

function readSqlSettings(get: SettingGetter, reject: (k: string, e: string, v: unknown) => void): SqlSettings {
  const text = (key: string, ok: (v: string) => boolean, expected: string): string | undefined => {
    const v = get(key);
    if (v === undefined || v === null || v === '') return undefined;
    if (typeof v === 'string' && ok(v.trim())) return v.trim();
    reject(key, expected, v);
    return undefined;
  };
  const user = text('clickhouse.user', () => true, 'a user name');
  const order = text('clickhouse.orderColumn', () => true, 'a column name');
  const memory = text('duckdb.memoryLimit', (v) => /^\d+(\.\d+)?\s*(KB|MB|GB|TB|KiB|MiB|GiB|TiB)$/i.test(v), 'a size such as "2GB"');
  const folder = text('duckdb.packageFolder', () => true, 'a folder path');
  const columnsValue = get('clickhouse.columns');
  const columns = columnsValue === undefined || columnsValue === null ? undefined : readColumnsByPattern({ '*': columnsValue }, reject)['*'];
  return {
    ...(user ? { clickhouseUser: user } : {}),
    ...(order ? { clickhouseOrderColumn: order } : {}),
    ...(columns ? { clickhouseColumns: columns } : {}),
    ...(memory ? { duckdbMemoryLimit: memory } : {}),
    ...(folder ? { duckdbPackageFolder: folder } : {}),
  };
}

/** [10, 5] → "ndcg@10,ndcg@5,err@10,ap,rr,p@10,p@5,r@10,r@5,rbp,tau" (the first key is the headline). */
export function metricsForCutoffs(cutoffs: readonly number[]): string {
  const [first] = cutoffs;
  const at = (name: string): string[] => cutoffs.map((k) => `${name}@${k}`);
  return [...at('ndcg'), `err@${first}`, 'ap', 'rr', ...at('p'), ...at('r'), 'rbp', 'tau'].join(',');
}

/**
 * `gainline.metrics` (keys, first = headline). The older `gainline.cutoffs` is still read while
 * `gainline.metrics` is left at its default, and the note says what it became.
 */
function readMetrics(value: unknown, cutoffsValue: unknown, reject: (k: string, e: string, v: unknown) => void,
  problems: string[]): string {
  const fallback = CONFIG_DEFAULTS.metrics.join(',');
  let metrics = fallback;
  if (value !== undefined && value !== null) {
    const keys = Array.isArray(value) && value.every((k) => typeof k === 'string') ? (value as string[]) : undefined;
    try {
      if (!keys) throw new Error('not a list of strings');
      metrics = parseMetricList(keys.join(',')).map((m) => m.key).join(',');
    } catch {
      reject('metrics', 'a non-empty list of distinct metric keys, e.g. ["ndcg@10", "hit@5", "ap"]', value);
    }
  }
  if (cutoffsValue === undefined || cutoffsValue === null) return metrics;
  if (metrics !== fallback) {
    problems.push('gainline.cutoffs: replaced by gainline.metrics, which is set; gainline.cutoffs is ignored');
    return metrics;
  }
  const ok =
    Array.isArray(cutoffsValue) &&
    cutoffsValue.length > 0 &&
    cutoffsValue.every((k) => typeof k === 'number' && Number.isInteger(k) && k >= 1) &&
    new Set(cutoffsValue).size === cutoffsValue.length;
  if (!ok) {
    reject('cutoffs', 'a non-empty list of distinct whole numbers >= 1, e.g. [10, 5] (better: set gainline.metrics)', cutoffsValue);
    return metrics;
  }
  const derived = metricsForCutoffs(cutoffsValue as number[]);
  problems.push(`gainline.cutoffs: replaced by gainline.metrics; read as ${JSON.stringify(derived.split(','))}`);
  return derived;
}

function readColumnsByPattern(value: unknown, reject: (k: string, e: string, v: unknown) => void): Record<string, ColumnMapping> {
  if (value === undefined || value === null) return {};
  const out: Record<string, ColumnMapping> = {};
  if (typeof value !== 'object' || Array.isArray(value)) {
    reject('columnsByPattern', 'an object { "glob": { "query": "column", ... } }', value);
    return out;
  }
  for (const [pattern, mapping] of Object.entries(value as Record<string, unknown>)) {
    const entries = typeof mapping === 'object' && mapping !== null && !Array.isArray(mapping) ? Object.entries(mapping) : undefined;
    if (!entries || !entries.every(([, column]) => typeof column === 'string' && column.length > 0)) {
      reject(`columnsByPattern["${pattern}"]`, 'an object of role → column name', mapping);
      continue;
    }
    out[pattern] = Object.fromEntries(entries) as ColumnMapping;
  }
  return out;
}

function readSideFilesByPattern(value: unknown, reject: (k: string, e: string, v: unknown) => void): Record<string, SideFiles> {
  if (value === undefined || value === null) return {};
  const out: Record<string, SideFiles> = {};
  if (typeof value !== 'object' || Array.isArray(value)) {
    reject('sideFilesByPattern', 'an object { "glob": { "judgments": "path", "queries": "path", "items": "path" } }', value);
    return out;
  }
  for (const [pattern, files] of Object.entries(value as Record<string, unknown>)) {
    const entries = typeof files === 'object' && files !== null && !Array.isArray(files) ? Object.entries(files) : undefined;
    const fits = entries?.every(([key, path]) => (SIDE_FILE_KEYS as readonly string[]).includes(key) && typeof path === 'string' && path.length > 0);
    if (!entries || !fits) {
      reject(`sideFilesByPattern["${pattern}"]`, `an object with any of ${SIDE_FILE_KEYS.join(', ')} → a file path`, files);
      continue;
    }
    out[pattern] = Object.fromEntries(entries) as SideFiles;
  }
  return out;
}

function stringSetting(value: unknown, fallback: string, key: string, reject: (k: string, e: string, v: unknown) => void): string {
  if (value === undefined || value === null || value === '') return fallback;
  if (typeof value === 'string') return value;
  reject(key, 'a glob pattern', value);
  return fallback;
}

/**
 * The column mapping for a dump: the first pattern (in settings order) matching the path relative to
 * its workspace folder, or the bare file name for patterns without a slash.
 */
export function columnsFor(config: GainlineConfig, relativePath: string): ColumnMapping | undefined {
  return firstMatching(config.columnsByPattern, relativePath);
}

/** The side files for a dump, by the same pattern rule as columnsFor; paths as written in the setting. */
export function sideFilesFor(config: GainlineConfig, relativePath: string): SideFiles | undefined {
  return firstMatching(config.sideFilesByPattern, relativePath);
}

function firstMatching<T>(byPattern: Readonly<Record<string, T>>, relativePath: string): T | undefined {
  const normalised = relativePath.replace(/\\/g, '/');
  const base = normalised.slice(normalised.lastIndexOf('/') + 1);
  for (const [pattern, value] of Object.entries(byPattern)) {
    const target = pattern.includes('/') ? normalised : base;
    if (globToRegExp(pattern).test(target)) return value;
  }
  return undefined;
}

export function evaluationSettings(config: GainlineConfig): EvaluationSettings {
  return { metrics: config.metrics, conventions: config.conventions };
}

export function compareSettings(config: GainlineConfig): CompareSettings {
  return { ...evaluationSettings(config), ...config.compare };
}

/** The conventions line for tooltips: the same wording as every report (presentation module). */
export const conventionsLine = describeConventions;
