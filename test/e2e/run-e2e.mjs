// End-to-end run in a real VS Code (code-server) driven by Playwright/Chromium:
// install code-server if needed, build and package the .vsix, install it into a
// fresh profile, open a copy of the demo workspace, run every scenario through
// the real UI, stop everything, and close with "N passed, N failed".
//
// Options: --only <regex> (run scenarios whose name matches),
//          --skip-package (reuse the existing .vsix), --update-media (copy the
//          README screenshots into media/), --headed-url (print the URL and wait).
import { spawnSync } from 'node:child_process';
import { copyFileSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { ensureCodeServer, ensureDebianPackages, RUN_DIR, isInstalled, REPO_ROOT, SYSTEM_PACKAGES } from '../support/code-server-install.mjs';
import { installVsix, prepareProfile, startCodeServer } from '../support/code-server-launch.mjs';
import { packageVsix } from '../support/package-vsix.mjs';
import { launchBrowser, openWorkbench } from './harness.mjs';
import { makeWorkspace, relative } from './workspace.mjs';
import { openWithShowsHeadline, parquetFromExplorerMenu, reopenWithAndFilter, rewriteKeepsSelection, worstQueryDetail } from './scenarios/dumps.mjs';
import { htmlIdsStayText, malformedShowsError } from './scenarios/safety.mjs';
import { compareWinsLosses } from './scenarios/compare.mjs';
import { themesReadable } from './scenarios/themes.mjs';
import { gridsReachEveryColumn, revealKeepsViewerUsable } from './scenarios/layout.mjs';
import { idealOrderAndStrip, smallThings, statusBarReadable } from './scenarios/firstHour.mjs';
import { compareFirstHour, compareSurvivesReload, gainlineContainer } from './scenarios/firstHourCompare.mjs';
import { firstScreenTimes } from './scenarios/firstScreen.mjs';
import { trendGrowsLive, trendSurvivesReload, trendViewMatchesCli } from './scenarios/trend.mjs';
import { duckdbServedFile } from './scenarios/sqlEngines.mjs';
import { streamedOverview } from './scenarios/streaming.mjs';

const SCENARIOS = [openWithShowsHeadline, reopenWithAndFilter, parquetFromExplorerMenu, worstQueryDetail, rewriteKeepsSelection, compareWinsLosses,
  htmlIdsStayText, malformedShowsError, themesReadable, gridsReachEveryColumn, revealKeepsViewerUsable,
  idealOrderAndStrip, statusBarReadable, smallThings, compareFirstHour, compareSurvivesReload, gainlineContainer, firstScreenTimes,
  duckdbServedFile, streamedOverview, trendViewMatchesCli, trendSurvivesReload, trendGrowsLive];
const SCENARIO_TIMEOUT_MS = 240_000;

const args = process.argv.slice(2);
const only = args.includes('--only') ? args[args.indexOf('--only') + 1] : undefined;
const skipPackage = args.includes('--skip-package');
const updateMedia = args.includes('--update-media');
const artifacts = join(REPO_ROOT, 'test-artifacts');

const seconds = (ms) => `${(ms / 1000).toFixed(1)} s`;
const log = (line) => console.log(`[e2e] ${line}`);

function build() {
  const result = spawnSync(process.execPath, ['build.mjs'], { cwd: REPO_ROOT, stdio: 'inherit' });
  if (result.status !== 0) throw new Error('build failed');
}

function runDesktopIntegration() {
  const result = spawnSync(process.execPath, [join(REPO_ROOT, 'test', 'integration', 'run-integration.mjs')], { cwd: REPO_ROOT, stdio: 'inherit' });
  return result.status === 0;
}

function withTimeout(promise, ms, what) {
  let timer;
  const timeout = new Promise((_, reject) => { timer = setTimeout(() => reject(new Error(`${what} timed out after ${seconds(ms)}`)), ms); });
  return Promise.race([promise, timeout]).finally(() => clearTimeout(timer));
}

async function main() {
  const started = Date.now();
  // Desktop editor suite first: one line when no desktop VS Code is installed, a failure counted below when it runs and fails.
  const desktopOk = !only || new RegExp(only, 'i').test('desktop integration') ? runDesktopIntegration() : true;
  rmSync(artifacts, { recursive: true, force: true });
  mkdirSync(artifacts, { recursive: true });
  const selected = SCENARIOS.filter((s) => !only || new RegExp(only, 'i').test(s.name));
  const results = [];
  let server;
  let browser;
  try {
    const wasInstalled = isInstalled();
    const t0 = Date.now();
    if (!process.env.GAINLINE_E2E_CHROMIUM) ensureDebianPackages([SYSTEM_PACKAGES.chromium], { log });
    ensureCodeServer({ log });
    log(`code-server ${wasInstalled ? 'already installed' : 'installed'} (${seconds(Date.now() - t0)})`);
    let vsix = join(REPO_ROOT, `gainline-${JSON.parse(readFileSync(join(REPO_ROOT, 'package.json'), 'utf8')).version}.vsix`);
    if (!skipPackage) {
      const t1 = Date.now();
      build();
      vsix = packageVsix({ log });
      log(`built and packaged ${relative({ root: REPO_ROOT }, vsix)} (${seconds(Date.now() - t1)})`);
    }
    const files = makeWorkspace();
    // The extension ships no native modules: DuckDB is the one installed for the build.
    const profile = prepareProfile(join(RUN_DIR, 'profile-e2e'), { settings: { 'gainline.duckdb.packageFolder': join(REPO_ROOT, 'node_modules', '@duckdb', 'node-api') } });
    installVsix(profile, vsix);
    server = await startCodeServer({ folder: files.root, profile, logFile: join(artifacts, 'code-server.log') });
    interruptCleanup = async () => { await browser?.close().catch(() => {}); await server?.stop().catch(() => {}); };
    log(`code-server on ${server.baseUrl}`);
    browser = await launchBrowser();
    // The size the README pictures are taken at; grids scroll sideways rather than cut numbers.
    const page = await browser.newPage({ viewport: { width: 1600, height: 1000 } });
    page.setDefaultTimeout(30_000);
    const dialogs = [];
    page.on('dialog', (dialog) => {
      dialogs.push(`${dialog.type()}: ${dialog.message()}`);
      void dialog.dismiss().catch(() => {});
    });
    const t2 = Date.now();
    await openWorkbench(page, server.folderUrl);
    log(`workbench ready (${seconds(Date.now() - t2)})`);
    const ctx = {
      page, files, dialogs, log,
      rel: (absolute) => relative(files, absolute),
      async shot(name, { readme = false } = {}) {
        const file = join(artifacts, `${name}.png`);
        await page.screenshot({ path: file });
        if (readme && updateMedia) copyFileSync(file, join(REPO_ROOT, 'media', `screenshot-${name}.png`));
      },
    };
    for (const scenario of selected) {
      const t = Date.now();
      try {
        await withTimeout(scenario.run(ctx), SCENARIO_TIMEOUT_MS, scenario.name);
        results.push({ name: scenario.name, ok: true });
        log(`ok   ${scenario.name} (${seconds(Date.now() - t)})`);
      } catch (error) {
        results.push({ name: scenario.name, ok: false });
        const slug = scenario.name.replace(/[^a-z0-9]+/gi, '-').slice(0, 60);
        await page.screenshot({ path: join(artifacts, `FAIL-${slug}.png`) }).catch(() => {});
        log(`FAIL ${scenario.name} (${seconds(Date.now() - t)}): ${error instanceof Error ? error.message : error}`);
        await page.keyboard.press('Escape').catch(() => {});
      }
    }
  } catch (error) {
    log(`setup failed: ${error instanceof Error ? error.stack ?? error.message : error}`);
    const done = new Set(results.map((r) => r.name));
    for (const s of selected) if (!done.has(s.name)) results.push({ name: s.name, ok: false });
  } finally {
    await browser?.close().catch(() => {});
    await server?.stop().catch(() => {});
  }
  if (!desktopOk) results.push({ name: 'desktop integration suite (@vscode/test-electron)', ok: false });
  const passed = results.filter((r) => r.ok).length;
  const failed = results.length - passed;
  log(`suite took ${seconds(Date.now() - started)}; screenshots and code-server.log in test-artifacts/`);
  console.log(`${passed} passed, ${failed} failed`);
  process.exitCode = failed > 0 || results.length === 0 ? 1 : 0;
}

// Ctrl+C: the detached code-server would outlive us, so stop it first.
let interruptCleanup = async () => {};
process.on('SIGINT', () => { void interruptCleanup().finally(() => process.exit(130)); });
await main();
