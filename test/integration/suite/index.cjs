// In-editor checks, run by the desktop VS Code's extension host (extensionTestsPath). Plain
// CommonJS with node:assert and a small sequential runner: run() rejects when any check fails,
// which makes the editor exit non-zero and @vscode/test-electron report the failure.
'use strict';
const assert = require('node:assert/strict');
const path = require('node:path');
const vscode = require('vscode');

const EXTENSION_ID = 'gainline.gainline';
const VIEW_TYPE = 'gainline.rankedListViewer';
const COMMANDS = ['gainline.inspect', 'gainline.compareRuns', 'gainline.refreshRankedLists'];

// The settings defaults the extension documents in its manifest (package.json, contributes.configuration),
// written out here so a changed default in the manifest shows up as a failing check.
const DOCUMENTED_DEFAULTS = {
  metrics: ['ndcg@10', 'err@10', 'ap', 'rr', 'p@5', 'r@10', 'rbp', 'tau'],
  cutoffs: null,
  gain: 'exponential',
  ties: 'average',
  noRelevant: 'skip',
  relevantFrom: 1,
  rbpPersistence: 0.8,
  maxGrade: null,
  dumpGlob: '**/*.{csv,tsv,jsonl,parquet,run,gz}',
  'compare.permutations': 10000,
  'compare.bootstrapResamples': 2000,
  'compare.seed': 1,
  'compare.tieTolerance': 1e-9,
};

const checks = [];
const check = (name, fn) => checks.push({ name, fn });

/** Polls until `probe` returns a truthy value; the editor opens tabs a moment after the command resolves. */
async function eventually(probe, what, timeoutMs = 10_000) {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const value = probe();
    if (value) return value;
    if (Date.now() > until) throw new Error(`timed out waiting for ${what}`);
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
}

function workspaceRoot() {
  const folder = vscode.workspace.workspaceFolders?.[0];
  assert.ok(folder, 'a workspace folder is open');
  return folder.uri;
}

check('the workspace is the copy of demo/ the runner made', () => {
  const expected = process.env.GAINLINE_IT_WORKSPACE;
  assert.ok(expected, 'GAINLINE_IT_WORKSPACE is passed to the extension host');
  assert.equal(path.resolve(workspaceRoot().fsPath), path.resolve(expected));
});

check('the extension is found and activates', async () => {
  const extension = vscode.extensions.getExtension(EXTENSION_ID);
  assert.ok(extension, `extension ${EXTENSION_ID} is loaded from the development path`);
  await extension.activate();
  assert.equal(extension.isActive, true);
});

check('its commands are registered', async () => {
  const registered = new Set(await vscode.commands.getCommands(true));
  for (const command of COMMANDS) assert.ok(registered.has(command), `${command} is registered`);
});

check('settings under "gainline" have the documented defaults', () => {
  const settings = vscode.workspace.getConfiguration('gainline');
  for (const [key, expected] of Object.entries(DOCUMENTED_DEFAULTS)) {
    // inspect().defaultValue reads the contributed default, whatever a user or workspace set.
    assert.deepEqual(settings.inspect(key)?.defaultValue, expected, `default of gainline.${key}`);
  }
  assert.deepEqual(settings.inspect('columnsByPattern')?.defaultValue, {}, 'default of gainline.columnsByPattern');
});

check('Open With the ranked-list viewer shows model-a.csv in a custom editor tab', async () => {
  const dump = vscode.Uri.joinPath(workspaceRoot(), 'runs', 'model-a.csv');
  await vscode.commands.executeCommand('vscode.openWith', dump, VIEW_TYPE);
  const tab = await eventually(() => {
    const active = vscode.window.tabGroups.activeTabGroup.activeTab;
    return active && active.input instanceof vscode.TabInputCustom ? active : undefined;
  }, 'a custom editor tab');
  assert.equal(tab.input.viewType, VIEW_TYPE);
  assert.equal(tab.input.uri.toString(), dump.toString());
});

check('the refresh command runs without error while a dump is open', async () => {
  await vscode.commands.executeCommand('gainline.refreshRankedLists');
});

async function run() {
  const failures = [];
  for (const { name, fn } of checks) {
    try {
      await fn();
      console.log(`  ok   ${name}`);
    } catch (error) {
      failures.push(name);
      console.error(`  FAIL ${name}: ${error instanceof Error ? error.message : error}`);
    }
  }
  console.log(`desktop integration: ${checks.length - failures.length} passed, ${failures.length} failed`);
  if (failures.length > 0) throw new Error(`${failures.length} of ${checks.length} in-editor checks failed: ${failures.join('; ')}`);
}

module.exports = { run };
