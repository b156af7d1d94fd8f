// Times the webview in Chromium against the fake host (not a pass/fail test; prints figures).
//   node test/webview/harness/measure.mjs
// Reports: detail switch (click in the worst table → query detail drawn) for ordinary and very long
// queries, against the bare request round trip to the fake host in the same page (the peer), and
// the time to draw the virtual grid after a jump-scroll in 100k queries.
import * as esbuild from 'esbuild';
import { chromium } from 'playwright-core';
import { join } from 'node:path';

// Inside node_modules so the bundle's bare imports (esbuild) resolve.
const out = join('node_modules', '.cache', 'gl-measure', 'buildHarness.mjs');
await esbuild.build({ entryPoints: ['test/webview/harness/buildHarness.ts'], bundle: true, platform: 'node', format: 'esm', packages: 'external', outfile: out, logLevel: 'error' });
const { startHarness } = await import(join(process.cwd(), out));
const harness = await startHarness();
const browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: ['--no-sandbox'] });
const median = (xs) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];

async function detailSwitch(items, rounds) {
  const page = await browser.newPage({ viewport: { width: 1280, height: 800 } });
  await page.goto(`${harness.url}?queries=2000&items=${items}`);
  await page.click('#gl-tab-worst');
  await page.waitForSelector('#gl-worst-table [data-query]');
  const ids = await page.$$eval('#gl-worst-table [data-query]', (rows) => rows.slice(0, 12).map((r) => r.dataset.query));
  const big = items > 0 ? (await page.evaluate(() => window.__host.queries[0].id)) : undefined;
  const targets = big ? [big] : ids;
  const full = [];
  const lists = [];
  const roundTrip = [];
  for (let i = 0; i < rounds; i++) {
    const q = targets[i % targets.length];
    const t = await page.evaluate(async (query) => {
      const t0 = performance.now();
      let listsAt = 0;
      // The lists are drawn synchronously when the answer arrives: catch that moment exactly.
      const observer = new MutationObserver(() => {
        if (!listsAt && document.querySelector('#gl-detail-query')?.textContent === query && document.querySelector('#gl-predicted-order')) listsAt = performance.now();
      });
      observer.observe(document.querySelector('#gl-detail'), { childList: true, subtree: true, characterData: true });
      window.dispatchEvent(new MessageEvent('message', { data: { kind: 'showQuery', query } }));
      await new Promise((resolve) => {
        const check = () => (listsAt && !document.querySelector('#gl-detail[aria-busy]') ? resolve() : requestAnimationFrame(check));
        check();
      });
      // The chart is drawn on the frame after the lists; wait for it too.
      await new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(() => r())));
      observer.disconnect();
      return { lists: listsAt - t0, full: performance.now() - t0 };
    }, q);
    lists.push(t.lists);
    full.push(t.full);
    roundTrip.push(await page.evaluate(async (query) => {
      const t0 = performance.now();
      await new Promise((resolve) => {
        const id = 900000 + Math.floor(Math.random() * 1e5);
        const onMessage = (e) => {
          if (e.data?.kind === 'response' && e.data.id === id) {
            window.removeEventListener('message', onMessage);
            resolve();
          }
        };
        window.addEventListener('message', onMessage);
        acquireVsCodeApi().postMessage({ kind: 'request', id, method: 'queryDetail', params: { query, maxPairs: 200 } });
      });
      return performance.now() - t0;
    }, q));
    // Switch away so the next round redraws.
    await page.evaluate((query) => window.dispatchEvent(new MessageEvent('message', { data: { kind: 'showQuery', query } })), ids[(i + 1) % ids.length]);
    await page.waitForTimeout(30);
  }
  await page.close();
  return { full: median(full), lists: median(lists), roundTrip: median(roundTrip) };
}

async function scrollJump() {
  const page = await browser.newPage({ viewport: { width: 1280, height: 800 } });
  await page.goto(`${harness.url}?queries=100000`);
  await page.click('#gl-tab-worst');
  await page.waitForSelector('#gl-worst-table [data-query]');
  const times = [];
  for (let i = 1; i <= 15; i++) {
    times.push(await page.evaluate(async (fraction) => {
      const vp = document.querySelector('#gl-worst-table .gl-vt-viewport');
      const t0 = performance.now();
      vp.scrollTop = fraction * (vp.scrollHeight - vp.clientHeight);
      await new Promise((resolve) => {
        const check = () => {
          const rows = [...document.querySelectorAll('#gl-worst-table .gl-vt-row')];
          const loaded = rows.length > 0 && rows.every((r) => r.dataset.query !== undefined);
          const inView = rows.some((r) => Number(r.dataset.index) >= Math.floor(fraction * 99000));
          if (loaded && inView) resolve();
          else requestAnimationFrame(check);
        };
        requestAnimationFrame(check);
      });
      return performance.now() - t0;
    }, i / 16));
  }
  const domRows = await page.locator('#gl-worst-table .gl-vt-row').count();
  await page.close();
  return { median: median(times), domRows };
}

const small = await detailSwitch(0, 25);
const large = await detailSwitch(3000, 9);
const scroll = await scrollJump();
console.log(`detail switch, ~12-item queries: lists drawn after ${small.lists.toFixed(1)} ms, with chart ${small.full.toFixed(1)} ms (medians; bare request round trip ${small.roundTrip.toFixed(1)} ms)`);
console.log(`detail switch, 3000-item query (first 200 rows drawn): lists after ${large.lists.toFixed(1)} ms, with chart ${large.full.toFixed(1)} ms (bare round trip ${large.roundTrip.toFixed(1)} ms; lists/round trip ${(large.lists / large.roundTrip).toFixed(1)}x)`);
console.log(`jump-scroll in 100k queries until the new page is drawn: ${scroll.median.toFixed(1)} ms median; rows in the DOM: ${scroll.domRows}`);
await browser.close();
await harness.close();
