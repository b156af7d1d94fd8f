// Training series in the real editor: the Runs view lists a folder of checkpoints as a series, its
// trend view shows `gainline trend --format json`'s means per checkpoint (in number order), opens a
// checkpoint in the viewer and a query's trajectory; and a series grows live when a job writes its
// next checkpoint, first half-written (listed as not read yet), then complete.
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { spawnSync } from 'node:child_process';
import { closeAllEditors, findWebviewFrame, frameText, reloadWindow, runCommand, waitForFrameText, waitUntil } from '../harness.mjs';
import { evalExpectations } from '../oracle.mjs';
import { readHeadline } from '../views.mjs';
import { checkpointFrom } from '../workspace.mjs';
import { REPO_ROOT } from '../../support/code-server-install.mjs';

function assert(condition, message) {
  if (!condition) throw new Error(message);
}

/** `gainline trend FOLDER --format json` on the very files the editor reads. */
function cliTrend(folder) {
  const r = spawnSync(process.execPath, [join(REPO_ROOT, 'dist', 'cli.js'), 'trend', folder, '--format', 'json'], { encoding: 'utf8', maxBuffer: 64 << 20 });
  if (r.status !== 0) throw new Error(`gainline trend ${folder} exited ${r.status}: ${r.stderr.split('\n')[0]}`);
  return JSON.parse(r.stdout);
}

/** Opens the Gainline container and clicks the series row whose label starts with `label` in the Runs view. */
async function openSeries(ctx, label) {
  const icon = ctx.page.locator('.activitybar .action-item a[aria-label^="Gainline"], .activitybar .action-item[aria-label^="Gainline"]').first();
  await icon.waitFor({ state: 'visible', timeout: 30_000 });
  const sidebar = ctx.page.locator('.sidebar');
  if (!(await sidebar.locator('.pane-header', { hasText: 'Runs' }).isVisible().catch(() => false))) await icon.click();
  const pane = sidebar.locator('.pane').filter({ has: ctx.page.locator('.pane-header', { hasText: /^\s*Runs/ }) });
  const row = pane.locator('.monaco-list-row', { hasText: label }).first();
  await row.waitFor({ state: 'visible', timeout: 60_000 }).catch(() => { throw new Error(`the Runs view lists no series ${label}`); });
  await row.click();
  return findWebviewFrame(ctx.page, '.gl-trend-metric canvas', { timeoutMs: 90_000 });
}

/** The chart of each metric: labels and values as handed to chart.js. */
async function charts(frame) {
  return frame.locator('.gl-trend-metric').evaluateAll((sections) => sections.map((s) => {
    const c = s.querySelector('canvas');
    return { key: s.getAttribute('data-metric'), labels: JSON.parse(c.getAttribute('data-labels')), values: JSON.parse(c.getAttribute('data-values')) };
  }));
}

