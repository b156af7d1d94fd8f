// `npm run typecheck`: one TypeScript check per build target, each with only its platform's types,
// so code that would not run there does not compile (DOM in the engine, Node in the webview or in
// the presentation module). The presentation target is passed over, with a note, while its folder
// holds no TypeScript file yet.
import { spawnSync } from 'node:child_process';
import { readdirSync } from 'node:fs';
import { createRequire } from 'node:module';
import { join } from 'node:path';

const TARGETS = [
  { dir: 'extension/engine', what: 'engine (ES2022 + Node)' },
  { dir: 'extension/presentation', what: 'presentation (ES2022 only: no Node, no DOM)', optional: true },
  { dir: 'extension', what: 'host, worker, CLI, protocol (ES2022 + Node)' },
  { dir: 'webview', what: 'webview (ES2022 + DOM, no Node)' },
  { dir: '.', what: 'tests (ES2022 + Node + DOM)' },
];

const tsc = createRequire(import.meta.url).resolve('typescript/bin/tsc');

function hasTypeScript(dir) {
  return readdirSync(dir).some((name) => name.endsWith('.ts'));
}

let failed = 0;
for (const { dir, what, optional } of TARGETS) {
  if (optional && !hasTypeScript(dir)) {
    console.log(`typecheck: ${what}: no TypeScript files in ${dir} yet`);
    continue;
  }
  const run = spawnSync(process.execPath, [tsc, '-p', join(dir, 'tsconfig.json')], { stdio: 'inherit' });
  if (run.status !== 0) {
    failed++;
    console.error(`typecheck: ${what} failed`);
  }
}
process.exit(failed === 0 ? 0 : 1);
