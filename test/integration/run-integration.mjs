// Desktop in-editor integration suite: starts an installed desktop VS Code through
// @vscode/test-electron with this repository as the extension under development, opens a copy of
// demo/, and runs suite/index.cjs inside the editor's extension host.
//
// Never downloads an editor: without GAINLINE_VSCODE_EXECUTABLE or a desktop `code` on PATH it
// prints one line and exits 0 (the code-server suite in test/e2e carries the proof then).
// Linux without a display: run it under `xvfb-run -a node test/integration/run-integration.mjs`.
// Option: --skip-build (reuse dist/ as it is).
import { spawnSync } from 'node:child_process';
import { cpSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { findDesktopEditor } from './find-editor.mjs';

const HERE = dirname(fileURLToPath(import.meta.url));
const REPO_ROOT = join(HERE, '..', '..');
const NOT_RUN_LINE = 'desktop integration suite (@vscode/test-electron): not run, no desktop VS Code is installed and none can be downloaded here; the code-server suite carries the proof';

const log = (line) => console.log(`[integration] ${line}`);

async function main() {
  const found = findDesktopEditor();
  if (!found.executable) {
    if (found.misconfigured) {
      console.error(`[integration] ${found.reason}`);
      return 1;
    }
    console.log(NOT_RUN_LINE);
    return 0;
  }
  log(`desktop VS Code: ${found.executable} (from ${found.source})`);
  if (process.platform === 'linux' && !process.env.DISPLAY && !process.env.WAYLAND_DISPLAY) {
    log('no DISPLAY set: the editor window may fail to start; xvfb-run -a provides one');
  }
  if (!process.argv.includes('--skip-build')) {
    const build = spawnSync(process.execPath, ['build.mjs'], { cwd: REPO_ROOT, stdio: 'inherit' });
    if (build.status !== 0) {
      console.error('[integration] build failed');
      return 1;
    }
  }
  const scratch = mkdtempSync(join(tmpdir(), 'gainline-integration-'));
  const workspace = join(scratch, 'demo');
  cpSync(join(REPO_ROOT, 'demo'), workspace, { recursive: true });
  try {
    // Imported only here so the no-editor path loads nothing that could reach the network.
    const { runTests } = await import('@vscode/test-electron');
    await runTests({
      vscodeExecutablePath: found.executable,
      extensionDevelopmentPath: REPO_ROOT,
      extensionTestsPath: join(HERE, 'suite', 'index.cjs'),
      extensionTestsEnv: { GAINLINE_IT_WORKSPACE: workspace },
      launchArgs: [
        workspace,
        '--disable-extensions',
        '--disable-workspace-trust',
        '--user-data-dir', join(scratch, 'user-data'),
        '--extensions-dir', join(scratch, 'extensions'),
      ],
    });
    log('desktop integration suite passed');
    return 0;
  } catch (error) {
    console.error(`[integration] desktop integration suite failed: ${error instanceof Error ? error.message : error}`);
    return 1;
  } finally {
    rmSync(scratch, { recursive: true, force: true });
  }
}

process.exitCode = await main();
