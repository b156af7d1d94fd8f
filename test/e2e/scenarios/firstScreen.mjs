// How long the first screen takes, measured from the click on "Inspect Ranked Lists" in the
// Explorer's menu to the headline on screen: on the 300-query demo after a window reload (cold
// extension host and engine thread), again once warm, and on a 1M-row dump written for the run.
// Figures go to the log and test-artifacts/first-screen.json, each with its timeline from the click
// (activation, the view's opening, the request, engine thread ready, read, scored, answer; the page's
// start, result, paint; headline seen; score diagnostics seen), from the extension's log line and the
// page's marks; the bounds asserted are generous,
// because the machine is shared and a tight bound would fail for reasons outside the code.
import { readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { closeAllEditors, reloadWindow, sleep, waitUntil } from '../harness.mjs';
import { evalExpectations } from '../oracle.mjs';
import { REPO_ROOT, RUN_DIR } from '../../support/code-server-install.mjs';
import { writeLargeDump } from '../../support/demo-large.mjs';

const FOUR_DECIMALS = /^-?\d+\.\d{4}$/;

function assert(condition, message) {
  if (!condition) throw new Error(message);
}

/** Opens the Explorer menu of `relativePath`, waits for the entry, and returns a function that clicks it. */
async function armMenuEntry(page, relativePath, entry) {
  const tree = page.locator('.explorer-folders-view');
  const parts = relativePath.split('/');
  for (const folder of parts.slice(0, -1)) {
    const row = tree.locator(`.monaco-list-row[aria-label=${JSON.stringify(folder)}]`).first();
    await row.waitFor({ state: 'visible', timeout: 15_000 });
    if (await row.getAttribute('aria-expanded') === 'false') await row.click();
  }
  const fileRow = tree.locator(`.monaco-list-row[aria-label=${JSON.stringify(parts.at(-1))}]`).first();
  await fileRow.waitFor({ state: 'visible', timeout: 15_000 });
  const item = page.locator('.monaco-menu .action-label', { hasText: new RegExp(`^\\s*${entry}\\s*$`) });
  await waitUntil(async () => {
    await fileRow.click({ button: 'right' });
    if (await item.waitFor({ state: 'visible', timeout: 2_000 }).then(() => true, () => false)) return true;
    await page.keyboard.press('Escape');
    return false;
  }, { what: `the "${entry}" menu entry`, timeoutMs: 60_000, intervalMs: 500 });
  await item.hover();
  // The menu ignores a click that lands right after it opened; this settle is before the clock starts.
  await sleep(300);
  return async () => {
    await item.click();
    return Date.now();
  };
}

/** Polls every webview frame for the headline every 20 ms; returns when it shows four decimals. */
async function headlineAfter(page, started, timeoutMs) {
  const deadline = started + timeoutMs;
  while (Date.now() < deadline) {
    for (const frame of page.frames()) {
      if (frame === page.mainFrame() || frame.isDetached()) continue;
      const text = await frame.evaluate(() => {
        const value = document.querySelector('#gl-headline-value');
        const meta = document.querySelector('#gl-overview > p.gl-muted');
        return value ? { value: value.textContent ?? '', meta: meta?.textContent ?? '' } : null;
      }).catch(() => null);
      if (text && FOUR_DECIMALS.test(text.value.trim())) {
        const computed = /computed in ([\d\s\u202f,]+) ms/.exec(text.meta);
        return { ms: Date.now() - started, value: text.value.trim(), computeMs: computed ? Number(computed[1].replace(/[^\d]/g, '')) : null };
      }
    }
    await sleep(20);
  }
  throw new Error(`no headline within ${timeoutMs} ms of the click`);
}

/** Polls the webview frames until the overview's score diagnostics (asked for after the headline) are shown. */
async function diagnosticsAfter(page, started, timeoutMs) {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    for (const frame of page.frames()) {
      if (frame === page.mainFrame() || frame.isDetached()) continue;
      const marks = await frame.evaluate(() => {
        if (!document.querySelector('#gl-scores-by-grade tbody tr') || !document.querySelector('#gl-dcg-by-position tbody tr')) return null;
        // The page's own marks (webview/src/main.ts, app.ts) as epoch ms: its start, script, ready, result, shown, painted.
        const found = { 'page start': performance.timeOrigin };
        for (const m of performance.getEntriesByType('mark')) if (m.name.startsWith('gainline-')) found[`page ${m.name.slice(9)}`] = performance.timeOrigin + m.startTime;
        return found;
      }).catch(() => null);
      if (marks) return { ms: Date.now() - started, page: Object.fromEntries(Object.entries(marks).map(([name, at]) => [name, Math.round(at - started)])) };
    }
    await sleep(20);
  }
  throw new Error(`no score diagnostics within ${timeoutMs} ms of the click`);
}

