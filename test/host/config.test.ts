import { describe, expect, it } from 'vitest';
import {
  CONFIG_DEFAULTS,
  columnsFor,
  conventionsLine,
  metricsForCutoffs,
  readConfig,
} from '../../extension/host/config';
import { globToRegExp } from '../../extension/host/glob';
import { DEFAULT_COMPARE_OPTIONS } from '../../extension/engine/compare/compare';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { DEFAULT_METRICS } from '../../extension/engine/metrics/registry';
import { DEFAULT_COMPARE_SETTINGS, DEFAULT_CONVENTION_SETTINGS, DEFAULT_METRIC_KEYS, DEFAULT_READING_SETTINGS, DEFAULT_SERIES_SETTINGS } from '../../extension/presentation/defaults';

const from = (settings: Record<string, unknown>) => (key: string) => settings[key];

describe('readConfig', () => {
  it('gives the engine defaults when nothing is set', () => {
    const config = readConfig(from({}));
    expect(config.problems).toEqual([]);
    expect(config.conventions).toEqual(DEFAULT_CONVENTIONS);
    expect(config.metrics).toBe(DEFAULT_METRICS);
    expect(config.dumpGlob).toBe(CONFIG_DEFAULTS.dumpGlob);
    expect(config.series).toEqual({ patterns: [], order: 'number' });
    expect(config.compare).toEqual({ permutations: 10_000, bootstrapResamples: 2000, seed: 1, tieTolerance: 1e-9 });
  });

  it('reads every convention', () => {
    const config = readConfig(
      from({
        metrics: ['NDCG@20', 'hit@3', 'judged@20', 'ap@100'],
        gain: 'map:0=0,1=1,2=3',
        ties: 'pessimistic',
        noRelevant: 'zero',
        relevantFrom: 2,
        rbpPersistence: 0.95,
        maxGrade: 4,
        'compare.permutations': 2000,
        'compare.bootstrapResamples': 0,
        'compare.seed': 7,
        'compare.tieTolerance': 0.001,
      }),
    );
    expect(config.problems).toEqual([]);
    expect(config.conventions.gain).toEqual({ kind: 'map', gains: new Map([[0, 0], [1, 1], [2, 3]]) });
    expect(config.conventions).toMatchObject({ ties: 'pessimistic', noRelevant: 'zero', relevantFrom: 2, rbpPersistence: 0.95, maxGrade: 4 });
    expect(config.metrics).toBe('ndcg@20,hit@3,judged@20,ap@100');
    expect(config.compare).toEqual({ permutations: 2000, bootstrapResamples: 0, seed: 7, tieTolerance: 0.001 });
  });

  it('falls back per setting and says which one was ignored', () => {
    const config = readConfig(
      from({ metrics: ['ndcg@0'], gain: 'cubic', ties: 'random', rbpPersistence: 1, 'compare.permutations': 3, 'compare.bootstrapResamples': 2.5, maxGrade: -1 }),
    );
    expect(config.metrics).toBe(DEFAULT_METRICS);
    expect(config.conventions.gain).toEqual({ kind: 'exponential' });
    expect(config.conventions.ties).toBe('average');
    expect(config.conventions.rbpPersistence).toBe(0.8);
    expect(config.conventions.maxGrade).toBeUndefined();
    expect(config.compare.permutations).toBe(10_000);
    expect(config.compare.bootstrapResamples).toBe(2000);
    const keys = config.problems.map((p) => p.split(':')[0]);
    expect(keys.sort()).toEqual(
      ['gainline.compare.bootstrapResamples', 'gainline.compare.permutations', 'gainline.metrics', 'gainline.gain', 'gainline.maxGrade', 'gainline.rbpPersistence', 'gainline.ties'].sort(),
    );
  });

  it('has one bootstrap default in the engine, the settings and the manifest', async () => {
    const manifest = (await import('../../package.json')).default as {
      contributes: { configuration: { properties: Record<string, { default?: unknown }> } };
    };
    expect(CONFIG_DEFAULTS.bootstrapResamples).toBe(DEFAULT_COMPARE_OPTIONS.bootstrap);
    expect(manifest.contributes.configuration.properties['gainline.compare.bootstrapResamples']?.default).toBe(DEFAULT_COMPARE_OPTIONS.bootstrap);
    expect(DEFAULT_COMPARE_OPTIONS.bootstrap).toBe(2000);
  });

  it('rejects duplicate metrics, unknown keys and non-lists', () => {
    expect(readConfig(from({ metrics: ['ap', 'AP'] })).problems).toHaveLength(1);
    expect(readConfig(from({ metrics: ['mrr'] })).problems).toHaveLength(1);
    expect(readConfig(from({ metrics: 'ndcg@10' })).problems).toHaveLength(1);
    expect(readConfig(from({ metrics: [] })).problems).toHaveLength(1);
  });

  it('still reads the older cut-offs setting while the metric list is at its default, and says so', () => {
    const config = readConfig(from({ cutoffs: [20, 3] }));
    expect(config.metrics).toBe('ndcg@20,ndcg@3,err@20,ap,rr,p@20,p@3,r@20,r@3,rbp,tau');
    expect(config.problems).toHaveLength(1);
    expect(config.problems[0]).toMatch(/^gainline\.cutoffs: replaced by gainline\.metrics/);
    const both = readConfig(from({ cutoffs: [20], metrics: ['hit@5'] }));
    expect(both.metrics).toBe('hit@5');
    expect(both.problems[0]).toContain('ignored');
    expect(readConfig(from({ cutoffs: [10, 10] })).problems[0]).toContain('distinct whole numbers');
  });

  it('has every setting default of the manifest equal to the shared presentation defaults', async () => {
    const manifest = (await import('../../package.json')).default as {
      contributes: { configuration: { properties: Record<string, { default?: unknown }> } };
    };
    const defaults = Object.fromEntries(Object.entries(manifest.contributes.configuration.properties).map(([k, v]) => [k, v.default]));
    expect(defaults['gainline.metrics']).toEqual([...DEFAULT_METRIC_KEYS]);
    expect(defaults['gainline.metrics']).toEqual(DEFAULT_METRICS.split(','));
    expect(defaults['gainline.gain']).toBe(DEFAULT_CONVENTION_SETTINGS.gain);
    expect(defaults['gainline.ties']).toBe(DEFAULT_CONVENTION_SETTINGS.ties);
    expect(defaults['gainline.noRelevant']).toBe(DEFAULT_CONVENTION_SETTINGS.noRelevant);
    expect(defaults['gainline.relevantFrom']).toBe(DEFAULT_CONVENTION_SETTINGS.relevantFrom);
    expect(defaults['gainline.rbpPersistence']).toBe(DEFAULT_CONVENTION_SETTINGS.rbpPersistence);
    expect(defaults['gainline.maxGrade']).toBeNull();
    expect(defaults['gainline.cutoffs']).toBeNull();
    expect(defaults['gainline.dumpGlob']).toBe(CONFIG_DEFAULTS.dumpGlob);
    expect(defaults['gainline.series.patterns']).toEqual([...DEFAULT_SERIES_SETTINGS.patterns]);
    expect(defaults['gainline.series.order']).toBe(DEFAULT_SERIES_SETTINGS.order);
    expect(defaults['gainline.compare.permutations']).toBe(DEFAULT_COMPARE_OPTIONS.permutations);
    expect(defaults['gainline.compare.bootstrapResamples']).toBe(DEFAULT_COMPARE_OPTIONS.bootstrap);
    expect(defaults['gainline.compare.seed']).toBe(DEFAULT_COMPARE_OPTIONS.seed);
    expect(defaults['gainline.compare.tieTolerance']).toBe(DEFAULT_COMPARE_OPTIONS.tieTolerance);
    expect(defaults['gainline.reading.streamFromMegabytes']).toBe(DEFAULT_READING_SETTINGS.streamFromMegabytes);
    expect(readConfig(from({})).streamFromBytes).toBe(DEFAULT_READING_SETTINGS.streamFromMegabytes * 1e6);
    // The engine's conventions are the same defaults, and so is what readConfig gives with nothing set.
    expect(readConfig(from({})).conventions).toEqual(DEFAULT_CONVENTIONS);
    const { permutations, bootstrap, seed, tieTolerance } = DEFAULT_COMPARE_SETTINGS;
    expect(readConfig(from({})).compare).toEqual({ permutations, bootstrapResamples: bootstrap, seed, tieTolerance });
  });

  it('reads the stream threshold in megabytes and refuses a negative one', () => {
    expect(readConfig(from({ 'reading.streamFromMegabytes': 0 })).streamFromBytes).toBe(0);
    expect(readConfig(from({ 'reading.streamFromMegabytes': 1.5 })).streamFromBytes).toBe(1_500_000);
    const bad = readConfig(from({ 'reading.streamFromMegabytes': -1 }));
    expect(bad.streamFromBytes).toBe(DEFAULT_READING_SETTINGS.streamFromMegabytes * 1e6);
    expect(bad.problems[0]).toContain('gainline.reading.streamFromMegabytes');
  });

  it('keeps valid column mappings and reports bad ones', () => {
    const config = readConfig(
      from({ columnsByPattern: { '**/exports/*.csv': { query: 'search_id', item: 'sku' }, 'bad.csv': { query: 3 } } }),
    );
    expect(Object.keys(config.columnsByPattern)).toEqual(['**/exports/*.csv']);
    expect(config.problems).toHaveLength(1);
    expect(config.problems[0]).toContain('bad.csv');
  });
});

