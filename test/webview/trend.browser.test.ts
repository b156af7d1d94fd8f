/**
 * The trend screen of the webview bundle in Chromium against the fake host (harness/fakeSeries.ts):
 * each metric's chart is handed the checkpoints' means in series order, the table marks the peak, a
 * checkpoint opens its dump, two checkpoints go to the comparison, a query shows its trajectory, and a
 * grown series (the host's 'reloaded') extends the charts while the chosen query stays shown.
 * The expected values are the fake host's hand-set numbers.
 */
import { describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { useHarnessBrowser } from './harness/browserPages';
import { SERIES_EPOCHS, SERIES_NDCG } from './harness/fakeSeries';

const web = useHarnessBrowser();

type Calls = { method: string; params: unknown }[];
const calls = (page: Page): Promise<Calls> => page.evaluate(() => (window as unknown as { __host: { calls: Calls } }).__host.calls);
const chartData = (page: Page, metric: string) =>
  page.$eval(`.gl-trend-metric[data-metric="${metric}"] canvas`, (c) => ({ labels: JSON.parse(c.getAttribute('data-labels')!), values: JSON.parse(c.getAttribute('data-values')!) }));

async function open(): Promise<{ page: Page; problems: string[] }> {
  const opened = await web.open('mode=series', { width: 1280, height: 900 });
  await opened.page.waitForSelector('.gl-trend-metric canvas');
  return opened;
}

describe('trend screen', () => {
  it('draws each metric over the checkpoints in series order and marks the peak', async () => {
    const { page, problems } = await open();
    expect(await page.getAttribute('#gl-tab-trend', 'aria-selected')).toBe('true');
    const ndcg = await chartData(page, 'ndcg@10');
    expect(ndcg.labels).toEqual(SERIES_EPOCHS.slice(0, 4).map((e) => `epoch-${e}.csv`));
    expect(ndcg.values).toEqual(SERIES_NDCG.slice(0, 4));
    // Peak of NDCG@10: epoch-5 (0.7125, the highest of the four); the heading and the table say so.
    expect(await page.textContent('.gl-trend-metric[data-metric="ndcg@10"] h3')).toBe('NDCG@10 · peak 0.7125 at epoch-5.csv');
    const rows = await page.locator('#gl-trend-table tbody tr').allTextContents();
    expect(rows).toHaveLength(4);
    expect(rows[2]).toMatch(/^3epoch-5\.csv40\.7125 ▲0\.4700$/);
    expect(await page.textContent('#gl-trend-first-to-last tbody tr')).toMatch(/^hex key set0\.9000epoch-1\.csv0\.5000-0\.4000$/);
    expect(problems).toEqual([]);
    await page.close();
  }, 60_000);

  it('opens a checkpoint, compares two, and shows a query’s trajectory', async () => {
    const { page } = await open();
    await page.click('#gl-trend-table tbody tr[data-checkpoint="epoch-2.csv"] button');
    // On the chart: a click picks the checkpoint nearest along x (index mode); inside the plot near its right edge, the last one.
    const box = (await page.locator('.gl-trend-metric[data-metric="ndcg@10"] canvas').boundingBox())!;
    await page.mouse.click(box.x + box.width * 0.88, box.y + box.height * 0.5);
    await page.selectOption('#gl-trend-base', '/demo/training/run-7/epoch-5.csv');
    await page.click('#gl-trend-compare-button');
    await page.click('#gl-trend-peak-to-last tbody button');
    await page.waitForSelector('#gl-trend-trajectory-table');
    expect(await page.textContent('#gl-trend-trajectory-title')).toBe('wood screws 4x40 over the checkpoints');
    // wood screws is the second query: (1 + 1) / 10 + i / 100 at checkpoint i.
    expect(await page.locator('#gl-trend-trajectory-table tbody tr td:nth-child(2)').allTextContents()).toEqual(['0.2000', '0.2100', '0.2200', '0.2300']);
    const asked = (await calls(page)).filter((c) => c.method !== 'selection');
    expect(asked).toEqual([
      { method: 'openCheckpoint', params: { path: '/demo/training/run-7/epoch-2.csv' } },
      { method: 'openCheckpoint', params: { path: '/demo/training/run-7/epoch-10.csv' } },
      { method: 'compareCheckpoints', params: { base: '/demo/training/run-7/epoch-5.csv', other: '/demo/training/run-7/epoch-10.csv' } },
      { method: 'seriesTrajectory', params: { query: 'wood screws 4x40' } },
    ]);
    await page.close();
  }, 60_000);

  it('extends when the series grows, keeping the chosen query and checkpoints', async () => {
    const { page, problems } = await open();
    await page.selectOption('#gl-trend-base', '/demo/training/run-7/epoch-2.csv');
    await page.click('#gl-trend-first-to-last tbody button');
    await page.waitForSelector('#gl-trend-trajectory-table');
    await page.evaluate(() => (window as unknown as { __host: { growSeries(): void } }).__host.growSeries());
    await page.waitForFunction(() => document.querySelectorAll('#gl-trend-table tbody tr').length === 5);
    expect((await chartData(page, 'ndcg@10')).values).toEqual(SERIES_NDCG);
    expect(await page.textContent('#gl-tab-trend vscode-badge')).toBe('5');
    expect(await page.inputValue('#gl-trend-base')).toBe('/demo/training/run-7/epoch-2.csv');
    await page.waitForFunction(() => document.querySelectorAll('#gl-trend-trajectory-table tbody tr').length === 5);
    expect(await page.textContent('#gl-trend-trajectory-title')).toBe('hex key set over the checkpoints');
    expect(problems).toEqual([]);
    await page.close();
  }, 60_000);
});
