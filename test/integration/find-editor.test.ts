// The desktop-editor search of run-integration.mjs, on invented file trees (no install needed).
// Install layouts are common practice of desktop VS Code packages, written from memory:
// Linux  /usr/share/code/bin/code → /usr/share/code/code, with resources/app/product.json;
// macOS  <X>.app/Contents/Resources/app/bin/code → <X>.app/Contents/MacOS/<binary>.
import { spawnSync } from 'node:child_process';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { ENV_VAR, electronFromLauncher, findDesktopEditor, type EditorFs } from './find-editor.mjs';

/** A fake file system: `files` are regular files, `links` map a path to its real path. */
function fakeFs(files: string[], links: Record<string, string> = {}): EditorFs {
  const all = new Set([...files, ...Object.keys(links)]);
  return {
    isFile: (path) => all.has(path),
    exists: (path) => all.has(path),
    realpath: (path) => links[path] ?? path,
  };
}

const linuxInstall = ['/usr/share/code/bin/code', '/usr/share/code/code', '/usr/share/code/resources/app/product.json'];

describe('findDesktopEditor', () => {
  it('follows a `code` link on PATH to the Electron binary of a Linux install', () => {
    const fs = fakeFs(linuxInstall, { '/usr/bin/code': '/usr/share/code/bin/code' });
    const found = findDesktopEditor({ env: { PATH: '/usr/local/bin:/usr/bin' }, platform: 'linux', fs });
    expect(found).toEqual({ executable: '/usr/share/code/code', source: '/usr/bin/code' });
  });

  it('does not take code-server, or a `code` script outside a desktop install', () => {
    const codeServer = '/opt/code-server/lib/vscode/bin/remote-cli/code-linux.sh';
    const fs = fakeFs(['/opt/code-server/bin/code-server', codeServer, '/opt/code-server/lib/vscode/product.json'],
      { '/usr/local/bin/code-server': '/opt/code-server/bin/code-server', '/usr/local/bin/code': codeServer });
    const found = findDesktopEditor({ env: { PATH: '/usr/local/bin' }, platform: 'linux', fs });
    expect(found.executable).toBeUndefined();
    expect(found.misconfigured).toBeUndefined();
  });

  it('rejects a `bin/code` whose install has no Electron binary beside it', () => {
    const fs = fakeFs(['/usr/share/code/bin/code', '/usr/share/code/resources/app/product.json']);
    expect(electronFromLauncher('/usr/share/code/bin/code', 'linux', fs)).toBeUndefined();
  });

  it('maps a macOS app bundle launcher to the binary in Contents/MacOS', () => {
    const app = '/Applications/Editor.app/Contents';
    const fs = fakeFs([`${app}/Resources/app/bin/code`, `${app}/Resources/app/product.json`, `${app}/MacOS/Code`]);
    expect(electronFromLauncher(`${app}/Resources/app/bin/code`, 'darwin', fs)).toBe(`${app}/MacOS/Code`);
  });

  it('prefers the environment variable over PATH, and accepts the launcher there too', () => {
    const fs = fakeFs([...linuxInstall, '/opt/other/code'], { '/usr/bin/code': '/usr/share/code/bin/code' });
    expect(findDesktopEditor({ env: { [ENV_VAR]: '/opt/other/code', PATH: '/usr/bin' }, platform: 'linux', fs }))
      .toEqual({ executable: '/opt/other/code', source: ENV_VAR });
    expect(findDesktopEditor({ env: { [ENV_VAR]: '/usr/share/code/bin/code' }, platform: 'linux', fs }).executable)
      .toBe('/usr/share/code/code');
  });

  it('reports a variable that names no file as a misconfiguration rather than "not installed"', () => {
    const found = findDesktopEditor({ env: { [ENV_VAR]: '/nowhere/code' }, platform: 'linux', fs: fakeFs([]) });
    expect(found.executable).toBeUndefined();
    expect(found.misconfigured).toBe(true);
  });
});

describe('run-integration.mjs without a desktop editor', () => {
  it('prints exactly one line and exits 0', () => {
    const script = join(dirname(fileURLToPath(import.meta.url)), 'run-integration.mjs');
    // A PATH with only node's own folder: no `code` can be found there unless node sits in an editor install.
    const result = spawnSync(process.execPath, [script], {
      env: { PATH: dirname(process.execPath), HOME: process.env.HOME ?? '/tmp' }, encoding: 'utf8',
    });
    expect(result.status).toBe(0);
    const lines = result.stdout.split('\n').filter((line) => line.length > 0);
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/not run, no desktop VS Code is installed and none can be downloaded here; the code-server suite carries the proof/);
    expect(result.stderr).toBe('');
  });
});
