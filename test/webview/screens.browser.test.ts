/**
 * The webview bundle in a real browser (system Chromium, driven by playwright-core) against a fake
 * host, under the extension's strict CSP. Checks behaviour the unit tests cannot: stable element ids,
 * paging and virtualisation, keyboard navigation, text-only rendering of hostile ids, refresh
 * keeping the selection, the error and file-gone panels, and compare mode.
 */
import { describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { makeQueries } from './harness/fakeHost';
import { useHarnessBrowser } from './harness/browserPages';

const web = useHarnessBrowser();
const open = (query: string) => web.open(query, { width: 1280, height: 800 });

function worstFirst(count: number): string[] {
  // Same order as the fake host: NDCG ascending, skipped (NaN) last, stable.
  return makeQueries(count)
    .map((q, i) => ({ q, i }))
    .sort((a, b) => {
      const na = Number.isNaN(a.q.ndcgA);
      const nb = Number.isNaN(b.q.ndcgA);
      if (na || nb) return na === nb ? a.i - b.i : na ? 1 : -1;
      return a.q.ndcgA - b.q.ndcgA || a.i - b.i;
    })
    .map((x) => x.q.id);
}

describe('single-run screens', () => {
  it('shows the headline with four decimals and the overview sections', async () => {
    const { page, problems } = await open('queries=500');
    await page.waitForSelector('#gl-headline-value');
    expect(await page.textContent('#gl-headline-label')).toBe('NDCG@10');
    expect(await page.textContent('#gl-headline-value')).toMatch(/^\d\.\d{4}$/);
    for (const id of ['#gl-overview', '#gl-conventions', '#gl-sensitivity', '#gl-degenerate', '#gl-scores-by-grade', '#gl-dcg-by-position']) {
      expect(await page.isVisible(id), id).toBe(true);
    }
    // Score diagnostics: one quartile row per grade (unjudged last) and one row per position plus the rest.
    expect(await page.locator('#gl-scores-by-grade tbody tr').allTextContents()).toEqual([
      expect.stringMatching(/^grade 0\s*40\s*1\s*0\.1000\s*0\.2000\s*0\.3500\s*0\.2400$/), expect.stringMatching(/^grade 2/), expect.stringMatching(/^unjudged/),
    ]);
    expect(await page.locator('#gl-dcg-by-position tbody tr').count()).toBe(4);
    expect(await page.textContent('#gl-dcg-by-position tbody tr:first-child')).toMatch(/^1\s*0\.4000\s*0\.5500\s*0\.1500$/);
    expect(await page.isVisible('#gl-loading')).toBe(false);
    expect(problems).toEqual([]);
    await page.close();
  });

  it('shows the headline first, then asks for the sensitivity rows and fills the table with them', async () => {
    const { page, problems } = await open('queries=200&sensitivity=later&diagnostics=held');
    await page.waitForSelector('#gl-headline-value');
    const headline = await page.textContent('#gl-headline-value');
    // The rows arrive on their own request; then the table lists the current settings once, then each other convention.
    await page.waitForSelector('#gl-sensitivity-box:not([aria-busy])');
    const calls = await page.evaluate(() => (window as unknown as { __host: { calls: { method: string }[] } }).__host.calls.map((c) => c.method));
    expect(calls).toContain('overviewSensitivity');
    const rows = await page.locator('#gl-sensitivity tbody tr').allTextContents();
    expect(rows).toEqual([expect.stringMatching(new RegExp(`^current settings\\s*${headline}`)), expect.stringMatching(/^gain: linear\s*0\.6100/)]);
    expect(await page.textContent('#gl-sensitivity-box')).not.toContain('Computing');
    expect(problems).toEqual([]);
    await page.close();
  });

  it('shows the headline before the score diagnostics, which it asks for afterwards, and says when they fail', async () => {
    const { page, problems } = await open('queries=200&diagnostics=held');
    await page.waitForSelector('#gl-headline-value');
    expect(await page.textContent('#gl-headline-value')).toMatch(/^\d\.\d{4}$/);
    // The request is out while the headline, sensitivity and data tables are already shown.
    await page.waitForFunction(() => (window as unknown as { __host: { calls: { method: string }[] } }).__host.calls.some((c) => c.method === 'overviewDiagnostics'));
    expect(await page.getAttribute('#gl-score-diagnostics', 'aria-busy')).toBe('true');
    expect(await page.textContent('#gl-score-diagnostics')).toContain('Computing the score diagnostics');
    expect(await page.isVisible('#gl-sensitivity')).toBe(true);
    expect(await page.locator('#gl-scores-by-grade').count()).toBe(0);
    await page.evaluate(() => (window as unknown as { __host: { releaseDiagnostics(): void } }).__host.releaseDiagnostics());
    await page.waitForSelector('#gl-scores-by-grade tbody tr');
    expect(await page.getAttribute('#gl-score-diagnostics', 'aria-busy')).toBe(null);
    expect(await page.locator('#gl-dcg-by-position tbody tr').count()).toBe(4);
    // A refresh asks again; a failure is said in the box, and the rest of the overview stays.
    await page.evaluate(() => {
      const host = (window as unknown as { __host: { send(m: unknown): void; overview: unknown } }).__host;
      host.send({ kind: 'state', state: { status: 'reloaded', mode: 'single', overview: host.overview } });
    });
    await page.waitForSelector('#gl-score-diagnostics[aria-busy="true"]');
    await page.evaluate(() => (window as unknown as { __host: { releaseDiagnostics(error: string): void } }).__host.releaseDiagnostics('nothing is loaded for this view'));
    await page.waitForFunction(() => document.querySelector('#gl-score-diagnostics')?.textContent?.includes('Could not compute the score diagnostics: nothing is loaded for this view'));
    expect(await page.textContent('#gl-headline-value')).toMatch(/^\d\.\d{4}$/);
    expect(problems).toEqual([]);
    await page.close();
  });

  it('pages 100k queries into a virtual grid, worst first, with only visible rows in the DOM', async () => {
    const count = 100_000;
    const expected = worstFirst(count);
    const { page, problems } = await open(`queries=${count}`);
    await page.click('#gl-tab-worst');
    await page.waitForSelector('#gl-worst-table [data-query]');
    expect(await page.getAttribute('#gl-worst-table [data-query] >> nth=0', 'data-query')).toBe(expected[0]);
    const rowsInDom = await page.locator('#gl-worst-table .gl-vt-row').count();
    expect(rowsInDom).toBeLessThan(80);
    expect(await page.getAttribute('#gl-worst-table', 'aria-rowcount')).toBe(String(count + 1));
    // Keyboard: End goes to the last query, Home back to the first, Enter opens the active one.
    await page.focus('#gl-worst-table');
    await page.keyboard.press('End');
    await page.waitForSelector(`#gl-worst-table [data-query="${expected[count - 1]!.replace(/"/g, '\\"')}"]`);
    await page.keyboard.press('Home');
    await page.keyboard.press('ArrowDown');
    await page.keyboard.press('ArrowDown');
    await page.keyboard.press('Enter');
    await page.waitForFunction((q) => document.querySelector('#gl-detail-query')?.textContent === q, expected[2]);
    expect(await page.getAttribute('#gl-tab-detail', 'aria-selected')).toBe('true');
    expect(problems).toEqual([]);
    await page.close();
  }, 120_000);

  it('sorts by a header click and filters by id', async () => {
    const { page } = await open('queries=400');
    await page.click('#gl-tab-worst');
    await page.waitForSelector('#gl-worst-table [data-query]');
    await page.click('#gl-worst-table .gl-vt-sort:text("Inversions")');
    const maxInversions = Math.max(...makeQueries(400).map((q) => q.inversions));
    await page.waitForFunction(
      (max) => document.querySelector('#gl-worst-table [data-query] [aria-colindex="7"]')?.textContent === String(max),
      maxInversions,
    );
    await page.fill('#gl-worst-filter', 'pipe wrench');
    await page.waitForFunction(() => {
      const rows = [...document.querySelectorAll<HTMLElement>('#gl-worst-table [data-query]')];
      return rows.length > 0 && rows.every((r) => r.dataset['query']!.includes('pipe wrench'));
    });
    await page.close();
  });

  it('renders hostile ids as text, never as markup', async () => {
    const { page, problems } = await open('queries=50');
    await page.click('#gl-tab-worst');
    await page.fill('#gl-worst-filter', '<img');
    const hostile = '<img src=x onerror=alert(1)>';
    await page.waitForFunction((id) => document.querySelector<HTMLElement>('#gl-worst-table [data-query]')?.dataset['query'] === id, hostile);
    await page.click('#gl-worst-table [data-query]');
    await page.waitForFunction((id) => document.querySelector('#gl-detail-query')?.textContent === id, hostile);
    expect(await page.locator('#gl-predicted-order [data-item="<b>bold</b>"]').count()).toBe(1);
    expect(await page.evaluate(() => document.querySelectorAll('#gl-root img, #gl-root b').length)).toBe(0);
    expect(problems).toEqual([]);
    await page.close();
  });

  it('shows both orders with a line per item and reveals the selected row', async () => {
    const { page } = await open('queries=100');
    await page.click('#gl-tab-worst');
    await page.click('#gl-worst-table [data-query]');
    await page.waitForSelector('#gl-predicted-order [data-item]');
    const items = await page.locator('#gl-predicted-order [data-item]').count();
    expect(await page.locator('#gl-ideal-order [data-item]').count()).toBe(items);
    expect(await page.locator('#gl-detail svg.gl-links path').count()).toBe(items);
    // Keyboard selection: the second item becomes selected in both lists.
    await page.focus('#gl-predicted-order');
    await page.keyboard.press('ArrowDown');
    await page.keyboard.press('ArrowDown');
    const second = await page.getAttribute('#gl-predicted-order [data-item] >> nth=1', 'data-item');
    expect(await page.getAttribute('#gl-predicted-order .gl-order-row.selected', 'data-item')).toBe(second);
    expect(await page.getAttribute('#gl-ideal-order .gl-order-row.selected', 'data-item')).toBe(second);
    await page.click('#gl-reveal-in-file');
    const calls = await page.evaluate(() => (window as unknown as { __host: { calls: { method: string; params: { row?: number } }[] } }).__host.calls.filter((c) => c.method === 'revealRow'));
    expect(calls).toHaveLength(1);
    // The selected item's row is the one revealed.
    const detail = await page.evaluate(() => (window as unknown as { __host: { calls: { method: string; params: unknown }[] } }).__host.calls.filter((c) => c.method === 'queryDetail').length);
    expect(detail).toBeGreaterThan(0);
    expect(calls[0]!.params.row).toBe(Number((second ?? 'sku-').slice(4)));
    await page.close();
  });

  it('keeps the tab and the selected query on a live refresh; shows the file-gone panel', async () => {
    const { page } = await open('queries=100');
    await page.click('#gl-tab-worst');
    const first = await page.getAttribute('#gl-worst-table [data-query] >> nth=0', 'data-query');
    await page.click('#gl-worst-table [data-query]');
    await page.waitForFunction((q) => document.querySelector('#gl-detail-query')?.textContent === q, first);
    await page.evaluate(() => {
      const w = window as unknown as { __host: { send(m: unknown): void } };
      w.__host.send({ kind: 'state', state: { status: 'vanished', path: '/demo/hardware-store/run-a.csv' } });
    });
    expect(await page.isVisible('#gl-vanished')).toBe(true);
    expect(await page.textContent('#gl-vanished')).toContain('run-a.csv');
    // The file comes back: the host sends the recomputed result as 'reloaded'.
    await page.evaluate(() => {
      const w = window as unknown as { __host: { send(m: unknown): void; overview: unknown } };
      w.__host.send({ kind: 'state', state: { status: 'reloaded', mode: 'single', overview: w.__host.overview } });
    });
    await page.waitForSelector('#gl-detail', { state: 'visible' });
    expect(await page.getAttribute('#gl-tab-detail', 'aria-selected')).toBe('true');
    await page.waitForFunction((q) => document.querySelector('#gl-detail-query')?.textContent === q, first);
    await page.close();
  });

  it('shows a dump streaming in as a partial overview in the loading panel, replaced by the full overview', async () => {
    const { page, problems } = await open('queries=100');
    await page.waitForSelector('#gl-headline-value');
    const partial = {
      fileName: '<img src=x onerror=alert(1)>.tsv', headline: 0, queries: 12_345, rows: 1_234_567, bytesRead: 1.2e9, totalBytes: 6.3e9,
      conventions: 'gain exponential', elapsedMs: 4321,
      metrics: [{ key: 'ndcg@10', label: 'NDCG@10', mean: 0.69814, counted: 12_000 }, { key: 'ap', label: 'AP', mean: null, counted: 0 }],
    };
    await page.evaluate((p) => {
      const w = window as unknown as { __host: { send(m: unknown): void } };
      w.__host.send({ kind: 'state', state: { status: 'loading', mode: 'single', label: 'big.tsv', fraction: 0.19, message: 'Streaming…', partial: p } });
    }, partial);
    await page.waitForSelector('#gl-partial-overview', { state: 'visible' });
    expect(await page.isVisible('#gl-overview')).toBe(false);
    expect(await page.textContent('#gl-partial-headline-value')).toBe('0.6981');
    // presentation/partialText.ts: the same words as the command line's progress line.
    expect(await page.textContent('#gl-partial-summary')).toMatch(/^partial: ndcg@10 0\.6981 over 12.345 queries \(1.234.567 rows, 1\.2 of 6\.3 GB read\)$/);
    expect(await page.locator('#gl-partial-overview .gl-card .label').allTextContents()).toEqual(['NDCG@10 so far', 'AP so far']);
    // The card's tooltip counts queries as the card does (presentation's formatCount), not as raw digits.
    const cardCount = await page.textContent('#gl-partial-overview .gl-card .sub');
    expect(cardCount).toMatch(/^12.000 queries$/);
    expect(await page.getAttribute('#gl-partial-overview .gl-card', 'title')).toContain(`Mean over the ${cardCount} scored so far`);
    expect(await page.textContent('#gl-partial-overview')).toContain('<img src=x onerror=alert(1)>.tsv');
    expect(await page.locator('#gl-partial-overview img').count()).toBe(0);
    await page.evaluate(() => {
      const w = window as unknown as { __host: { send(m: unknown): void; overview: unknown } };
      w.__host.send({ kind: 'state', state: { status: 'loaded', mode: 'single', overview: w.__host.overview } });
    });
    await page.waitForSelector('#gl-overview', { state: 'visible' });
    expect(await page.isVisible('#gl-partial-overview')).toBe(false);
    expect(problems).toEqual([]);
    await page.close();
  });

  it('keeps the tab when the host repeats the result it already sent (its answer to a late ready)', async () => {
    const { page } = await open('queries=100');
    await page.click('#gl-tab-worst');
    await page.waitForSelector('#gl-worst-table [data-query]', { state: 'visible' });
    await page.evaluate(() => {
      const w = window as unknown as { __host: { send(m: unknown): void; overview: unknown } };
      w.__host.send({ kind: 'state', state: { status: 'loaded', mode: 'single', overview: w.__host.overview } });
    });
    await page.waitForSelector('#gl-worst-table [data-query]', { state: 'visible' });
    expect(await page.getAttribute('#gl-tab-worst', 'aria-selected')).toBe('true');
    expect(await page.isVisible('#gl-panel-worst')).toBe(true);
    await page.close();
  });

  it('lists segment values for a chosen column', async () => {
    const { page } = await open('queries=200');
    await page.click('#gl-tab-segments');
    await page.waitForSelector('#gl-segments-table .gl-vt-row');
    expect(await page.inputValue('#gl-segment-column')).toBe('locale');
    expect(await page.locator('#gl-segments-table .gl-vt-row').count()).toBe(4);
    await page.close();
  });

  it('asks the host to export what the table shows', async () => {
    const { page } = await open('queries=100');
    await page.click('#gl-tab-worst');
    await page.waitForSelector('#gl-worst-table [data-query]');
    await page.click('#gl-panel-worst button:text("CSV")');
    await page.waitForFunction(() => (window as unknown as { __host: { calls: { method: string }[] } }).__host.calls.some((c) => c.method === 'exportView'));
    const params = await page.evaluate(() => (window as unknown as { __host: { calls: { method: string; params: { columns: string[]; rows: unknown[][]; format: string } }[] } }).__host.calls.find((c) => c.method === 'exportView')!.params);
    expect(params.format).toBe('csv');
    expect(params.columns.slice(0, 3)).toEqual(['#', 'Query', 'NDCG@10']);
    expect(params.rows).toHaveLength(100);
    expect(params.rows[0]![1]).toBe(worstFirst(100)[0]);
    await page.close();
  });
});

describe('error panel', () => {
  it('shows the one-line input error instead of a blank screen', async () => {
    const message = "run.csv:12: expected a number in column 'score' (found \"abc\")";
    const { page } = await open(`error=${encodeURIComponent(message)}`);
    await page.waitForSelector('#gl-error', { state: 'visible' });
    expect(await page.textContent('#gl-error')).toContain(message);
    expect(await page.isVisible('#gl-overview')).toBe(false);
    await page.close();
  });
});

describe('compare mode', () => {
  it('shows wins/ties/losses as integers, the metric table, and the movement of a picked query', async () => {
    const count = 300;
    const { page, problems } = await open(`mode=compare&queries=${count}`);
    await page.waitForSelector('#gl-compare-wins');
    const qs = makeQueries(count);
    expect(await page.textContent('#gl-compare-wins')).toBe(String(qs.filter((q) => q.ndcgB - q.ndcgA > 0.001).length));
    expect(await page.textContent('#gl-compare-ties')).toBe(String(qs.filter((q) => Math.abs(q.ndcgB - q.ndcgA) <= 0.001).length));
    expect(await page.textContent('#gl-compare-losses')).toBe(String(qs.filter((q) => q.ndcgB - q.ndcgA < -0.001).length));
    expect(await page.locator('#gl-compare-table .gl-vt-row').count()).toBe(2);
    await page.click('#gl-tab-deltas');
    await page.waitForSelector('#gl-deltas-table [data-query]');
    const worst = await page.getAttribute('#gl-deltas-table [data-query] >> nth=0', 'data-query');
    await page.click('#gl-deltas-table [data-query]');
    await page.waitForFunction((q) => document.querySelector('#gl-movement-query')?.textContent === q, worst);
    expect(await page.getAttribute('#gl-tab-movement', 'aria-selected')).toBe('true');
    expect(await page.locator('#gl-movement-positions [data-item]').count()).toBeGreaterThan(0);
    expect(problems).toEqual([]);
    await page.close();
  });
});

describe('column layout: no number or header is cut short', () => {
  /** Cells whose content is wider than their box (numbers, headers; query text may end in an ellipsis). */
  const cutCells = (page: Page, root: string) =>
    page.$$eval(
      `${root} .gl-vt-hcell, ${root} .gl-vt-cell.num, ${root} .gl-order-head > span, ${root} .gl-order-row > span.num, ${root} .gl-order-row > .gl-barcell`,
      (cells) => cells.filter((c) => c.scrollWidth > c.clientWidth).map((c) => `${c.textContent} (${c.scrollWidth} > ${c.clientWidth})`),
    );

  async function narrow(query: string, width: number): Promise<Page> {
    const page = await web.browser.newPage({ viewport: { width, height: 700 } });
    await page.goto(`${web.url}?${query}`);
    return page;
  }

  it('worst queries with the full metric set, 100k queries, in a narrow panel: scrolls sideways instead', async () => {
    const page = await narrow('queries=100000&metrics=all', 900);
    await page.click('#gl-tab-worst');
    await page.waitForSelector('#gl-worst-table [data-query]');
    const headers = await page.$$eval('#gl-worst-table .gl-vt-hcell', (cells) => cells.map((c) => (c.textContent ?? '').replace(/ [▲▼]$/, '')));
    for (const full of ['#', 'Query', 'NDCG@10', 'NDCG@5', "Kendall's τ", 'Items', 'Relevant', 'Inversions', 'Inversion cost', 'Share of loss']) expect(headers).toContain(full);
    expect(await cutCells(page, '#gl-worst-table')).toEqual([]);
    // Kendall τ is negative for the worst queries: the sign must show in full.
    const tauColumn = headers.indexOf("Kendall's τ") + 1;
    expect(await page.textContent(`#gl-worst-table [data-index="0"] [aria-colindex="${tauColumn}"]`)).toMatch(/^-\d\.\d{4}$/);
    const viewport = await page.$eval('#gl-worst-table .gl-vt-viewport', (v) => ({ scroll: v.scrollWidth, client: v.clientWidth }));
    expect(viewport.scroll).toBeGreaterThan(viewport.client);
    // Scrolled to the far right: the header moved with the body, the query column stayed at the left.
    const queryLeft = () => page.$eval('#gl-worst-table [data-index="0"] [aria-colindex="2"]', (c) => Math.round(c.getBoundingClientRect().left));
    const before = await queryLeft();
    await page.$eval('#gl-worst-table .gl-vt-viewport', (v) => (v.scrollLeft = v.scrollWidth));
    // Two frames: the scroll event runs in the first, the table redraws in the frame it asked for.
    await page.evaluate(() => new Promise((done) => requestAnimationFrame(() => requestAnimationFrame(() => done(undefined)))));
    expect(await queryLeft()).toBe(before);
    const last = headers.length;
    const lefts = await page.$$eval(`#gl-worst-table [aria-colindex="${last}"]`, (cells) => cells.slice(0, 2).map((c) => Math.round(c.getBoundingClientRect().left)));
    expect(lefts[0]).toBe(lefts[1]);
    const right = await page.$eval('#gl-worst-table', (g) => g.getBoundingClientRect().right);
    const lastRight = await page.$eval(`#gl-worst-table [data-index="0"] [aria-colindex="${last}"]`, (c) => c.getBoundingClientRect().right);
    expect(lastRight).toBeLessThanOrEqual(right);
    // The last of 100 000 rows: a six-digit row number, still whole; virtual scrolling still pages.
    await page.focus('#gl-worst-table');
    await page.keyboard.press('End');
    await page.waitForSelector('#gl-worst-table [data-index="99999"]');
    expect(await page.textContent('#gl-worst-table [data-index="99999"] [aria-colindex="1"]')).toBe('100000');
    expect(await cutCells(page, '#gl-worst-table')).toEqual([]);
    expect(await page.locator('#gl-worst-table .gl-vt-row').count()).toBeLessThan(80);
    await page.close();
  }, 120_000);

  it('compare table, per-query differences, segments and the ranked lists fit their numbers too', async () => {
    const page = await narrow('mode=compare&queries=300', 700);
    await page.waitForSelector('#gl-compare-table .gl-vt-row');
    expect(await cutCells(page, '#gl-compare-table')).toEqual([]);
    await page.click('#gl-tab-deltas');
    await page.waitForSelector('#gl-deltas-table [data-query]');
    expect(await cutCells(page, '#gl-deltas-table')).toEqual([]);
    await page.click('#gl-deltas-table [data-query]');
    await page.waitForSelector('#gl-movement-positions [data-item]');
    expect(await cutCells(page, '#gl-movement')).toEqual([]);
    await page.close();
    const single = await narrow('queries=300&metrics=all&items=1500', 700);
    await single.click('#gl-tab-segments');
    await single.waitForSelector('#gl-segments-table .gl-vt-row');
    expect(await cutCells(single, '#gl-segments-table')).toEqual([]);
    const big = await single.evaluate(() => (window as unknown as { __host: { queries: { id: string }[] } }).__host.queries[0]!.id);
    await single.evaluate((query) => window.dispatchEvent(new MessageEvent('message', { data: { kind: 'showQuery', query } })), big);
    await single.waitForFunction((q) => document.querySelector('#gl-detail-query')?.textContent === q, big);
    await single.waitForSelector('#gl-predicted-order [data-item]');
    expect(await cutCells(single, '#gl-detail')).toEqual([]);
    await single.close();
  }, 60_000);
});
