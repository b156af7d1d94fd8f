/**
 * How many dumps the views take (extension/host/dumpListing.ts) and the Runs view's grouping of a long
 * training job (seriesGroups.ts): nothing found is dropped without a row saying so, and a series of
 * 20,000 checkpoints is grouped whole, in checkpoint-number order. Invented hardware-store paths.
 */
import { describe, expect, it } from 'vitest';
import { listingOf, MAX_LISTED_DUMPS, moreTooltip, RANKED_LISTS_SHOWN, searchLimit, shownInRankedLists } from '../../extension/host/dumpListing';
import { groupSeries } from '../../extension/host/seriesGroups';
import { seededRandom } from '../reference/random';

const names = (n: number) => Array.from({ length: n }, (_, i) => `tools/run-${i}.csv`);

describe('dump listing', () => {
  it('asks the search for one more than it lists, to know when it stopped', () => {
    expect(searchLimit()).toBe(MAX_LISTED_DUMPS + 1);
    expect(listingOf(names(MAX_LISTED_DUMPS))).toEqual({ files: names(MAX_LISTED_DUMPS), searchStopped: false });
    const stopped = listingOf(names(MAX_LISTED_DUMPS + 1));
    expect(stopped.files).toHaveLength(MAX_LISTED_DUMPS);
    expect(stopped.searchStopped).toBe(true);
  });

  it('Ranked Lists: every dump up to the limit, no extra row', () => {
    const all = shownInRankedLists(listingOf(names(RANKED_LISTS_SHOWN)));
    expect(all.shown).toHaveLength(RANKED_LISTS_SHOWN);
    expect(all.more).toBeUndefined();
  });

  it('Ranked Lists: the first 500, then a row counting the rest', () => {
    const listing = listingOf(names(RANKED_LISTS_SHOWN + 1));
    const one = shownInRankedLists(listing);
    expect(one.shown).toEqual(names(RANKED_LISTS_SHOWN));
    expect(one.more).toBe('1 more dump not listed');
    expect(moreTooltip(listing)).toContain('501 dumps found; all of them are grouped in the Runs view');
    expect(shownInRankedLists(listingOf(names(12_345))).more).toBe('11,845 more dumps not listed');
  });

  it('Ranked Lists: past the search limit the count says "+" and the tooltip says where the search stopped', () => {
    const listing = listingOf(names(MAX_LISTED_DUMPS + 1));
    expect(shownInRankedLists(listing).more).toBe('19,500+ more dumps not listed');
    expect(moreTooltip(listing)).toContain('more than 20,000 dumps');
    // Even with every listed dump shown, a search that stopped gets its row.
    expect(shownInRankedLists(listing, MAX_LISTED_DUMPS).more).toBe('0+ more dumps not listed');
  });
});

describe('a training job of 20,000 checkpoints', () => {
  it('is one series holding every checkpoint, in number order (2 before 10), whatever the listing order', () => {
    const random = seededRandom(14);
    const steps = Array.from({ length: MAX_LISTED_DUMPS }, (_, i) => (i + 1) * 50);
    // Shuffled (Fisher–Yates, common practice): the workspace search returns files in no set order.
    for (let i = steps.length - 1; i > 0; i--) {
      const j = Math.floor(random() * (i + 1));
      [steps[i], steps[j]] = [steps[j]!, steps[i]!];
    }
    const files = steps.map((s) => ({ path: `/ws/jobs/drill-ranker/step-${s}.csv`, relative: `jobs/drill-ranker/step-${s}.csv` }));
    files.push({ path: '/ws/runs/model-a.csv', relative: 'runs/model-a.csv' });
    const groups = groupSeries(files, [], 'number');
    expect(groups.map((g) => g.key)).toEqual(['folder:jobs/drill-ranker']);
    const listed = groups[0]!.files.map((f) => Number(/step-(\d+)/.exec(f.relative)![1]));
    expect(listed).toHaveLength(MAX_LISTED_DUMPS);
    expect(listed.slice(0, 3)).toEqual([50, 100, 150]);
    expect(listed.every((s, i) => s === (i + 1) * 50)).toBe(true);
  });

  it('a pattern series takes all 20,000 too', () => {
    const files = Array.from({ length: MAX_LISTED_DUMPS }, (_, i) => ({ path: `/ws/ckpt/epoch-${i}.jsonl`, relative: `ckpt/epoch-${i}.jsonl` }));
    const [group] = groupSeries(files, ['epoch-*.jsonl'], 'number');
    expect(group!.files).toHaveLength(MAX_LISTED_DUMPS);
    expect(group!.files.at(-1)!.relative).toBe(`ckpt/epoch-${MAX_LISTED_DUMPS - 1}.jsonl`);
  });
});
