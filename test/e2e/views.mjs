// Steps that the scenarios share: open a dump in the Gainline editor, read the
// headline, switch tabs, open the worst query, all inside the webview frame.
import { basename } from 'node:path';
import { closeAllEditors, findWebviewFrame, frameText, openFile, openWithFromExplorer, pickQuickItem, reopenWith, runCommand, waitForFrameText } from './harness.mjs';

import { compareExpectations, evalExpectations } from './oracle.mjs';

export const EDITOR_LABEL = 'Gainline Ranked Lists';
const FOUR_DECIMALS = /^-?\d+\.\d{4}$/;

/** The real "Open With…" path: Explorer context menu, then the editor picker. */
export async function openWithPicker(page, relativePath) {
  await openWithFromExplorer(page, relativePath, EDITOR_LABEL);
}

/** The same picker reached from an open text editor ("View: Reopen Editor With..."). */
export async function reopenWithPicker(page, relativePath) {
  await openFile(page, relativePath);
  await reopenWith(page, EDITOR_LABEL);
}

/** Opens the file, then runs "Gainline: Inspect Ranked Lists" on the active editor. */
export async function openWithInspect(page, relativePath) {
  await openFile(page, relativePath);
  await runCommand(page, 'Gainline: Inspect Ranked Lists');
}

/** Waits for a headline value with exactly four decimals; optionally a given one. */
export async function readHeadline(page, expected, { timeoutMs = 90_000 } = {}) {
  const { frame, text } = await waitForFrameText(page, '#gl-headline-value',
    (t) => FOUR_DECIMALS.test(t) && (expected === undefined || t === expected), { timeoutMs });
  return { frame, value: text };
}

export async function showTab(frame, tabId) {
  await frame.locator(`#${tabId}`).click();
}

export async function rowQueries(frame, limit = 5) {
  return frame.locator('#gl-worst-table [data-query]').evaluateAll(
    (rows, n) => rows.slice(0, n).map((r) => r.getAttribute('data-query')), limit);
}

/** First row of the worst-queries table, once the table has rows. */
export async function firstWorstRow(frame) {
  await showTab(frame, 'gl-tab-worst');
  const row = frame.locator('#gl-worst-table [data-query]').first();
  await row.waitFor({ state: 'visible', timeout: 30_000 });
  // Rows are sorted by the host; wait until the row with index 0 is there.
  const first = frame.locator('#gl-worst-table [data-query][data-index="0"]');
  const target = (await first.count()) > 0 ? first : row;
  return { row: target, query: await target.getAttribute('data-query') };
}

/** Opens `query`'s detail by clicking its row and waits for the detail header. */
export async function openDetailFromRow(page, frame, row, query) {
  await row.click();
  const shown = await frame.locator('#gl-detail').waitFor({ state: 'visible', timeout: 5_000 }).then(() => true, () => false);
  if (!shown) await showTab(frame, 'gl-tab-detail');
  await waitForFrameText(page, '#gl-detail-query', (t) => t === query.replace(/\s+/g, ' ').trim(), { timeoutMs: 30_000 });
}

export async function itemIds(frame, listSelector) {
  return frame.locator(`${listSelector} [data-item]`).evaluateAll((rows) => rows.map((r) => r.getAttribute('data-item')));
}

/** "Gainline: Compare Two Runs" from the palette, answering its two file questions. */
export async function compareFromPalette(page, baselineLabel, otherLabel) {
  await runCommand(page, 'Gainline: Compare Two Runs');
  await pickQuickItem(page, baselineLabel);
  // The second question reuses the widget; wait for its own title so the
  // click cannot land in the first list while it closes.
  await page.locator('.quick-input-widget .quick-input-title', { hasText: '(B)' })
    .waitFor({ state: 'visible', timeout: 15_000 });
  await pickQuickItem(page, otherLabel);
  return findWebviewFrame(page, '#gl-compare', { timeoutMs: 90_000 });
}

export async function integerText(frame, selector) {
  const text = await frameText(frame, selector);
  return /^\d+$/.test(text) ? Number(text) : NaN;
}

/** From a clean slate, run A opened with "Inspect" and its headline checked against the CLI. */
export async function inspectRunA(ctx) {
  const expected = evalExpectations(ctx.files.runA);
  await closeAllEditors(ctx.page);
  await openWithInspect(ctx.page, ctx.rel(ctx.files.runA));
  const { frame } = await readHeadline(ctx.page, expected.meanText);
  return { expected, frame };
}

/** From a clean slate, runs A and B compared from the palette, with the CLI's comparison of them. */
export async function compareRunsAB(ctx) {
  const expected = compareExpectations(ctx.files.runA, ctx.files.runB);
  await closeAllEditors(ctx.page);
  const frame = await compareFromPalette(ctx.page, basename(ctx.files.runA), basename(ctx.files.runB));
  return { expected, frame };
}
