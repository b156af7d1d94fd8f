// The grids at the README's picture size (1600×1000) with the Explorer open: every column can be
// reached (shown, or behind a visible horizontal scrollbar), the query column takes the spare room,
// and the user can choose the columns; Reveal in File leaves the viewer usable.
import { findWebviewFrame, waitUntil } from '../harness.mjs';
import { firstWorstRow, inspectRunA, openDetailFromRow, showTab } from '../views.mjs';

function assert(condition, message) {
  if (!condition) throw new Error(message);
}

/**
 * Where a grid's columns are: for each header, whether it can be seen once the grid is scrolled to
 * its right edge, and whether the horizontal scrollbar (when there is one) lies inside the frame.
 */
export async function gridReach(frame, gridSelector) {
  return frame.evaluate((selector) => {
    const grid = document.querySelector(selector);
    if (!grid) return { missing: true };
    const viewport = grid.querySelector('.gl-vt-viewport');
    const before = viewport.scrollLeft;
    const scrollable = viewport.scrollWidth > viewport.clientWidth + 1;
    const bar = viewport.offsetHeight - viewport.clientHeight - viewport.clientTop * 2;
    const rect = viewport.getBoundingClientRect();
    // Scroll across in half-widths; a header counts once it was wholly inside the box and the frame.
    const cells = [...grid.querySelectorAll('.gl-vt-hcell')];
    const seen = new Set();
    const right = Math.min(rect.right, window.innerWidth);
    for (let x = 0; ; x += Math.max(1, Math.floor(viewport.clientWidth / 2))) {
      viewport.scrollLeft = x;
      cells.forEach((h, i) => {
        const r = h.getBoundingClientRect();
        if (r.width > 0 && r.left >= rect.left - 1 && r.right <= right + 1) seen.add(i);
      });
      if (x >= viewport.scrollWidth - viewport.clientWidth) break;
    }
    const headers = cells.map((h, i) => ({ label: (h.textContent ?? '').trim(), visible: seen.has(i) }));
    viewport.scrollLeft = before;
    return {
      missing: false, scrollable, scrollbarPx: bar, viewportBottom: rect.bottom, frameHeight: window.innerHeight,
      headers, unreachable: headers.filter((h) => !h.visible).map((h) => h.label),
      overflowHidden: getComputedStyle(viewport).overflowX === 'hidden',
    };
  }, gridSelector);
}

/** Text cells of a column that are cut short (text wider than the cell) among the rows drawn. */
async function cutCells(frame, gridSelector, columnIndex) {
  return frame.evaluate(({ selector, index }) => [...document.querySelectorAll(`${selector} .gl-vt-row`)]
    .map((row) => row.querySelector(`[aria-colindex="${index}"] .gl-vt-text`))
    .filter((t) => t && t.parentElement && t.parentElement.scrollWidth > t.parentElement.clientWidth + 1 || (t && t.scrollWidth > t.clientWidth + 1))
    .map((t) => t.textContent), { selector: gridSelector, index: columnIndex });
}

function reachable(reach, what) {
  assert(!reach.missing, `${what}: the grid is missing`);
  assert(reach.unreachable.length === 0, `${what}: columns ${JSON.stringify(reach.unreachable)} cannot be reached by scrolling`);
  if (reach.scrollable) {
    assert(reach.scrollbarPx > 0 && !reach.overflowHidden, `${what}: the grid is wider than its box but shows no horizontal scrollbar`);
    assert(reach.viewportBottom <= reach.frameHeight + 1, `${what}: the grid's bottom edge (and its scrollbar) is below the view (${reach.viewportBottom} > ${reach.frameHeight})`);
  }
}

export const gridsReachEveryColumn = {
  name: 'at 1600×1000 with the Explorer open, every grid column can be reached, query text is not cut, and columns can be chosen',
  async run(ctx) {
    const { frame } = await inspectRunA(ctx);
    await firstWorstRow(frame);
    const worstReach = await gridReach(frame, '#gl-worst-table');
    ctx.log(`  worst queries grid: ${JSON.stringify({ ...worstReach, headers: undefined })}`);
    reachable(worstReach, 'worst queries');
    const cut = await cutCells(frame, '#gl-worst-table', 2);
    assert(cut.length === 0, `query text is cut short in ${cut.length} rows, e.g. ${JSON.stringify(cut.slice(0, 3))}`);
    // Column chooser: hide one metric, see it go; show it again.
    await frame.locator('#gl-worst-columns').click();
    const option = frame.locator('#gl-worst-columns-menu input[type="checkbox"][data-column="p@5"]');
    await option.waitFor({ state: 'visible', timeout: 10_000 });
    await option.uncheck();
    await waitUntil(async () => !(await headerLabels(frame, '#gl-worst-table')).includes('P@5'), { what: 'the P@5 column to be hidden', timeoutMs: 10_000 });
    await option.check();
    await waitUntil(async () => (await headerLabels(frame, '#gl-worst-table')).includes('P@5'), { what: 'the P@5 column to come back', timeoutMs: 10_000 });
    await ctx.page.keyboard.press('Escape');
    await showTab(frame, 'gl-tab-segments');
    await frame.locator('#gl-segments-table [data-index="0"]').waitFor({ state: 'visible', timeout: 30_000 });
    reachable(await gridReach(frame, '#gl-segments-table'), 'segments');
  },
};

async function headerLabels(frame, gridSelector) {
  return frame.locator(`${gridSelector} .gl-vt-hcell`).evaluateAll((cells) => cells.map((c) => (c.textContent ?? '').replace(/[▲▼]/g, '').trim()));
}

export const revealKeepsViewerUsable = {
  name: 'Reveal in File opens the row and leaves the viewer wide enough to show both ranked lists',
  async run(ctx) {
    const { frame } = await inspectRunA(ctx);
    const { row, query } = await firstWorstRow(frame);
    await openDetailFromRow(ctx.page, frame, row, query);
    const second = frame.locator('#gl-predicted-order [data-item]').nth(1);
    const item = await second.getAttribute('data-item');
    await second.click();
    await frame.locator('#gl-reveal-in-file').click();
    // The text editor shows the item's line selected.
    await waitUntil(async () => {
      const selected = await ctx.page.locator('.monaco-editor .view-line').filter({ hasText: item }).count();
      return selected > 0;
    }, { what: `a text editor showing ${item}`, timeoutMs: 30_000 });
    const detail = await findWebviewFrame(ctx.page, '#gl-ideal-order');
    const layout = await waitUntil(async () => {
      const l = await detail.evaluate(() => {
        const ideal = document.querySelector('#gl-ideal-order').getBoundingClientRect();
        const predicted = document.querySelector('#gl-predicted-order').getBoundingClientRect();
        return { width: window.innerWidth, idealRight: ideal.right, idealWidth: ideal.width, predictedWidth: predicted.width, idealVisible: ideal.width > 0 };
      }).catch(() => null);
      return l && l.idealVisible ? l : null;
    }, { what: 'the detail after revealing', timeoutMs: 15_000 });
    assert(layout.width >= 1000, `after Reveal in File the viewer is ${layout.width} px wide (expected at least 1000 px at a 1600 px window)`);
    assert(layout.idealRight <= layout.width + 1, `the ideal list is clipped: its right edge ${layout.idealRight} > ${layout.width}`);
    await ctx.shot('reveal-in-file');
  },
};
