// Comparing two runs as a new user does: Movement opens on the biggest mover, a query picked in
// Per-query Δ shows in Query detail too, segments account for every query and carry an interval and
// tests, the status bar counts the compared queries, the panel survives a window reload, and
// Gainline's own activity-bar container holds the dumps, the recent comparisons and Go to Query.
import { basename } from 'node:path';
import { closeAllEditors, findWebviewFrame, focusWorkbench, reloadWindow, runCommand, waitForFrameText, waitUntil } from '../harness.mjs';
import { compareExpectations, evalExpectations } from '../oracle.mjs';
import { compareFromPalette, compareRunsAB, integerText, openWithInspect, readHeadline, showTab } from '../views.mjs';
import { headlineStatus, statusHoverText } from './firstHour.mjs';

function assert(condition, message) {
  if (!condition) throw new Error(message);
}

async function winsShown(frame) {
  return waitUntil(async () => {
    const wins = await integerText(frame, '#gl-compare-wins').catch(() => NaN);
    return Number.isInteger(wins) ? wins : null;
  }, { timeoutMs: 90_000, what: 'integer wins' });
}

export const compareFirstHour = {
  name: 'compare: Movement opens on the biggest mover, picks reach Query detail, segments account for every query with an interval and tests, the status bar counts compared queries',
  async run(ctx) {
    const expected = compareExpectations(ctx.files.runA, ctx.files.runB);
    const head = expected.json.metrics.find((m) => m.key === expected.json.headline);
    const movers = [expected.json.biggestDrops[0], expected.json.biggestGains[0]].filter(Boolean);
    const biggest = movers.sort((x, y) => Math.abs(y.delta) - Math.abs(x.delta))[0].query;
    await closeAllEditors(ctx.page);
    const frame = await compareFromPalette(ctx.page, basename(ctx.files.runA), basename(ctx.files.runB));
    await winsShown(frame);
    // Movement starts on the query that moved most.
    await showTab(frame, 'gl-tab-movement');
    await waitForFrameText(ctx.page, '#gl-movement-query', (t) => t === biggest, { timeoutMs: 30_000 });
    // A query picked in Per-query Δ shows in Movement and in Query detail.
    await showTab(frame, 'gl-tab-deltas');
    const row = frame.locator('#gl-deltas-table [data-query][data-index="3"]');
    await row.waitFor({ state: 'visible', timeout: 30_000 });
    const picked = await row.getAttribute('data-query');
    await row.click();
    await waitForFrameText(ctx.page, '#gl-movement-query', (t) => t === picked, { timeoutMs: 30_000 });
    await showTab(frame, 'gl-tab-detail');
    await waitForFrameText(ctx.page, '#gl-detail-query', (t) => t === picked, { timeoutMs: 30_000 });
    // Segments: wins + ties + losses + skipped = queries in every locale; skipped add up to the CLI's.
    await showTab(frame, 'gl-tab-segments');
    const segments = await waitUntil(async () => {
      const rows = await frame.locator('#gl-segments-table .gl-vt-row[data-index]').evaluateAll((rs) => rs.map((r) => [...r.querySelectorAll('[role="gridcell"]')].map((c) => (c.textContent ?? '').trim())));
      return rows.length > 0 && rows.every((r) => r.length > 5) ? rows : null;
    }, { what: 'segment rows', timeoutMs: 60_000 });
    const headers = await frame.locator('#gl-segments-table .gl-vt-hcell').evaluateAll((cs) => cs.map((c) => (c.textContent ?? '').replace(/[▲▼]/g, '').trim()));
    const at = (name) => headers.findIndex((h) => h.startsWith(name));
    for (const name of ['Queries', 'Skipped', 'Wins', 'Ties', 'Losses', '95% interval', 'p (t-test)', 'p (randomization)']) assert(at(name) >= 0, `segments have no "${name}" column: ${JSON.stringify(headers)}`);
    const num = (cells, name) => Number(cells[at(name)].replace(/[^\d.-]/g, ''));
    let skipped = 0;
    for (const cells of segments) {
      const sum = num(cells, 'Wins') + num(cells, 'Ties') + num(cells, 'Losses') + num(cells, 'Skipped');
      assert(sum === num(cells, 'Queries'), `segment ${cells[0]}: wins + ties + losses + skipped = ${sum}, queries ${num(cells, 'Queries')}`);
      assert(/to/.test(cells[at('95% interval')]) && /\d/.test(cells[at('p (t-test)')]) && /\d/.test(cells[at('p (randomization)')]), `segment ${cells[0]} lacks its interval or tests: ${JSON.stringify(cells)}`);
      skipped += num(cells, 'Skipped');
    }
    assert(skipped === head.skipped, `segments skip ${skipped} queries, the CLI ${head.skipped}`);
    // The status bar counts the queries that entered the comparison.
    const item = headlineStatus(ctx.page, 'NDCG@10');
    await item.waitFor({ state: 'visible', timeout: 15_000 });
    const tooltip = await statusHoverText(ctx.page, item);
    assert(tooltip.includes(`${head.paired} of ${head.paired + head.skipped}`), `status tooltip does not count ${head.paired} compared queries: ${JSON.stringify(tooltip)}`);
    await ctx.page.mouse.move(0, 0);
  },
};

