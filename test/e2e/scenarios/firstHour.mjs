// What a new user runs into in the first hour with one dump open: the ideal order and the strip
// between the lists, the status bar, and the small things (command names in the demo guide, the
// share-of-loss sort, the sensitivity table, the filter's wording, where exports go, the column error).
import { readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { closeAllEditors, explorerContextMenu, waitForFrameText, waitUntil } from '../harness.mjs';
import { evalExpectations, evalFailure } from '../oracle.mjs';
import { firstWorstRow, inspectRunA, openDetailFromRow, openWithInspect, readHeadline, showTab } from '../views.mjs';
import { REPO_ROOT } from '../../support/code-server-install.mjs';

function assert(condition, message) {
  if (!condition) throw new Error(message);
}

/** The Gainline status bar entry (the one whose text holds the headline label). */
export function headlineStatus(page, label) {
  return page.locator('.statusbar-item').filter({ hasText: label }).first();
}

/** Hovers the entry and returns the text of the hover that opens. */
export async function statusHoverText(page, item) {
  await page.mouse.move(0, 0);
  await item.hover();
  const hover = page.locator('.workbench-hover, .monaco-hover').filter({ hasText: /Conventions/ }).first();
  await hover.waitFor({ state: 'visible', timeout: 15_000 });
  return (await hover.textContent()) ?? '';
}

export const idealOrderAndStrip = {
  name: 'query detail: within a grade the ideal order keeps the model\'s order, and only lines that carry a gain difference are coloured',
  async run(ctx) {
    const { frame } = await inspectRunA(ctx);
    const { row, query } = await firstWorstRow(frame);
    await openDetailFromRow(ctx.page, frame, row, query);
    // Cells are read by their column header, not by index: an items table adds a Title column, and
    // titles repeat across items, so a fixed index would compare titles where it means grades.
    const lists = await frame.evaluate(() => {
      const table = (id) => {
        const headers = [...document.querySelectorAll(`${id} .gl-order-head [role="columnheader"]`)].map((h) => (h.textContent ?? '').trim());
        const rows = [...document.querySelectorAll(`${id} .gl-order-row`)].map((r) => {
          const cells = [...r.querySelectorAll('[role="cell"]')].map((c) => (c.textContent ?? '').trim());
          return Object.fromEntries(headers.map((h, i) => [h, cells[i]]));
        });
        return { headers, rows };
      };
      const paths = [...document.querySelectorAll('#gl-detail .gl-links path')].map((p) => ({ item: p.dataset.item, cls: p.getAttribute('class') ?? '' }));
      return { predicted: table('#gl-predicted-order'), ideal: table('#gl-ideal-order'), paths };
    });
    for (const [name, list, needed] of [['predicted', lists.predicted, ['Pos', 'Item', 'Label']], ['ideal', lists.ideal, ['Pos', 'Item', 'Label', 'Model']]]) {
      const absent = needed.filter((h) => !list.headers.includes(h));
      assert(absent.length === 0, `the ${name} list has no ${absent.join(', ')} column; headers: ${JSON.stringify(list.headers)}`);
    }
    // Within a label, the model's positions rise. Judged items the run never retrieved have no model
    // position ("not retrieved") and sit after the retrieved items of their grade.
    const crossings = [];
    for (let i = 1; i < lists.ideal.rows.length; i++) {
      const a = lists.ideal.rows[i - 1];
      const b = lists.ideal.rows[i];
      if (a.Label !== b.Label) continue;
      const modelA = a.Model === 'not retrieved' ? Infinity : Number(a.Model);
      const modelB = b.Model === 'not retrieved' ? Infinity : Number(b.Model);
      if (Number.isNaN(modelA) || Number.isNaN(modelB)) crossings.push(`unreadable model position "${a.Model}" / "${b.Model}"`);
      else if (modelA > modelB) crossings.push(`${a.Item} (model ${a.Model}) before ${b.Item} (model ${b.Model}), both grade ${a.Label}`);
    }
    assert(crossings.length === 0, `equal-grade items out of the model's order in the ideal list: ${crossings.slice(0, 3).join('; ')}`);
    // An item whose grade is the grade the ideal order (not-retrieved rows included, as they count in
    // the ideal) puts at its predicted position carries no gain difference: its line must be the quiet
    // "in place" kind.
    const idealLabelAt = lists.ideal.rows.map((r) => r.Label);
    const byItem = new Map(lists.predicted.rows.map((r) => [r.Item, { position: Number(r.Pos), label: r.Label }]));
    const loud = lists.paths.filter((p) => {
      const at = byItem.get(p.item);
      return at && idealLabelAt[at.position - 1] === at.label && !/\bsame\b/.test(p.cls);
    });
    assert(loud.length === 0, `${loud.length} lines drawn as misplaced although their grade is the one their place calls for, e.g. ${JSON.stringify(loud.slice(0, 3))}`);
    assert(lists.paths.some((p) => /\b(up|down)\b/.test(p.cls)), `the worst query "${query}" shows no misplaced line at all`);
  },
};

export const statusBarReadable = {
  name: 'status bar: plain label and tooltip, the counted queries, and a click shows the summary',
  async run(ctx) {
    const expected = evalExpectations(ctx.files.runA);
    const counted = expected.json.queries.filter((q) => !q.skipped).length;
    await closeAllEditors(ctx.page);
    await openWithInspect(ctx.page, ctx.rel(ctx.files.runA));
    const { frame } = await readHeadline(ctx.page, expected.meanText);
    const item = headlineStatus(ctx.page, 'NDCG@10');
    await item.waitFor({ state: 'visible', timeout: 15_000 });
    const label = (await item.getAttribute('aria-label')) ?? (await item.locator('[aria-label]').first().getAttribute('aria-label')) ?? '';
    assert(!/&nbsp;|\\[()]/.test(label), `the status bar's screen-reader label holds markup escapes: ${JSON.stringify(label)}`);
    const tooltip = await statusHoverText(ctx.page, item);
    assert(!/&nbsp;|\\[()]|\u00a0/.test(tooltip), `the tooltip holds escapes or no-break spaces (it cannot wrap between words): ${JSON.stringify(tooltip)}`);
    assert(tooltip.includes(`${counted} of ${expected.queryCount}`), `the tooltip does not say ${counted} of ${expected.queryCount} queries counted: ${JSON.stringify(tooltip)}`);
    await ctx.page.mouse.move(0, 0);
    await showTab(frame, 'gl-tab-worst');
    await item.click();
    await waitUntil(async () => (await frame.locator('#gl-tab-overview').getAttribute('aria-selected')) === 'true',
      { what: 'the Overview tab after clicking the status bar', timeoutMs: 15_000 });
  },
};

export const smallThings = {
  name: 'small things: demo guide names the menu entry, share of loss says why it has no sort, one current row in the sensitivity table, filter wording, export folder, column error',
  async run(ctx) {
    // The demo guide's Explorer step names the entry exactly as the menu shows it: use its words.
    const guide = readFileSync(join(REPO_ROOT, 'demo', 'README.md'), 'utf8');
    const step = /right-click\s+`runs\/model-b\.csv`\s+and choose \*\*([^*]+)\*\*/i.exec(guide.replace(/\s+/g, ' '));
    assert(step, 'demo/README.md no longer says which entry to choose in the Explorer');
    const expected = evalExpectations(ctx.files.runB);
    await closeAllEditors(ctx.page);
    await explorerContextMenu(ctx.page, ctx.rel(ctx.files.runB), step[1].trim());
    const { frame } = await readHeadline(ctx.page, expected.meanText);
    // Sensitivity: the current mean is listed once (the rows follow the headline on their own request).
    await frame.locator('#gl-sensitivity-box:not([aria-busy])').waitFor({ state: 'attached', timeout: 30_000 });
    const sensitivity = await frame.locator('#gl-sensitivity tbody tr').evaluateAll((rows) => rows.map((r) => [...r.querySelectorAll('td')].map((c) => (c.textContent ?? '').trim())));
    const current = sensitivity.filter((cells) => cells[1] === expected.meanText);
    assert(current.length === 1, `the sensitivity table lists the current value ${expected.meanText} ${current.length} times: ${JSON.stringify(current)}`);
    // Share of loss: no sort of its own, and the header says why.
    await firstWorstRow(frame);
    const share = frame.locator('#gl-worst-table .gl-vt-hcell').filter({ hasText: 'Share of loss' }).first();
    assert(await share.locator('button').count() === 0, 'Share of loss still offers a sort');
    assert(/orders queries exactly as/i.test((await share.getAttribute('title')) ?? ''), 'the Share of loss header does not say why it has no sort');
    // The filter says what it matches, and matches words of the query text.
    const placeholder = (await frame.locator('#gl-worst-filter').getAttribute('placeholder')) ?? '';
    assert(/query text/i.test(placeholder) && !/\bid\b/i.test(placeholder), `filter placeholder "${placeholder}"`);
    // Export: the save dialog offers the workspace folder, not the runs folder.
    await frame.locator('#gl-panel-worst button', { hasText: 'Markdown' }).click();
    const input = ctx.page.locator('.quick-input-widget input.input');
    await input.waitFor({ state: 'visible', timeout: 15_000 });
    // The dialog fills its path in steps; wait for the suggested file name.
    const offered = await waitUntil(async () => {
      const value = await input.inputValue();
      return /\.md$/.test(value) ? value : null;
    }, { what: 'a Markdown file path in the save dialog', timeoutMs: 15_000 });
    await ctx.page.keyboard.press('Escape');
    assert(dirname(offered).replace(/\/$/, '') === ctx.files.root, `export offers ${offered}; expected a file in ${ctx.files.root}`);
    // A header the reader cannot place: the error says how to name the columns, option included.
    const failure = evalFailure(ctx.files.unnamedColumns);
    assert(failure.status !== 0 && failure.message.includes('--columns'), `CLI error: ${failure.message}`);
    await closeAllEditors(ctx.page);
    await openWithInspect(ctx.page, ctx.rel(ctx.files.unnamedColumns));
    const { text } = await waitForFrameText(ctx.page, '#gl-error', (t) => t.includes('columns'), { timeoutMs: 60_000 });
    assert(text.includes('--columns query='), `the column error does not name the --columns option: ${text}`);
    // The demo's own variables and the install scripts are explained where a user looks.
    const demoScript = readFileSync(join(REPO_ROOT, 'test', 'support', 'start-demo.mjs'), 'utf8');
    for (const name of new Set(demoScript.match(/GAINLINE_DEMO_[A-Z_]+/g) ?? [])) {
      assert(guide.includes(name), `demo/README.md does not document ${name}`);
    }
    const manifest = JSON.parse(readFileSync(join(REPO_ROOT, 'package.json'), 'utf8'));
    const lock = JSON.parse(readFileSync(join(REPO_ROOT, 'package-lock.json'), 'utf8'));
    const allowed = manifest.allowScripts ?? {};
    for (const [where, info] of Object.entries(lock.packages ?? {})) {
      if (!info.hasInstallScript || where === '') continue;
      const name = where.replace(/^.*node_modules\//, '');
      assert(name in allowed || `${name}@${info.version}` in allowed, `${name} runs an install script that package.json's allowScripts does not cover`);
    }
  },
};
