// Finds a desktop (Electron) VS Code on this machine without touching the network.
// Order: GAINLINE_VSCODE_EXECUTABLE, then a `code`-like command on PATH. The command on PATH is
// a launcher script in `<install>/bin/`; the runner needs the Electron binary it starts, so the
// script is followed to its install folder and accepted only when that folder holds the desktop
// layout (`resources/app/product.json`, or `Contents/Resources/app/product.json` on macOS).
// code-server ships neither an Electron binary nor that layout, so it is never picked.
import { existsSync, realpathSync, statSync } from 'node:fs';
import { basename, delimiter, dirname, join } from 'node:path';

export const ENV_VAR = 'GAINLINE_VSCODE_EXECUTABLE';
const CLI_NAMES = ['code', 'code-insiders', 'codium'];
const MAC_BINARIES = ['Electron', 'Code', 'Code - Insiders', 'VSCodium'];
const WINDOWS_BINARIES = ['Code.exe', 'Code - Insiders.exe', 'VSCodium.exe'];

const realFs = {
  isFile: (path) => { try { return statSync(path).isFile(); } catch { return false; } },
  exists: (path) => existsSync(path),
  realpath: (path) => realpathSync(path),
};

/**
 * Maps a launcher script (`…/bin/code`, `…/bin/code.cmd`) to the Electron executable of the same
 * install; returns undefined when the script does not sit in a desktop install.
 */
export function electronFromLauncher(launcher, platform = process.platform, fs = realFs) {
  const binDir = dirname(launcher);
  if (basename(binDir) !== 'bin') return undefined;
  const appRoot = dirname(binDir);
  if (platform === 'darwin') {
    // <X>.app/Contents/Resources/app/bin/code → <X>.app/Contents/MacOS/<binary>
    if (!fs.exists(join(appRoot, 'product.json'))) return undefined;
    const macOsDir = join(dirname(dirname(appRoot)), 'MacOS');
    return MAC_BINARIES.map((name) => join(macOsDir, name)).find((path) => fs.isFile(path));
  }
  if (!fs.exists(join(appRoot, 'resources', 'app', 'product.json'))) return undefined;
  if (platform === 'win32') return WINDOWS_BINARIES.map((name) => join(appRoot, name)).find((path) => fs.isFile(path));
  // Linux: the launcher starts "$VSCODE_PATH/<its own name>", e.g. /usr/share/code/code.
  const electron = join(appRoot, basename(launcher));
  return fs.isFile(electron) ? electron : undefined;
}

/**
 * Returns `{ executable, source }` for a desktop VS Code, or `{ executable: undefined, reason }`.
 * `env`, `platform` and `fs` are parameters so the search can be tested without an install.
 */
export function findDesktopEditor({ env = process.env, platform = process.platform, fs = realFs } = {}) {
  const given = env[ENV_VAR];
  if (given) {
    if (!fs.isFile(given)) return { executable: undefined, reason: `${ENV_VAR}=${given} is not a file`, misconfigured: true };
    const real = fs.realpath(given);
    // Accept either the Electron binary itself or the launcher script of a desktop install.
    return { executable: electronFromLauncher(real, platform, fs) ?? real, source: ENV_VAR };
  }
  const suffixes = platform === 'win32' ? ['.cmd', '.exe', ''] : [''];
  const dirs = (env.PATH ?? env.Path ?? '').split(platform === 'win32' ? ';' : delimiter).filter(Boolean);
  for (const dir of dirs) {
    for (const name of CLI_NAMES) {
      for (const suffix of suffixes) {
        const candidate = join(dir, name + suffix);
        if (!fs.isFile(candidate)) continue;
        const electron = electronFromLauncher(fs.realpath(candidate), platform, fs);
        if (electron) return { executable: electron, source: candidate };
      }
    }
  }
  return { executable: undefined, reason: 'no desktop VS Code on PATH' };
}
