// Packages the built extension as gainline-<version>.vsix in the repository
// root, then checks that only the allowed files went in (the bundles in dist/,
// media/, README.md, LICENSE, package.json). Run through `npm run package`,
// which builds first. Prints the path of the .vsix on its last line.
import { spawnSync } from 'node:child_process';
import { existsSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');
const vsceCli = join(root, 'node_modules', '@vscode', 'vsce', 'vsce');
const allowed = [/^dist\//, /^media\//, /^README\.md$/i, /^LICENSE(\.txt)?$/i, /^package\.json$/];

function vsce(args) {
  // stdin is closed so that any question vsce might ask fails instead of hanging.
  const result = spawnSync(process.execPath, [vsceCli, ...args], { cwd: root, encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
  if (result.status !== 0) {
    throw new Error(`vsce ${args.join(' ')} failed (exit ${result.status}):\n${result.stdout}${result.stderr}`);
  }
  return result.stdout;
}

export function packageVsix({ log = console.log } = {}) {
  const manifest = JSON.parse(readFileSync(join(root, 'package.json'), 'utf8'));
  const entry = join(root, manifest.main ?? 'dist/extension.js');
  if (!existsSync(entry)) throw new Error(`extension entry ${manifest.main} is missing: run "npm run build" first`);
  const out = join(root, `${manifest.name}-${manifest.version}.vsix`);
  // Relative README links stay relative: the README is read from inside the package.
  const listed = vsce(['ls', '--no-dependencies']).split('\n').map((l) => l.trim()).filter(Boolean);
  const stray = listed.filter((file) => !allowed.some((pattern) => pattern.test(file)));
  if (stray.length > 0) throw new Error(`files outside the allowed set would be packaged:\n  ${stray.join('\n  ')}`);
  vsce(['package', '--no-dependencies', '--no-rewrite-relative-links', '--out', out]);
  const kib = (statSync(out).size / 1024).toFixed(0);
  log(`[package] ${listed.length} files, ${kib} KiB`);
  return out;
}

if (process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  try {
    console.log(packageVsix());
  } catch (error) {
    console.error(error instanceof Error ? error.message : error);
    process.exit(1);
  }
}
