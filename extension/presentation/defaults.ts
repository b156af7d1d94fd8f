/**
 * The one set of defaults of the command line and the editor. package.json's `gainline.*` setting
 * defaults must equal these (test/host/config.test.ts holds them equal). A leaf module: no imports,
 * so the host, the worker, the webview and the engine can all read it without pulling in other code.
 */

/** The default metric list, first = headline. Every key must parse against the metric registry. */
export const DEFAULT_METRIC_KEYS: readonly string[] = ['ndcg@10', 'err@10', 'ap', 'rr', 'p@5', 'r@10', 'rbp', 'tau'];

export const DEFAULT_CONVENTION_SETTINGS = {
  gain: 'exponential',
  ties: 'average',
  noRelevant: 'skip',
  relevantFrom: 1,
  rbpPersistence: 0.8,
} as const;

export const DEFAULT_COMPARE_SETTINGS = {
  permutations: 10_000,
  bootstrap: 2_000,
  seed: 1,
  /**
   * |B − A| at or below this counts as a tie. Not 0: the same list scored through different arithmetic
   * (another tie group split, another summation order) can differ in the last bits, which is no change.
   */
  tieTolerance: 1e-9,
} as const;

/** A training series (`gainline trend`, the editor's Runs view and trend screen). */
export const DEFAULT_TREND_SETTINGS = {
  /** Bootstrap resamples of each checkpoint's 95% interval. */
  bootstrap: 1_000,
  seed: 1,
  /** How many of the queries that fell most are listed. */
  top: 10,
} as const;

/**
 * How the Runs view groups dumps into series (settings `gainline.series.patterns` and
 * `gainline.series.order`): no pattern means one series per folder holding two or more dumps.
 */
export const DEFAULT_SERIES_SETTINGS = {
  patterns: [] as readonly string[],
  order: 'number' as 'number' | 'time',
};

/**
 * How the editor reads a dump (setting `gainline.reading.streamFromMegabytes`): a plain CSV/TSV file of
 * this many megabytes (10^6 bytes) or more is scored as it streams in, its overview shown partially
 * while the rest is read; smaller files are read into memory, where every view (segments, score
 * diagnostics) is available. 1 000 MB is about where the command line's `--reading auto` streams too.
 */
export const DEFAULT_READING_SETTINGS = {
  streamFromMegabytes: 1000,
} as const;
