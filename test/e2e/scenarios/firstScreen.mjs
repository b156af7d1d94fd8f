// How long the first screen takes, measured from the click on "Inspect Ranked Lists" in the
// Explorer's menu to the headline on screen: on the 300-query demo after a window reload (cold
// extension host and engine thread), again once warm, and on a 1M-row dump written for the run.
// Figures go to the log and test-artifacts/first-screen.json, each with its timeline from the click
// (activation, the view's opening, the request, engine thread ready, read, scored, answer; the page's
// start, bundle run, result, paint; headline seen; the sensitivity rows and score diagnostics computed
// after it), from the extension's log lines and the page's marks.
// Asserted: the order of events (firstScreenProblems), which holds however loaded the machine is; the
// times are figures, compared with the targets by `npm run bench` (bench-first-screen.mjs, best of N),
// and bounded here only against a hang, because a shared machine would fail a tight bound for reasons
// outside the code.
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
  // The clock starts before the click is sent: on a crowded machine the click call itself can return late.
  return async () => {
    const at = Date.now();
    await item.click();
    return at;
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
        // The first of each: a repeated result (the host's answer to 'ready') marks again later.
        for (const m of performance.getEntriesByType('mark')) {
          const key = `page ${m.name.slice(9)}`;
          if (m.name.startsWith('gainline-') && !(key in found)) found[key] = performance.timeOrigin + m.startTime;
        }
        return found;
      }).catch(() => null);
      if (marks) return { ms: Date.now() - started, page: Object.fromEntries(Object.entries(marks).map(([name, at]) => [name, Math.round(at - started)])) };
    }
    await sleep(20);
  }
  throw new Error(`no score diagnostics within ${timeoutMs} ms of the click`);
}

/** The lines of the extension's newest log file (its output channel), or [] before there is one. */
function gainlineLog() {
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
    return [];
  }
  const newest = logs.sort((a, b) => statSync(b).mtimeMs - statSync(a).mtimeMs)[0];
  return newest ? readFileSync(newest, 'utf8').split('\n').map((l) => l.replace(/^.*?\] /, '')) : [];
}

const epochSpan = (line) => {
  const m = /\(epoch ms (\d+) to (\d+)\)/.exec(line);
  return m ? { started: Number(m[1]), done: Number(m[2]) } : null;
};

/**
 * The extension's account of the last first read of `name`: its log line (the timeline of the load),
 * the pieces of the overview computed after the headline (sensitivity rows, score diagnostics: their
 * lines follow the read's), and every background headline read of the Ranked Lists view, as epoch spans.
 */
