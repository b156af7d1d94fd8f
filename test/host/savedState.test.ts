/**
 * What the host reads back from a panel's saved page state after a window reload (extension/host/
 * savedState.ts): the compare panel's two runs and the trend panel's series key, each checked, since the
 * state comes from the page. The shapes are those webview/src/app.ts saves (SavedState).
 */
import { describe, expect, it } from 'vitest';
import { savedRuns, savedSeriesKey } from '../../extension/host/savedState';

describe('saved panel state', () => {
  it('a compare panel: two non-empty paths, else nothing', () => {
    expect(savedRuns({ tab: 'compare', query: null, runs: ['/ws/model-a.csv', '/ws/model-b.csv'] })).toEqual(['/ws/model-a.csv', '/ws/model-b.csv']);
    for (const bad of [undefined, null, 'runs', {}, { runs: ['/ws/model-a.csv'] }, { runs: ['/ws/model-a.csv', ''] }, { runs: ['/ws/a.csv', 7] }, { runs: '/ws/a.csv' }]) {
      expect(savedRuns(bad), JSON.stringify(bad)).toBeUndefined();
    }
  });

  it('a trend panel: the Runs view key of its series, else nothing', () => {
    expect(savedSeriesKey({ tab: 'trend', query: 'cordless drill 18v', series: 'folder:jobs/drill-ranker' })).toBe('folder:jobs/drill-ranker');
    expect(savedSeriesKey({ series: 'pattern:ckpt/epoch-*.csv' })).toBe('pattern:ckpt/epoch-*.csv');
    for (const bad of [undefined, null, 3, {}, { series: '' }, { series: 42 }, { runs: ['/ws/a.csv', '/ws/b.csv'] }]) {
      expect(savedSeriesKey(bad), JSON.stringify(bad)).toBeUndefined();
    }
  });
});
