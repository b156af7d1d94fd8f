// Playwright helpers that drive the real VS Code workbench served by
// code-server: open it, wait until it is usable, run commands through the
// command palette (F1), open files, reopen them with another editor, and reach
// into webview frames (outer webview iframe → inner `active-frame`).
import { join } from 'node:path';
import { chromium } from 'playwright-core';
import { RUN_DIR } from '../support/code-server-install.mjs';

const CHROMIUM = process.env.GAINLINE_E2E_CHROMIUM ?? '/usr/bin/chromium';

export async function launchBrowser() {
  // Chromium writes crash-report and dconf folders under $HOME; keep them in the clone.
  const home = join(RUN_DIR, 'browser-home');
  return chromium.launch({
    executablePath: CHROMIUM,
    headless: true,
    // Headless Chromium hides scrollbars by default; a user sees them, and so should the checks and pictures.
    ignoreDefaultArgs: ['--hide-scrollbars'],
    env: { ...process.env, HOME: home, XDG_CONFIG_HOME: join(home, '.config'), XDG_CACHE_HOME: join(home, '.cache') },
    args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update',
      '--disable-sync', '--no-first-run', '--disable-dev-shm-usage',
      // Only loopback names resolve: nothing the workbench asks for leaves the machine.
      '--host-resolver-rules=MAP * ~NOTFOUND, EXCLUDE 127.0.0.1, EXCLUDE localhost'],
  });
}

export async function sleep(ms) {
  await new Promise((r) => setTimeout(r, ms));
}

/** Polls `check` until it returns a truthy value or the time runs out. */
export async function waitUntil(check, { timeoutMs = 30_000, intervalMs = 200, what = 'condition' } = {}) {
  const deadline = Date.now() + timeoutMs;
  let lastError;
  while (Date.now() < deadline) {
    try {
      const value = await check();
      if (value) return value;
    } catch (error) {
      lastError = error;
    }
    await sleep(intervalMs);
  }
  throw new Error(`timed out after ${timeoutMs} ms waiting for ${what}${lastError ? ` (last error: ${lastError.message})` : ''}`);
}

/** Opens the workbench and waits until the explorer shows the folder's files. */
/**
 * "Developer: Reload Window" (which saves the open editors first, as a user's reload does), then
 * waits for the workbench with the Explorer in front.
 */
export async function reloadWindow(page) {
  // The old page carries a marker; the reload is done when a page without it is there. The command
  // is run again when the page is still the old one after a while (a palette click can be lost).
  await page.evaluate(() => { window.__gainlineBeforeReload = true; });
  const reloaded = () => page.evaluate(() => window.__gainlineBeforeReload !== true).catch(() => false);
  for (let attempt = 1; ; attempt += 1) {
    await runCommand(page, 'Developer: Reload Window');
    const done = await waitUntil(reloaded, { what: 'the window to reload', timeoutMs: 20_000, intervalMs: 250 }).catch(() => false);
    if (done) break;
    if (attempt === 3) throw new Error('"Developer: Reload Window" did not reload the window in 3 tries');
  }
  await page.locator('.monaco-workbench').waitFor({ state: 'visible', timeout: 90_000 });
  await runCommand(page, 'View: Show Explorer');
  await openWorkbench(page);
}

export async function openWorkbench(page, url) {
  // Without a URL the page is already loading (a reload): only wait for the workbench.
  if (url) await page.goto(url, { waitUntil: 'domcontentloaded' });
  await page.locator('.monaco-workbench').waitFor({ state: 'visible', timeout: 90_000 });
  await page.locator('.explorer-folders-view .monaco-list-row').first().waitFor({ state: 'visible', timeout: 90_000 });
  // Give the extension host a moment to come up before commands are issued.
  await waitUntil(() => page.locator('.statusbar').isVisible(), { what: 'status bar' });
  await dismissNotifications(page);
}

export async function dismissNotifications(page) {
  // "Clear all notifications" keeps toasts from covering editors in screenshots.
  const toasts = page.locator('.notifications-toasts .notification-toast');
  if (await toasts.count() === 0) return;
  await runCommand(page, 'Notifications: Clear All Notifications').catch(() => {});
}

async function quickInput(page) {
  const widget = page.locator('.quick-input-widget');
  await widget.waitFor({ state: 'visible', timeout: 10_000 });
  return widget;
}

function exactLabel(text) {
  const escaped = text.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
  return new RegExp(`^\\s*${escaped}\\s*$`);
}

/** The quick-pick row whose label is exactly `label` (fuzzy neighbours never match). */
function exactRow(widget, label) {
  return widget.locator('.quick-input-list .monaco-list-row')
    .filter({ has: widget.page().locator('.label-name', { hasText: exactLabel(label) }) }).first();
}