export const compareSurvivesReload = {
  name: 'a compare panel comes back after a window reload',
  async run(ctx) {
    const { expected, frame } = await compareRunsAB(ctx);
    assert(await winsShown(frame) === expected.wins, 'wins differ from the CLI before the reload');
    await reloadWindow(ctx.page);
    const restored = await findWebviewFrame(ctx.page, '#gl-compare', { timeoutMs: 90_000 });
    assert(await winsShown(restored) === expected.wins, 'after the reload the panel shows other wins');
  },
};

export const gainlineContainer = {
  name: 'Gainline\'s activity-bar container lists the dumps and the recent comparison, and Go to Query opens a query from the keyboard',
  async run(ctx) {
    const expected = evalExpectations(ctx.files.runA);
    const target = expected.json.queries.find((q) => /\s/.test(q.query) && !q.skipped).query;
    await closeAllEditors(ctx.page);
    const icon = ctx.page.locator('.activitybar .action-item a[aria-label^="Gainline"], .activitybar .action-item[aria-label^="Gainline"]').first();
    await icon.waitFor({ state: 'visible', timeout: 30_000 });
    await icon.click();
    const sidebar = ctx.page.locator('.sidebar');
    await sidebar.locator('.pane-header', { hasText: 'Ranked Lists' }).waitFor({ state: 'visible', timeout: 15_000 });
    const pane = (title) => sidebar.locator('.pane').filter({ has: ctx.page.locator('.pane-header', { hasText: title }) });
    const dumps = pane('Ranked Lists').locator('.monaco-list-row').filter({ hasText: /^\s*model-a\.csv/ }).first();
    await dumps.waitFor({ state: 'visible', timeout: 60_000 }).catch(() => { throw new Error('the Ranked Lists view does not list model-a.csv'); });
    const recent = pane('Recent Comparisons').locator('.monaco-list-row', { hasText: `${basename(ctx.files.runA)} ↔ ${basename(ctx.files.runB)}` }).first();
    await recent.waitFor({ state: 'visible', timeout: 15_000 }).catch(() => { throw new Error('Recent Comparisons does not list the comparison made earlier in the run'); });
    const rect = await sidebar.boundingBox();
    const last = await sidebar.locator('.monaco-list-row').last().boundingBox();
    assert(rect && last && last.y + last.height <= rect.y + rect.height + 1, 'the last row of the Gainline side bar is cut off');
    await ctx.shot('gainline-container');
    // Go to Query: the keyboard shortcut inside the view, type part of a query, Enter.
    await openWithInspect(ctx.page, ctx.rel(ctx.files.runA));
    const { frame } = await readHeadline(ctx.page, expected.meanText);
    await frame.locator('#gl-tab-overview').focus();
    await ctx.page.keyboard.press('Control+Alt+KeyQ');
    const input = ctx.page.locator('.quick-input-widget input.input');
    const opened = await input.waitFor({ state: 'visible', timeout: 5_000 }).then(() => true, () => false);
    assert(opened, 'Ctrl+Alt+Q inside the view opens no picker');
    await waitUntil(async () => (await ctx.page.locator('.quick-input-list .monaco-list-row').count()) > 0, { what: 'queries in the picker', timeoutMs: 30_000 });
    await input.fill(target);
    await ctx.page.locator('.quick-input-list .monaco-list-row', { hasText: target }).first().waitFor({ state: 'visible', timeout: 10_000 });
    await ctx.page.keyboard.press('Enter');
    await waitForFrameText(ctx.page, '#gl-detail-query', (t) => t === target, { timeoutMs: 30_000 });
    await focusWorkbench(ctx.page);
    await runCommand(ctx.page, 'View: Show Explorer');
  },
};
