// Starts code-server on a free localhost port with no auth, a fresh profile
// (user-data-dir + extensions-dir inside the clone) and settings that keep the
// first window quiet: no welcome page, no trust prompt, no telemetry, no update
// or recommendation pop-ups. Used by the end-to-end runner and `npm run demo`.
import { spawn, spawnSync } from 'node:child_process';
import { createWriteStream, mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { join } from 'node:path';
import { codeServerEnv, ensureCodeServer, paths } from './code-server-install.mjs';

export const QUIET_SETTINGS = {
  'workbench.startupEditor': 'none',
  'workbench.tips.enabled': false,
  'workbench.welcomePage.walkthroughs.openOnInstall': false,
  'workbench.enableExperiments': false,
  'workbench.colorTheme': 'Default Dark Modern',
  'security.workspace.trust.enabled': false,
  'security.workspace.trust.startupPrompt': 'never',
  'telemetry.telemetryLevel': 'off',
  'update.mode': 'none',
  'extensions.autoCheckUpdates': false,
  'extensions.autoUpdate': false,
  'extensions.ignoreRecommendations': true,
  'chat.disableAIFeatures': true,
  'chat.commandCenter.enabled': false,
  'git.enabled': false,
  'git.openRepositoryInParentFolders': 'never',
  'window.restoreWindows': 'none',
  'files.hotExit': 'off',
  'editor.minimap.enabled': false,
  'workbench.layoutControl.enabled': false,
  'workbench.editor.enablePreview': false,
  'workbench.secondarySideBar.defaultVisibility': 'hidden',
  'workbench.panel.defaultLocation': 'bottom',
};

export function freePort() {
  return new Promise((resolvePort, reject) => {
    const server = createServer();
    server.unref();
    server.on('error', reject);
    server.listen(0, '127.0.0.1', () => {
      const address = server.address();
      server.close(() => resolvePort(typeof address === 'object' && address ? address.port : 0));
    });
  });
}

/** Creates an empty profile; `fresh` wipes any previous one first. */
export function prepareProfile(profileDir, { settings = {}, fresh = true } = {}) {
  if (fresh) rmSync(profileDir, { recursive: true, force: true });
  const userDataDir = join(profileDir, 'user-data');
  const extensionsDir = join(profileDir, 'extensions');
  mkdirSync(join(userDataDir, 'User'), { recursive: true });
  mkdirSync(extensionsDir, { recursive: true });
  writeFileSync(join(userDataDir, 'User', 'settings.json'),
    JSON.stringify({ ...QUIET_SETTINGS, ...settings }, null, 2));
  // An empty config keeps code-server from writing a default one (with a password) into $HOME.
  const configFile = join(profileDir, 'config.yaml');
  writeFileSync(configFile, 'auth: none\ncert: false\n');
  return { profileDir, userDataDir, extensionsDir, configFile };
}

/** Installs a .vsix offline into the profile's extensions dir. */
export function installVsix(profile, vsixPath) {
  ensureCodeServer();
  const result = spawnSync(paths.node24, [paths.codeServerEntry,
    '--config', profile.configFile,
    '--user-data-dir', profile.userDataDir,
    '--extensions-dir', profile.extensionsDir,
    '--install-extension', vsixPath, '--force'], { env: codeServerEnv(), encoding: 'utf8' });
  const output = `${result.stdout}${result.stderr}`;
  if (result.status !== 0 || !/successfully installed/i.test(output)) {
    throw new Error(`installing ${vsixPath} failed (exit ${result.status}):\n${output}`);
  }
  return output.trim();
}

async function waitForHealth(url, child, timeoutMs) {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    if (child.exitCode !== null) throw new Error(`code-server exited early with ${child.exitCode}`);
    try {
      const response = await fetch(new URL('healthz', url), { signal: AbortSignal.timeout(2000) });
      if (response.ok) return;
    } catch { /* not listening yet */ }
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`code-server did not answer on ${url} within ${timeoutMs} ms`);
}

/**
 * Starts code-server for `folder` with the given profile. Resolves once it
 * answers /healthz; `stop()` ends the process group it started (and only it).
 */
export async function startCodeServer({ folder, profile, port, logFile, timeoutMs = 60_000 }) {
  ensureCodeServer();
  const chosenPort = port ?? await freePort();
  const args = [paths.codeServerEntry,
    '--config', profile.configFile,
    '--auth', 'none',
    '--bind-addr', `127.0.0.1:${chosenPort}`,
    '--user-data-dir', profile.userDataDir,
    '--extensions-dir', profile.extensionsDir,
    '--disable-telemetry', '--disable-update-check', '--disable-workspace-trust',
    '--disable-getting-started-override', '--ignore-last-opened',
    folder];
  const child = spawn(paths.node24, args, { env: codeServerEnv(), detached: true, stdio: ['ignore', 'pipe', 'pipe'] });
  if (logFile) {
    const sink = createWriteStream(logFile);
    child.stdout.pipe(sink);
    child.stderr.pipe(sink);
  } else {
    child.stdout.resume();
    child.stderr.resume();
  }
  const baseUrl = `http://127.0.0.1:${chosenPort}/`;
  const stop = async () => {
    if (child.exitCode !== null || child.signalCode !== null) return;
    const exited = new Promise((r) => child.once('exit', r));
    try { process.kill(-child.pid, 'SIGTERM'); } catch { /* already gone */ }
    const timer = setTimeout(() => { try { process.kill(-child.pid, 'SIGKILL'); } catch { /* gone */ } }, 5000);
    await exited;
    clearTimeout(timer);
  };
  try {
    await waitForHealth(baseUrl, child, timeoutMs);
  } catch (error) {
    await stop();
    throw error;
  }
  const folderUrl = `${baseUrl}?folder=${encodeURIComponent(folder)}`;
  return { port: chosenPort, baseUrl, folderUrl, pid: child.pid, process: child, stop };
}