/** The extension's own account of the last first read of `name` (its output channel's log file). */
function lastReadLine(name) {
  const logs = [];
  const walk = (dir) => {
    for (const entry of readdirSync(dir, { withFileTypes: true })) {
      const path = join(dir, entry.name);
      if (entry.isDirectory()) walk(path);
      else if (/Gainline\.log$/.test(entry.name)) logs.push(path);
    }
  };
  try {
    walk(join(RUN_DIR, 'profile-e2e', 'user-data', 'logs'));
  } catch {
    return null;
  }
  const newest = logs.sort((a, b) => statSync(b).mtimeMs - statSync(a).mtimeMs)[0];
  if (!newest) return null;
  const lines = readFileSync(newest, 'utf8').split('\n').filter((l) => l.includes(`read ${name}:`) && l.includes('before the request'));
  return lines.at(-1)?.replace(/^.*?\] /, '') ?? null;
}

/**
 * The log line's timeline (epoch ms of activation, the view's opening, the request, the engine thread
 * ready, the worker's receipt, read, scored, the answer) as ms after the click, with the headline last.
 */
function timelineFromClick(split, clickedAt, shownMs) {
  const listed = /timeline in epoch ms: ([^)]*)\)/.exec(split ?? '')?.[1];
  if (!listed) return null;
  const steps = {};
  for (const part of listed.split(', ')) {
    const match = /^(.*) (\d+)$/.exec(part);
    if (match) steps[match[1]] = Number(match[2]) - clickedAt;
  }
  return { ...steps, headline: shownMs };
}

async function timeOpen(ctx, relativePath, timeoutMs) {
  await closeAllEditors(ctx.page);
  const click = await armMenuEntry(ctx.page, relativePath, 'Inspect Ranked Lists');
  const started = await click();
  const shown = await headlineAfter(ctx.page, started, timeoutMs);
  const diagnostics = await diagnosticsAfter(ctx.page, started, timeoutMs);
  const name = relativePath.split('/').at(-1);
  // The log line is written as the result is sent; give the file a moment to reach the disk.
  const split = await waitUntil(() => lastReadLine(name), { what: 'the Gainline log line', timeoutMs: 10_000 }).catch(() => null);
  const timeline = timelineFromClick(split, started, shown.ms);
  return { ...shown, split, timeline: timeline && { ...timeline, ...diagnostics.page, headline: shown.ms, diagnostics: diagnostics.ms } };
}

export const firstScreenTimes = {
  name: 'first screen: the headline appears soon after the click, on the demo (cold and warm) and on 1M rows',
  async run(ctx) {
    const expected = evalExpectations(ctx.files.runB);
    // Cold: a reloaded window has a fresh extension host (no editor is restored to start it early).
    await closeAllEditors(ctx.page);
    await reloadWindow(ctx.page);
    const cold = await timeOpen(ctx, ctx.rel(ctx.files.runB), 60_000);
    assert(cold.value === expected.meanText, `headline ${cold.value}, CLI says ${expected.meanText}`);
    const warm = await timeOpen(ctx, ctx.rel(ctx.files.runB), 60_000);
    const large = join(ctx.files.root, 'e2e', 'large-1m.csv');
    writeLargeDump(large, 1_000_000, 40_000, 'kettlewood-e2e-1m');
    let big;
    try {
      big = await timeOpen(ctx, ctx.rel(large), 180_000);
    } finally {
      await closeAllEditors(ctx.page);
      rmSync(large, { force: true });
    }
    const figures = {
      loadAverage: (await import('node:os')).loadavg()[0],
      demoColdMs: cold.ms, demoColdComputeMs: cold.computeMs, demoColdSplit: cold.split, demoColdTimeline: cold.timeline,
      demoWarmMs: warm.ms, demoWarmComputeMs: warm.computeMs, demoWarmSplit: warm.split, demoWarmTimeline: warm.timeline,
      rows1MMs: big.ms, rows1MComputeMs: big.computeMs, rows1MSplit: big.split, rows1MTimeline: big.timeline,
    };
    ctx.log(`  first screen: ${JSON.stringify(figures)}`);
    writeFileSync(join(REPO_ROOT, 'test-artifacts', 'first-screen.json'), JSON.stringify(figures, null, 2) + '\n');
    // Generous bounds (targets: 1 s on the demo, 3 s on 1M rows; see the log for the figures).
    assert(warm.ms < 10_000, `demo headline after ${warm.ms} ms (bound 10 s)`);
    assert(big.ms < 60_000, `1M-row headline after ${big.ms} ms (bound 60 s)`);
  },
};