/**
 * Keys pressed while a webview iframe has focus do not always reach the
 * workbench; blurring the iframe hands the keyboard back to it.
 */
export async function focusWorkbench(page) {
  await page.evaluate(() => {
    const active = document.activeElement;
    if (active && active.tagName === 'IFRAME') active.blur();
  });
}

/**
 * Runs a command by its exact palette title. The palette does not refresh when
 * an extension registers its commands later, so a miss closes it and tries
 * again until `timeoutMs`.
 */
export async function runCommand(page, title, { timeoutMs = 30_000 } = {}) {
  const deadline = Date.now() + timeoutMs;
  const widget = page.locator('.quick-input-widget');
  const row = exactRow(widget, title);
  for (;;) {
    try {
      await page.keyboard.press('Escape');
      await focusWorkbench(page);
      await page.keyboard.press('F1');
      // A webview taking focus back closes the palette at any point; every
      // step has a short timeout and the whole sequence is retried.
      await widget.locator('input.input').fill(`>${title}`, { timeout: 3_000 });
      await row.waitFor({ state: 'visible', timeout: 3_000 });
      await row.click({ timeout: 3_000 });
      return;
    } catch (error) {
      if (Date.now() > deadline) {
        await page.keyboard.press('Escape');
        throw new Error(`could not run "${title}" from the command palette within ${timeoutMs} ms (${error.message.split('\n')[0]})`);
      }
      await sleep(500);
    }
  }
}

/** Picks a row in whatever quick pick is open (e.g. after a command asked a question). */
export async function pickQuickItem(page, text, { timeoutMs = 15_000, exact = true } = {}) {
  const widget = await quickInput(page);
  const row = exact ? exactRow(widget, text) : widget.locator('.quick-input-list .monaco-list-row', { hasText: text }).first();
  await row.waitFor({ state: 'visible', timeout: timeoutMs })
    .catch(() => { throw new Error(`quick pick shows no row labelled "${text}"`); });
  await row.click();
}

/** Types into the open quick input (file picker, theme picker) and picks the row labelled `pickText`. */
export async function typeInQuickInput(page, text, { pickText, timeoutMs = 15_000 } = {}) {
  const widget = await quickInput(page);
  await widget.locator('input.input').fill(text, { timeout: timeoutMs });
  if (pickText) {
    await pickQuickItem(page, pickText, { timeoutMs });
  } else {
    await page.keyboard.press('Enter');
  }
}

/**
 * Opens a workspace file through Go to File. The row is clicked rather than
 * Enter pressed: the list first shows recently opened files and filters
 * asynchronously, so the focused row may still be another file.
 */
export async function openFile(page, relativePath) {
  await runCommand(page, 'Go to File...');
  const widget = await quickInput(page);
  await widget.locator('input.input').fill(relativePath);
  const base = relativePath.split('/').pop();
  const row = exactRow(widget, base);
  await row.waitFor({ state: 'visible', timeout: 15_000 })
    .catch(() => { throw new Error(`Go to File shows no row labelled ${base}`); });
  await row.click();
  await page.locator('.tabs-container .tab', { hasText: base }).first().waitFor({ state: 'visible', timeout: 15_000 })
    .catch(() => { throw new Error(`no editor tab for ${base} after Go to File`); });
}

/**
 * The real "Open With…" picker: "View: Reopen Editor With..." on the active
 * editor, then the editor whose label contains `editorLabel`.
 */
export async function reopenWith(page, editorLabel) {
  await runCommand(page, 'View: Reopen Editor With...');
  await pickQuickItem(page, editorLabel);
}

/**
 * Right-clicks a file in the Explorer (expanding the folders on the way) and
 * chooses `entry` from its context menu. Extension entries appear only once
 * the extension host has registered its menus, so a missing entry is retried.
 */
