// Hostile ids stay text, and a malformed dump shows an error panel naming the file.
import { basename } from 'node:path';
import { closeAllEditors, sleep, waitForFrameText } from '../harness.mjs';
import { evalExpectations, evalFailure } from '../oracle.mjs';
import { firstWorstRow, openDetailFromRow, openWithInspect, readHeadline } from '../views.mjs';
import { HOSTILE_ITEM, HOSTILE_QUERY } from '../workspace.mjs';

function assert(condition, message) {
  if (!condition) throw new Error(message);
}

export const htmlIdsStayText = {
  name: 'ids containing HTML are shown as text and no script runs',
  async run(ctx) {
    const expected = evalExpectations(ctx.files.hostile);
    assert(expected.worstQueries.includes(HOSTILE_QUERY), 'test data: the hostile query should be the worst one');
    const dialogsBefore = ctx.dialogs.length;
    await closeAllEditors(ctx.page);
    await openWithInspect(ctx.page, ctx.rel(ctx.files.hostile));
    const { frame } = await readHeadline(ctx.page, expected.meanText);
    // Second line of defence beside the page's dialog hook: count alert() calls
    // made inside the webview from here on (the sandbox may block modals).
    await frame.evaluate(() => {
      window.__glAlerts = 0;
      const count = () => { window.__glAlerts += 1; };
      window.alert = count; window.confirm = count; window.prompt = count;
    });
    const { row, query } = await firstWorstRow(frame);
    assert(query === HOSTILE_QUERY, `first row's data-query is ${JSON.stringify(query)}`);
    const rowText = ((await row.textContent()) ?? '').replace(/\s+/g, ' ');
    assert(rowText.includes(HOSTILE_QUERY), `the row does not show the query's characters: ${JSON.stringify(rowText)}`);
    await openDetailFromRow(ctx.page, frame, row, query);
    const itemRow = frame.locator('#gl-predicted-order [data-item]').filter({ hasText: HOSTILE_ITEM }).first();
    await itemRow.waitFor({ state: 'visible', timeout: 15_000 });
    assert(await itemRow.getAttribute('data-item') === HOSTILE_ITEM, 'data-item does not hold the raw id');
    const injected = await frame.evaluate(() => ({
      images: document.querySelectorAll('img[src="x"], img[onerror]').length,
      bold: [...document.querySelectorAll('b')].filter((b) => b.textContent === 'claw hammer').length,
      scripts: [...document.querySelectorAll('script')].filter((s) => (s.textContent ?? '').includes('alert(2)')).length,
    }));
    assert(injected.images === 0, `${injected.images} <img> element(s) were created from data`);
    assert(injected.bold === 0 && injected.scripts === 0, `markup from data became elements: ${JSON.stringify(injected)}`);
    await sleep(1_000); // an onerror handler would fire right away; give it the chance
    assert(ctx.dialogs.length === dialogsBefore, `a dialog opened: ${ctx.dialogs.slice(dialogsBefore).join(' | ')}`);
    const alerts = await frame.evaluate(() => window.__glAlerts);
    assert(alerts === 0, `alert() was called ${alerts} time(s) inside the webview`);
    // The hook must be able to see a call, or the check above proves nothing.
    await frame.evaluate(() => window.alert('probe'));
    assert(await frame.evaluate(() => window.__glAlerts) === 1, 'alert probe was not counted; the script check is blind');
    await ctx.shot('hostile-ids');
  },
};

export const malformedShowsError = {
  name: 'a malformed dump shows a clear error naming the file, not a blank panel',
  async run(ctx) {
    const failure = evalFailure(ctx.files.malformed);
    assert(failure.status !== 0, 'test data: the CLI accepts the malformed dump');
    const name = basename(ctx.files.malformed);
    await closeAllEditors(ctx.page);
    await openWithInspect(ctx.page, ctx.rel(ctx.files.malformed));
    const { frame, text } = await waitForFrameText(ctx.page, '#gl-error', (t) => t.includes(name), { timeoutMs: 60_000 });
    assert(await frame.locator('#gl-error').isVisible(), '#gl-error exists but is not visible');
    // The CLI's first error line names the row and the problem; the panel should carry the same reason.
    const reason = failure.message.replace(/^.*?:\d+:\s*/, '').slice(0, 30);
    assert(reason.length === 0 || text.includes(reason), `error panel "${text}" lacks the reason "${reason}"`);
    await ctx.shot('malformed-error');
  },
};
