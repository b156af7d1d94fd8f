/**
 * How the Runs view groups dumps into series (extension/host/seriesGroups.ts), on hand-made listings
 * of an invented hardware-store project. The checkpoint number is the command line's rule
 * (engine/trend/series.ts), so 2 lists before 10.
 */
import { describe, expect, it } from 'vitest';
import { groupSeries, patternTakes } from '../../extension/host/seriesGroups';

const f = (relative: string) => ({ path: `/ws/${relative}`, relative });
const FILES = [
  f('training/run-7/epoch-10.csv'), f('training/run-7/epoch-2.csv'), f('training/run-7/epoch-1.csv'), f('training/run-7/notes.csv'),
  f('training/run-8/step_200.parquet'), f('training/run-8/step_100.parquet'),
  f('runs/model-a.csv'), f('runs/model-b.csv'),
  f('sweep/lr-0.1/final.csv'), f('exports/ckpt-3.jsonl'),
];

describe('series grouping', () => {
  it('makes one series per folder with two or more numbered dumps, listed by number', () => {
    const groups = groupSeries(FILES, [], 'number');
    expect(groups.map((g) => [g.key, g.files.map((x) => x.relative.replace(/^.*\//, ''))])).toEqual([
      ['folder:training/run-7', ['epoch-1.csv', 'epoch-2.csv', 'epoch-10.csv']],
      ['folder:training/run-8', ['step_100.parquet', 'step_200.parquet']],
    ]);
  });

  it('by time, every dump of a folder counts, numbered or not', () => {
    const groups = groupSeries(FILES, [], 'time');
    expect(groups.map((g) => g.key)).toEqual(['folder:runs', 'folder:training/run-7', 'folder:training/run-8']);
    expect(groups[1]!.files).toHaveLength(4);
  });

  it('a pattern is a series of its own, even of one file, and takes its files out of the folders', () => {
    const groups = groupSeries(FILES, ['training/run-7/epoch-*.csv', 'ckpt-*.jsonl'], 'number');
    expect(groups.map((g) => [g.key, g.files.length])).toEqual([
      ['pattern:training/run-7/epoch-*.csv', 3],
      ['pattern:ckpt-*.jsonl', 1],
      ['folder:training/run-8', 2],
    ]);
  });

  it('a pattern without / matches the file name, one with / the relative path', () => {
    expect(patternTakes('epoch-*.csv', f('training/run-7/epoch-2.csv'))).toBe(true);
    expect(patternTakes('training/*/epoch-*.csv', f('training/run-7/epoch-2.csv'))).toBe(true);
    expect(patternTakes('run-7/epoch-*.csv', f('training/run-7/epoch-2.csv'))).toBe(false);
    expect(patternTakes('**/run-7/epoch-*.csv', f('training/run-7/epoch-2.csv'))).toBe(true);
  });
});
