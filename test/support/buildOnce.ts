/**
 * Vitest global setup: builds dist/ once before any test file runs, so the command-line tests (which
 * run dist/cli.js as users do) never meet a bundle older than the sources. The build is skipped only
 * when dist/ was built by this setup from exactly the current sources: a hash of every file the
 * bundles are made from (extension/, webview/src/, build.mjs, package-lock.json) is kept next to it,
 * with the bundles' modification times, so a build run by hand since then also forces a fresh one.
 */
import { execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, readdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { join, relative, resolve } from 'node:path';

const REPO = resolve(__dirname, '../..');
const INPUTS = ['extension', 'webview/src', 'build.mjs', 'package-lock.json'];
const STAMP = join(REPO, 'dist', '.sources-hash');

function filesUnder(path: string): string[] {
  if (!statSync(path).isDirectory()) return [path];
  return readdirSync(path).sort().flatMap((name) => filesUnder(join(path, name)));
}

/** One hash over the names and contents of every input, so an added, removed or edited file changes it. */
export function sourcesHash(): string {
  const hash = createHash('sha256');
  for (const file of INPUTS.flatMap((input) => filesUnder(join(REPO, input)))) {
    hash.update(relative(REPO, file)).update('\0').update(readFileSync(file)).update('\0');
  }
  return hash.digest('hex');
}

/** Names and modification times of the built files (the stamp itself left out). */
function bundleTimes(): string {
  const dist = join(REPO, 'dist');
  if (!existsSync(dist)) return '';
  return readdirSync(dist).sort().filter((name) => join(dist, name) !== STAMP)
    .map((name) => `${name}@${statSync(join(dist, name)).mtimeMs}`).join('\n');
}

export default function setup(): void {
  const sources = sourcesHash();
  const stamp = existsSync(STAMP) ? readFileSync(STAMP, 'utf8') : '';
  if (stamp === `${sources}\n${bundleTimes()}` && existsSync(join(REPO, 'dist', 'cli.js'))) return;
  execFileSync(process.execPath, ['build.mjs'], { cwd: REPO, stdio: 'inherit' });
  writeFileSync(STAMP, `${sources}\n${bundleTimes()}`);
}