function assertChartsMatch(shown, cli) {
  const names = cli.runs.map((r) => r.run.replace(/^.*\//, ''));
  assert(shown.length > 0, 'no metric chart');
  for (const chart of shown) {
    assert(JSON.stringify(chart.labels) === JSON.stringify(names), `${chart.key} chart labels ${JSON.stringify(chart.labels)}, CLI ${JSON.stringify(names)}`);
    const expected = cli.runs.map((r) => r.summary[chart.key] ?? null);
    assert(JSON.stringify(chart.values) === JSON.stringify(expected), `${chart.key} chart points ${JSON.stringify(chart.values)}, CLI ${JSON.stringify(expected)}`);
  }
}

export const trendViewMatchesCli = {
  name: 'trend view: a folder of checkpoints charts the CLI trend in number order, opens a checkpoint and a query trajectory',
  async run(ctx) {
    const folder = ctx.files.training;
    const cli = cliTrend(folder);
    await closeAllEditors(ctx.page);
    const frame = await openSeries(ctx, 'e2e/training/');
    const shown = await waitUntil(async () => {
      const c = await charts(frame).catch(() => []);
      return c.length > 0 && c[0].labels.length === cli.runs.length ? c : null;
    }, { timeoutMs: 90_000, what: 'the charts of every checkpoint' });
    assertChartsMatch(shown, cli);
    const headlinePeak = cli.peaks[cli.headline].run.replace(/^.*\//, '');
    const heading = await frameText(frame, `.gl-trend-metric[data-metric="${cli.headline}"] h3`);
    assert(heading.endsWith(`at ${headlinePeak}`), `the ${cli.headline} heading "${heading}" does not name the CLI's peak ${headlinePeak}`);
    await ctx.shot('trend', { readme: true });
    // A query that fell: its trajectory is the CLI's.
    const fell = cli.worstFirstToLast[0];
    assert(fell, 'the CLI lists no query that fell from the first checkpoint to the last');
    await frame.locator('#gl-trend-first-to-last tbody button', { hasText: fell.query }).first().click();
    await waitForFrameText(ctx.page, '#gl-trend-trajectory-title', (t) => t === `${fell.query} over the checkpoints`, { timeoutMs: 30_000 });
    const values = await frame.locator('#gl-trend-trajectory canvas').getAttribute('data-values');
    const q = cli.perQuery.query.indexOf(fell.query);
    const expected = JSON.stringify(cli.perQuery.values[cli.headline][q]);
    assert(JSON.stringify(JSON.parse(values)[0]) === expected, `trajectory of ${fell.query}: ${values}, CLI ${expected}`);
    // A click on the chart near its last point opens that checkpoint in the viewer, with the CLI's headline.
    const last = join(folder, cli.runs.at(-1).run.replace(/^.*\//, ''));
    const canvas = frame.locator(`.gl-trend-metric[data-metric="${cli.headline}"] canvas`);
    await canvas.click({ position: await canvas.boundingBox().then((b) => ({ x: b.width * 0.88, y: b.height * 0.5 })) });
    await readHeadline(ctx.page, evalExpectations(last).meanText);
  },
};

/** Waits until the frame charts every checkpoint of `cli`, then holds the charts to it. */
async function expectCharts(frame, cli) {
  const shown = await waitUntil(async () => {
    const c = await charts(frame).catch(() => []);
    return c.length > 0 && c[0].labels.length === cli.runs.length ? c : null;
  }, { timeoutMs: 90_000, what: 'the charts of every checkpoint' });
  assertChartsMatch(shown, cli);
}

export const trendSurvivesReload = {
  name: 'trend view: a trend panel comes back after a window reload, on the same series',
  async run(ctx) {
    const cli = cliTrend(ctx.files.training);
    await closeAllEditors(ctx.page);
    await expectCharts(await openSeries(ctx, 'e2e/training/'), cli);
    // The side bar comes back as it was left; the reload helper waits for the Explorer's rows.
    await runCommand(ctx.page, 'View: Show Explorer');
    await reloadWindow(ctx.page);
    // No click: the panel is restored from what its page saved, and reads the series again.
    const restored = await findWebviewFrame(ctx.page, '.gl-trend-metric canvas', { timeoutMs: 90_000 })
      .catch(() => { throw new Error('after the reload no trend panel came back'); });
    await expectCharts(restored, cli);
    const tab = ctx.page.locator('.tabs-container .tab', { hasText: 'Trend: e2e/training/' });
    assert(await tab.count() === 1, `after the reload ${await tab.count()} tabs are titled "Trend: e2e/training/"`);
  },
};

export const trendGrowsLive = {
  name: 'trend view: a series grows live when the job writes its next checkpoint, half-written first',
  async run(ctx) {
    const folder = ctx.files.liveTraining;
    await closeAllEditors(ctx.page);
    const frame = await openSeries(ctx, 'e2e/live-training/');
    const rows = () => frame.locator('#gl-trend-table tbody tr').count();
    await waitUntil(async () => (await rows()) === 2 || null, { timeoutMs: 90_000, what: 'two checkpoints' });
    const full = checkpointFrom(ctx.files.runA, 0.5);
    const cut = full.indexOf('\n', full.length / 2) + 12; // the last row stops before its score
    const next = join(folder, 'step-300.csv');
    writeFileSync(next, full.slice(0, cut));
    await waitForFrameText(ctx.page, '#gl-trend-unread', (t) => t.includes('step-300.csv'), { timeoutMs: 60_000 });
    assert((await rows()) === 2, 'the half-written checkpoint was added to the series');
    writeFileSync(next, full);
    await waitUntil(async () => (await rows()) === 3 || null, { timeoutMs: 90_000, what: 'the third checkpoint in the table' });
    assert(!(await frame.locator('#gl-trend-unread').count()), 'the complete checkpoint is still listed as not read');
    assertChartsMatch(await charts(frame), cliTrend(folder));
    assert(readFileSync(next, 'utf8') === full, 'the checkpoint file changed under the test');
  },
};
