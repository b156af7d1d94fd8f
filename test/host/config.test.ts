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

const from = (settings: Record<string, unknown>) => (key: string) => settings[key];

describe('readConfig', () => {
  it('gives the engine defaults when nothing is set', () => {
    const config = readConfig(from({}));
    expect(config.problems).toEqual([]);
    expect(config.conventions).toEqual(DEFAULT_CONVENTIONS);
    expect(config.cutoffs).toEqual([10, 5]);
    expect(config.metrics.split(',')[0]).toBe('ndcg@10');
    expect(config.dumpGlob).toBe(CONFIG_DEFAULTS.dumpGlob);
    expect(config.compare).toEqual({ permutations: 10_000, bootstrapResamples: 2000, seed: 1, tieTolerance: 1e-9 });
  });

  it('reads every convention', () => {
    const config = readConfig(
      from({
        cutoffs: [20, 3],
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
    expect(config.metrics.startsWith('ndcg@20,ndcg@3,err@20,')).toBe(true);
    expect(config.compare).toEqual({ permutations: 2000, bootstrapResamples: 0, seed: 7, tieTolerance: 0.001 });
  });

  it('falls back per setting and says which one was ignored', () => {
    const config = readConfig(
      from({ cutoffs: [0], gain: 'cubic', ties: 'random', rbpPersistence: 1, 'compare.permutations': 3, 'compare.bootstrapResamples': 2.5, maxGrade: -1 }),
    );
    expect(config.cutoffs).toEqual([10, 5]);
    expect(config.conventions.gain).toEqual({ kind: 'exponential' });
    expect(config.conventions.ties).toBe('average');
    expect(config.conventions.rbpPersistence).toBe(0.8);
    expect(config.conventions.maxGrade).toBeUndefined();
    expect(config.compare.permutations).toBe(10_000);
    expect(config.compare.bootstrapResamples).toBe(2000);
    const keys = config.problems.map((p) => p.split(':')[0]);
    expect(keys.sort()).toEqual(
      ['gainline.compare.bootstrapResamples', 'gainline.compare.permutations', 'gainline.cutoffs', 'gainline.gain', 'gainline.maxGrade', 'gainline.rbpPersistence', 'gainline.ties'].sort(),
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

  it('rejects duplicate cut-offs and non-integers', () => {
    expect(readConfig(from({ cutoffs: [10, 10] })).problems).toHaveLength(1);
    expect(readConfig(from({ cutoffs: [2.5] })).problems).toHaveLength(1);
    expect(readConfig(from({ cutoffs: 'ten' })).problems).toHaveLength(1);
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
    for (const part of ['gain exponential', 'ties average', 'no relevant: skip', 'relevant ≥ 1', 'RBP p=0.8', 'ERR max grade 3']) {
      expect(line).toContain(part);
    }
  });
});