describe('metric list from cut-offs', () => {
  it('parses with the engine and puts the headline first', () => {
    const specs = parseMetricList(metricsForCutoffs([10, 5]));
    expect(specs[0]!.key).toBe('ndcg@10');
    expect(specs.map((s) => s.key)).toEqual(['ndcg@10', 'ndcg@5', 'err@10', 'ap', 'rr', 'p@10', 'p@5', 'r@10', 'r@5', 'rbp', 'tau']);
  });
});

describe('columnsFor / globToRegExp', () => {
  it('matches globs like the editor does for the common cases', () => {
    expect(globToRegExp('**/*.{csv,tsv}').test('a/b/run.csv')).toBe(true);
    expect(globToRegExp('**/*.{csv,tsv}').test('run.tsv')).toBe(true);
    expect(globToRegExp('**/*.{csv,tsv}').test('run.jsonl')).toBe(false);
    expect(globToRegExp('exports/*.csv').test('exports/deep/run.csv')).toBe(false);
    expect(globToRegExp('run-?.csv').test('run-a.csv')).toBe(true);
    expect(globToRegExp('run-[ab].csv').test('run-c.csv')).toBe(false);
    expect(globToRegExp('model.a+b.csv').test('modelXa+b.csv')).toBe(false);
  });

  it('uses the first matching pattern, on the base name when the pattern has no slash', () => {
    const config = readConfig(
      from({ columnsByPattern: { 'nightly-*.csv': { query: 'search_id' }, 'runs/**': { query: 'qid2' } } }),
    );
    expect(columnsFor(config, 'runs/nightly-3.csv')).toEqual({ query: 'search_id' });
    expect(columnsFor(config, 'runs\\other.csv')).toEqual({ query: 'qid2' });
    expect(columnsFor(config, 'other.csv')).toBeUndefined();
  });
});

describe('conventionsLine', () => {
  it('names every convention', () => {
    const line = conventionsLine({ ...DEFAULT_CONVENTIONS, maxGrade: 3 });
    for (const part of ['gain exponential', 'ties average', 'no relevant: skip', 'relevant from grade 1', 'RBP persistence 0.8', 'ERR max grade 3']) {
      expect(line).toContain(part);
    }
  });
});

describe('training series settings', () => {
  it('reads patterns and order, and falls back with a note on a bad value', () => {
    const good = readConfig((key) => ({ 'series.patterns': ['training/*/epoch-*.csv'], 'series.order': 'time' } as Record<string, unknown>)[key]);
    expect(good.series).toEqual({ patterns: ['training/*/epoch-*.csv'], order: 'time' });
    const bad = readConfig((key) => ({ 'series.patterns': 'epoch-*.csv', 'series.order': 'name' } as Record<string, unknown>)[key]);
    expect(bad.series).toEqual({ patterns: [], order: 'number' });
    expect(bad.problems).toEqual([
      expect.stringMatching(/^gainline\.series\.patterns: expected a list of glob patterns/),
      expect.stringMatching(/^gainline\.series\.order: expected one of number, time, found "name"/),
    ]);
  });
});
