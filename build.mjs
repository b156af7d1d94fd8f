// Bundles every entry point with esbuild. Each bundle is self-contained so the
// packaged extension ships no node_modules.
import * as esbuild from 'esbuild';
import { chmodSync, copyFileSync, existsSync, mkdirSync } from 'node:fs';
import { compileKeySortKernel, compileRecordKernel, compileRecordTextKernel } from './extension/engine/readers/kernel/compile.mjs';

const watch = process.argv.includes('--watch');
const common = { bundle: true, sourcemap: true, logLevel: 'warning', target: 'es2022' };

const entries = [
  // Command line: plain Node, runnable as `gainline` through package.json "bin": a launcher (see extension/cli/main.ts).
  { ...common, entryPoints: ['extension/cli/main.ts'], outfile: 'dist/cli.js', platform: 'node', format: 'cjs',
    banner: { js: '#!/usr/bin/env node' } },
  // The commands themselves, loaded by dist/cli.js in the process that runs them (see extension/cli/main.ts).
  { ...common, entryPoints: ['extension/cli/runHere.ts'], outfile: 'dist/cliCommands.js', platform: 'node', format: 'cjs',
    // DuckDB is a native module, loaded only by --engine duckdb: it stays outside the bundle.
    external: ['@duckdb/node-api'] },
  // Engine worker thread used by the CLI and the extension host for parallel reading.
  { ...common, entryPoints: ['extension/worker/engineWorker.ts'], outfile: 'dist/engineWorker.js', platform: 'node', format: 'cjs',
    // The editor's views served through DuckDB load it at use, from a folder the user names.
    external: ['@duckdb/node-api'] },
  // Parse worker: one byte range of a large CSV/TSV per thread (found next to the bundle that starts it).
  { ...common, entryPoints: ['extension/engine/threads/parseWorker.ts'], outfile: 'dist/parseWorker.js', platform: 'node', format: 'cjs' },
  // Checkpoint worker: a lane of a training series (`gainline trend`, the editor's trend view) scores checkpoints on it.
  { ...common, entryPoints: ['extension/engine/threads/checkpointWorker.ts'], outfile: 'dist/checkpointWorker.js', platform: 'node', format: 'cjs' },
  // Stream worker: reads and scores one block of a dump grouped by query (engine/stream/).
  { ...common, entryPoints: ['extension/engine/stream/streamWorker.ts'], outfile: 'dist/streamWorker.js', platform: 'node', format: 'cjs' },
  // Score worker: one range of queries of a large dump per thread, written into shared columns.
  { ...common, entryPoints: ['extension/engine/threads/scoreWorker.ts'], outfile: 'dist/scoreWorker.js', platform: 'node', format: 'cjs' },
];
if (existsSync('extension/host/extension.ts')) {
  entries.push({ ...common, entryPoints: ['extension/host/extension.ts'], outfile: 'dist/extension.js', platform: 'node',
    format: 'cjs', external: ['vscode', '@duckdb/node-api'] });
}
if (existsSync('webview/src/main.ts')) {
  // Minified: every view loads it anew, and its first screen waits for it (the source map keeps errors readable).
  entries.push({ ...common, entryPoints: ['webview/src/main.ts'], outfile: 'dist/webview.js', platform: 'browser',
    format: 'iife', loader: { '.ttf': 'file', '.css': 'text' }, minify: true });
}

const present = entries.filter((e) => existsSync(e.entryPoints[0]));
if (watch) {
  for (const e of present) (await esbuild.context(e)).watch();
} else {
  mkdirSync('dist', { recursive: true });
  // The WebAssembly kernels (reading delimited text, sorting a query's items, writing the JSON report's records) are found next to the bundles.
  await Promise.all([...present.map((e) => esbuild.build(e)), compileRecordKernel('dist/simpleRecords.wasm'), compileKeySortKernel('dist/keySort.wasm'),
    compileRecordTextKernel('dist/recordText.wasm')]);
  if (existsSync('dist/cli.js')) chmodSync('dist/cli.js', 0o755);
}

// Codicon font and stylesheet for the webview, served from dist/ (the only folder it may load from).
mkdirSync('dist/codicons', { recursive: true });
for (const file of ['codicon.css', 'codicon.ttf']) {
  copyFileSync(`node_modules/@vscode/codicons/dist/${file}`, `dist/codicons/${file}`);
}
