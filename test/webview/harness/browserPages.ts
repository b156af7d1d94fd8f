/**
 * What each browser test file of the webview sets up: the harness page served (buildHarness.ts) and the
 * system Chromium started before its tests, both stopped after them, and pages opened on the harness
 * with their console errors, uncaught errors and dialogs collected, for the tests to expect none.
 */
import { existsSync } from 'node:fs';
import { afterAll, beforeAll } from 'vitest';
import { chromium, type Browser, type Page } from 'playwright-core';
import { startHarness, type Harness } from './buildHarness';

const CHROMIUM = '/usr/bin/chromium';

export interface HarnessBrowser {
  /** The harness page's address (once the file's tests run). */
  readonly url: string;
  readonly browser: Browser;
  /** A new page at the harness with `query` (e.g. `queries=500`, `mode=series`). */
  open(query: string, viewport: { width: number; height: number }): Promise<{ page: Page; problems: string[] }>;
}

/** Call at the top of a test file: registers the file's start and stop hooks. */
export function useHarnessBrowser(): HarnessBrowser {
  let harness: Harness | undefined;
  let browser: Browser | undefined;

  beforeAll(async () => {
    if (!existsSync(CHROMIUM)) throw new Error(`${CHROMIUM} is missing: install the chromium package to run the webview browser tests`);
    harness = await startHarness();
    browser = await chromium.launch({ executablePath: CHROMIUM, args: ['--no-sandbox'] });
  }, 120_000);

  afterAll(async () => {
    await browser?.close();
    await harness?.close();
  });

  return {
    get url() {
      if (!harness) throw new Error('the webview harness is not started (use the page inside a test)');
      return harness.url;
    },
    get browser() {
      if (!browser) throw new Error('Chromium is not started (use the browser inside a test)');
      return browser;
    },
    async open(query, viewport) {
      const page = await this.browser.newPage({ viewport });
      const problems: string[] = [];
      page.on('console', (m) => {
        if (m.type() === 'error') problems.push(m.text());
      });
      page.on('pageerror', (e) => problems.push(e.message));
      page.on('dialog', (d) => {
        problems.push(`dialog opened: ${d.message()}`);
        void d.dismiss();
      });
      await page.goto(`${this.url}?${query}`);
      return { page, problems };
    },
  };
}