function readAccount(name) {
  const lines = gainlineLog();
  const at = lines.findLastIndex((l) => l.startsWith(`read ${name}:`) && l.includes('before the request'));
  if (at < 0) return null;
  const after = lines.slice(at + 1).filter((l) => l.startsWith(`after the headline of ${name}:`));
  return {
    split: lines[at],
    sensitivity: epochSpan(after.find((l) => l.includes('sensitivity rows')) ?? ''),
    diagnostics: epochSpan(after.find((l) => l.includes('score diagnostics')) ?? ''),
    background: lines.filter((l) => l.startsWith('background headline of ')).map((l) => ({ line: l, ...epochSpan(l) })),
  };
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

/**
 * Budget from the editor opening the view (resolveCustomEditor) to the request being out: finding the
 * judgments and side files. Before the opening, the time is the editor's own.
 */
const ASKED_WITHIN_MS = 250;

/**
 * What must hold however loaded the machine is, from the timeline of one opening (ms after the click):
 * the read starts before the page's bundle has run; the request is out within ASKED_WITHIN_MS of the
 * view's opening; the
 * headline is posted before the sensitivity rows and the score diagnostics are computed; and no
 * background read of the Ranked Lists view runs while the view's first screen is computed.
 */
export function firstScreenProblems(what, account, t, clickedAt) {
  const problems = [];
  if (!t) return [`${what}: the extension wrote no timeline for the read`];
  if (!(t.received < t['page script'])) problems.push(`${what}: the worker got the request at ${t.received} ms, after the page's bundle ran (${t['page script']} ms): the read waited for the page`);
  if (!(t.asked - t.opened <= ASKED_WITHIN_MS)) problems.push(`${what}: the request went out ${t.asked - t.opened} ms after the view opened (budget ${ASKED_WITHIN_MS} ms)`);
  const after = (name, span) => {
    if (!span) problems.push(`${what}: no ${name} logged as computed after the headline (computed with it, before it was posted, or not on a request of their own)`);
    else if (!(span.started - clickedAt >= t.answered)) problems.push(`${what}: the ${name} started at ${span.started - clickedAt} ms, before the headline was posted (${t.answered} ms)`);
  };
  after('sensitivity rows', account?.sensitivity);
  after('score diagnostics', account?.diagnostics);
  for (const b of account?.background ?? []) {
    const from = b.started - clickedAt;
    const to = b.done - clickedAt;
    if (from < t.answered && to > t.asked) problems.push(`${what}: a background read ran from ${from} to ${to} ms, while the first screen was computed (${t.asked} to ${t.answered} ms): ${b.line}`);
  }
  return problems;
}

async function timeOpen(ctx, relativePath, timeoutMs) {
  await closeAllEditors(ctx.page);
  const click = await armMenuEntry(ctx.page, relativePath, 'Inspect Ranked Lists');
  const started = await click();
  const shown = await headlineAfter(ctx.page, started, timeoutMs);
  const diagnostics = await diagnosticsAfter(ctx.page, started, timeoutMs);
  const name = relativePath.split('/').at(-1);
  // The lines are written as the results are sent; give the file a moment to reach the disk.
  const account = await waitUntil(() => {
    const found = readAccount(name);
    return found && found.sensitivity && found.diagnostics ? found : null;
  }, { what: 'the Gainline log lines', timeoutMs: 10_000 }).catch(() => readAccount(name));
  const timeline = timelineFromClick(account?.split, started, shown.ms);
  const full = timeline && { ...timeline, ...diagnostics.page, headline: shown.ms, diagnostics: diagnostics.ms };
  const span = (s) => (s ? [s.started - started, s.done - started] : null);
  return {
    ...shown,
    // The page's own mark of the frame that painted the headline, when it has one (the poll above lags it).
    paintedMs: diagnostics.page['page painted'] ?? shown.ms,
    split: account?.split ?? null,
    timeline: full && { ...full, 'sensitivity rows': span(account.sensitivity), 'score diagnostics (worker)': span(account.diagnostics) },
    problems: firstScreenProblems(name, account, full, started),
  };
}

/** Targets (issue of the first hour, item 9; the speed issue's 1M-row line): from the click to the painted headline. */
export const FIRST_SCREEN_TARGETS = { demoMs: 1_000, rows1MMs: 1_000 };

export const firstScreenTimes = {
  name: 'first screen: the headline appears soon after the click, on the demo (cold and warm) and on 1M rows',
  async run(ctx) {
    const expected = evalExpectations(ctx.files.runB);
    // GAINLINE_FIRST_SCREEN_RUNS=N (the bench, test/bench/bench-first-screen.mjs) measures each case N times.
    const runs = Math.max(1, Number(process.env.GAINLINE_FIRST_SCREEN_RUNS ?? 1) || 1);
    const samples = { demoCold: [], demoWarm: [], rows1M: [] };
    for (let i = 0; i < runs; i++) {
      // Cold: a reloaded window has a fresh extension host (no editor is restored to start it early).
      await closeAllEditors(ctx.page);
      await reloadWindow(ctx.page);
      const cold = await timeOpen(ctx, ctx.rel(ctx.files.runB), 60_000);
      assert(cold.value === expected.meanText, `headline ${cold.value}, CLI says ${expected.meanText}`);
      samples.demoCold.push(cold);
      samples.demoWarm.push(await timeOpen(ctx, ctx.rel(ctx.files.runB), 60_000));
    }
    const large = join(ctx.files.root, 'e2e', 'large-1m.csv');
    writeLargeDump(large, 1_000_000, 40_000, 'kettlewood-e2e-1m');
    try {
      for (let i = 0; i < runs; i++) samples.rows1M.push(await timeOpen(ctx, ctx.rel(large), 180_000));
    } finally {
      await closeAllEditors(ctx.page);
      rmSync(large, { force: true });
    }
    const best = (list) => Math.min(...list.map((s) => s.paintedMs));
    const figures = {
      loadAverage: (await import('node:os')).loadavg()[0],
      runs,
      targets: FIRST_SCREEN_TARGETS,
      bestMs: { demoCold: best(samples.demoCold), demoWarm: best(samples.demoWarm), rows1M: best(samples.rows1M) },
      samples,
    };
    ctx.log(`  first screen (ms from the click to the painted headline, best of ${runs}; load ${figures.loadAverage.toFixed(1)}): demo cold ${figures.bestMs.demoCold}, `
      + `demo warm ${figures.bestMs.demoWarm}, 1M rows ${figures.bestMs.rows1M} (targets ${FIRST_SCREEN_TARGETS.demoMs} / ${FIRST_SCREEN_TARGETS.rows1MMs})`);
    for (const [k, list] of Object.entries(samples)) for (const s of list) ctx.log(`  ${k} timeline: ${JSON.stringify(s.timeline)}`);
    writeFileSync(join(REPO_ROOT, 'test-artifacts', 'first-screen.json'), JSON.stringify(figures, null, 2) + '\n');
    // The order of events holds on any machine; the times are measured figures (npm run bench compares
    // them with the targets), bounded here only against a hang.
    const problems = Object.values(samples).flat().flatMap((s) => s.problems);
    assert(problems.length === 0, problems.join('; '));
    assert(figures.bestMs.demoWarm < 10_000, `demo headline after ${figures.bestMs.demoWarm} ms (bound 10 s)`);
    assert(figures.bestMs.rows1M < 60_000, `1M-row headline after ${figures.bestMs.rows1M} ms (bound 60 s)`);
  },
};