export async function explorerContextMenu(page, relativePath, entry, { timeoutMs = 30_000 } = {}) {
  const tree = page.locator('.explorer-folders-view');
  const parts = relativePath.split('/');
  const name = parts[parts.length - 1];
  const fileRow = tree.locator(`.monaco-list-row[aria-label=${JSON.stringify(name)}]`).first();
  // The Explorer only renders the rows in its viewport: after earlier scenarios expanded other folders
  // the path can lie below it. The walk is tried as things are, then once more from collapsed folders.
  const walk = async (waitMs) => {
    for (const folder of parts.slice(0, -1)) {
      const row = tree.locator(`.monaco-list-row[aria-label=${JSON.stringify(folder)}]`).first();
      await row.waitFor({ state: 'visible', timeout: waitMs })
        .catch(() => { throw new Error(`Explorer shows no folder ${folder}`); });
      if (await row.getAttribute('aria-expanded') === 'false') await row.click();
    }
    await fileRow.waitFor({ state: 'visible', timeout: waitMs })
      .catch(() => { throw new Error(`Explorer shows no file ${name}`); });
  };
  await walk(5_000).catch(async () => {
    await runCommand(page, 'Collapse Folders in Explorer');
    await walk(15_000);
  });
  const menuItem = page.locator('.monaco-menu .action-label', { hasText: exactLabel(entry) });
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    await fileRow.click({ button: 'right' });
    if (await menuItem.waitFor({ state: 'visible', timeout: 2_000 }).then(() => true, () => false)) break;
    await page.keyboard.press('Escape');
    if (Date.now() > deadline) throw new Error(`the Explorer context menu of ${name} has no "${entry}" entry`);
    await sleep(1_000);
  }
  // A click that lands right after the menu opens can be ignored by the menu
  // (it guards against the right-click's own release); hover, pause, click,
  // and click again if the menu is still there.
  for (let attempt = 0; attempt < 3; attempt += 1) {
    await menuItem.hover();
    await sleep(300);
    await menuItem.click().catch(() => {});
    if (await menuItem.waitFor({ state: 'hidden', timeout: 2_000 }).then(() => true, () => false)) return;
  }
  throw new Error(`clicking "${entry}" in the Explorer context menu did nothing`);
}

/**
 * "Gainline: Inspect Ranked Lists" from the command palette with no editor open: the command offers the
 * workspace's dumps in a quick pick, found by a fresh file search. Unlike the Explorer walk, this does not
 * depend on which folders earlier scenarios expanded (the Explorer renders only the rows in its viewport)
 * nor on the Explorer's watcher having shown a folder created moments ago. The row is the one labelled with
 * the file's name whose description is its folder.
 */
export async function inspectFromPalette(page, relativePath, { timeoutMs = 30_000 } = {}) {
  const parts = relativePath.split('/');
  const name = parts.pop();
  const folder = parts.join('/');
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    await runCommand(page, 'Gainline: Inspect Ranked Lists', { timeoutMs });
    const widget = await quickInput(page);
    await widget.locator('input.input').fill(name);
    const row = widget.locator('.quick-input-list .monaco-list-row')
      .filter({ has: page.locator('.label-name', { hasText: exactLabel(name) }) })
      .filter({ has: page.locator('.label-description', { hasText: exactLabel(folder) }) }).first();
    if (await row.waitFor({ state: 'visible', timeout: 5_000 }).then(() => true, () => false)) {
      await row.click();
      return;
    }
    // The search can miss a file written a moment ago; ask again.
    await page.keyboard.press('Escape');
    if (Date.now() > deadline) throw new Error(`the "Inspect Ranked Lists" quick pick offers no ${name} in ${folder}`);
    await sleep(1_000);
  }
}

/** The real "Open With…" from the Explorer, then the editor by its label. */
export async function openWithFromExplorer(page, relativePath, editorLabel) {
  await explorerContextMenu(page, relativePath, 'Open With...');
  await pickQuickItem(page, editorLabel);
}

/**
 * Finds the webview frame that contains `selector` (visible or not). Webviews
 * are nested: the workbench iframe hosts `index.html`, which hosts the
 * `active-frame` where the extension's HTML lives.
 */
export async function findWebviewFrame(page, selector, { timeoutMs = 60_000 } = {}) {
  return waitUntil(async () => {
    for (const frame of page.frames()) {
      if (frame === page.mainFrame() || frame.isDetached()) continue;
      const found = await frame.$(selector).catch(() => null);
      if (found) return frame;
    }
    return null;
  }, { timeoutMs, what: `a webview frame containing ${selector}` });
}

/** Text of an element inside a frame, whitespace-collapsed. */
export async function frameText(frame, selector) {
  const text = await frame.locator(selector).first().textContent({ timeout: 10_000 });
  return (text ?? '').replace(/\s+/g, ' ').trim();
}

/** Waits until an element inside some webview frame has text matching `predicate`. */
export async function waitForFrameText(page, selector, predicate, { timeoutMs = 60_000 } = {}) {
  let last = '';
  return waitUntil(async () => {
    const frame = await findWebviewFrame(page, selector, { timeoutMs: 2_000 }).catch(() => null);
    if (!frame) return null;
    last = await frameText(frame, selector).catch(() => '');
    return predicate(last) ? { frame, text: last } : null;
  }, { timeoutMs, what: `${selector} text to satisfy the check (last seen: "${last}")` });
}

/** Closes every editor so each scenario starts from a clean editor area. */
export async function closeAllEditors(page) {
  await runCommand(page, 'View: Close All Editors').catch(() => {});
  // A dirty-file prompt would block here; every opened dump is read-only.
  await sleep(300);
}
