// One dump through the real UI: "Open With…", the headline against the CLI,
// the worst query and its detail, and a live rewrite of the file on disk.
import { copyFileSync, rmSync } from 'node:fs';
import { closeAllEditors, explorerContextMenu, findWebviewFrame, frameText, waitForFrameText } from '../harness.mjs';
import { evalExpectations } from '../oracle.mjs';
import { firstWorstRow, inspectRunA, itemIds, openDetailFromRow, openWithInspect, openWithPicker, readHeadline, reopenWithPicker, showTab } from '../views.mjs';

function assert(condition, message) {
  if (!condition) throw new Error(message);
}

export const openWithShowsHeadline = {
  name: '"Open With…" on a demo dump shows the overview with the CLI\'s NDCG@10',
  async run(ctx) {
    const expected = evalExpectations(ctx.files.runA);
    await closeAllEditors(ctx.page);
    await openWithPicker(ctx.page, ctx.rel(ctx.files.runA));
    const { frame, value } = await readHeadline(ctx.page);
    assert(value === expected.meanText, `headline shows ${value}, CLI says ${expected.meanText}`);
    const label = await frameText(frame, '#gl-headline-label');
    assert(/NDCG@10/i.test(label), `headline label is "${label}", expected NDCG@10`);
    assert(await frame.locator('#gl-overview').isVisible(), '#gl-overview is not visible');
    // The score diagnostics follow the headline (their own request, after the histogram is drawn).
    await frame.locator('#gl-scores-by-grade tbody tr').first().waitFor({ state: 'attached', timeout: 30_000 });
    await frame.locator('#gl-dcg-by-position tbody tr').first().waitFor({ state: 'attached', timeout: 30_000 });
    await ctx.shot('overview', { readme: true });
  },
};

export const parquetFromExplorerMenu = {
  name: 'Explorer menu "Inspect Ranked Lists" on the Parquet demo run shows the CLI\'s headline',
  async run(ctx) {
    const expected = evalExpectations(ctx.files.runBParquet);
    await closeAllEditors(ctx.page);
    await explorerContextMenu(ctx.page, ctx.rel(ctx.files.runBParquet), 'Inspect Ranked Lists');
    const { value } = await readHeadline(ctx.page);
    assert(value === expected.meanText, `headline shows ${value}, CLI says ${expected.meanText} for the Parquet file`);
  },
};

export const reopenWithAndFilter = {
  name: '"Reopen Editor With…" on an open text editor works too, and the worst-queries filter narrows the table',
  async run(ctx) {
    const expected = evalExpectations(ctx.files.runB);
    await closeAllEditors(ctx.page);
    await reopenWithPicker(ctx.page, ctx.rel(ctx.files.runB));
    const { frame } = await readHeadline(ctx.page, expected.meanText);
    const { query } = await firstWorstRow(frame);
    // Filter by the worst query's full id: that row must remain, and every row must contain the text.
    await frame.locator('#gl-worst-filter').fill(query);
    const rows = await waitUntilRows(frame, (ids) => ids.length > 0 && ids.every((id) => id.toLowerCase().includes(query.toLowerCase())));
    assert(rows.includes(query), `after filtering by "${query}" the table shows ${JSON.stringify(rows)}`);
    const matching = expected.json.queries.filter((q) => q.query.toLowerCase().includes(query.toLowerCase())).length;
    assert(rows.length <= matching, `filter shows ${rows.length} rows, only ${matching} query ids contain "${query}"`);
  },
};

async function waitUntilRows(frame, predicate) {
  let last = [];
  const deadline = Date.now() + 15_000;
  while (Date.now() < deadline) {
    last = await frame.locator('#gl-worst-table [data-query]').evaluateAll((r) => r.map((x) => x.getAttribute('data-query')));
    if (predicate(last)) return last;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`worst-queries rows never matched the filter; last: ${JSON.stringify(last.slice(0, 5))}`);
}

export const worstQueryDetail = {
  name: 'worst-queries table starts with the CLI\'s worst query; its detail shows both orders and inverted pairs',
  async run(ctx) {
    const { expected, frame } = await inspectRunA(ctx);
    const { row, query } = await firstWorstRow(frame);
    assert(expected.worstQueries.includes(query),
      `first row is "${query}", CLI's lowest ${expected.headline} (${expected.lowest}) is ${JSON.stringify(expected.worstQueries)}`);
    await ctx.shot('worst-queries', { readme: true });
    await openDetailFromRow(ctx.page, frame, row, query);
    const predicted = await itemIds(frame, '#gl-predicted-order');
    const ideal = await itemIds(frame, '#gl-ideal-order');
    const cliRow = expected.json.queries.find((q) => q.query === query);
    assert(predicted.length > 0, 'predicted order lists no item');
    assert(predicted.length === ideal.length, `predicted lists ${predicted.length} items, ideal ${ideal.length}`);
    assert(cliRow === undefined || predicted.length === cliRow.items,
      `predicted order lists ${predicted.length} items, CLI counts ${cliRow?.items}`);
    assert([...predicted].sort().join('\n') === [...ideal].sort().join('\n'), 'predicted and ideal orders hold different items');
    const pairs = frame.locator('#gl-inverted-pairs');
    assert(await pairs.isVisible(), '#gl-inverted-pairs is not visible');
    const pairsText = await frameText(frame, '#gl-inverted-pairs');
    assert(pairsText.length > 0, '#gl-inverted-pairs is empty');
    if (cliRow && cliRow.inversions > 0) {
      assert(!/no inverted pair/i.test(pairsText), `CLI counts ${cliRow.inversions} inversions but the panel says none`);
    }
    await ctx.shot('detail', { readme: true });
  },
};

export const rewriteKeepsSelection = {
  name: 'rewriting the dump on disk refreshes the view and keeps the selected query; deleting it says so',
  async run(ctx) {
    const before = evalExpectations(ctx.files.runA);
    const after = evalExpectations(ctx.files.runB);
    assert(before.meanText !== after.meanText, 'test data: both runs have the same headline, the refresh would be invisible');
    copyFileSync(ctx.files.runA, ctx.files.live);
    await closeAllEditors(ctx.page);
    await openWithInspect(ctx.page, ctx.rel(ctx.files.live));
    const { frame } = await readHeadline(ctx.page, before.meanText);
    const { row, query } = await firstWorstRow(frame);
    await openDetailFromRow(ctx.page, frame, row, query);
    copyFileSync(ctx.files.runB, ctx.files.live);
    const refreshed = await readHeadline(ctx.page, after.meanText, { timeoutMs: 60_000 });
    const detailFrame = await findWebviewFrame(ctx.page, '#gl-detail-query');
    const stillSelected = await frameText(detailFrame, '#gl-detail-query');
    assert(stillSelected === query, `after the rewrite the detail shows "${stillSelected}", expected "${query}"`);
    await showTab(refreshed.frame, 'gl-tab-overview');
    await waitForFrameText(ctx.page, '#gl-headline-value', (t) => t === after.meanText, { timeoutMs: 10_000 });
    // Deleting the file replaces the view with the "file vanished" notice.
    rmSync(ctx.files.live);
    const vanished = await findWebviewFrame(ctx.page, '#gl-vanished', { timeoutMs: 30_000 });
    await vanished.locator('#gl-vanished').waitFor({ state: 'visible', timeout: 30_000 });
    copyFileSync(ctx.files.runA, ctx.files.live);
  },
};
