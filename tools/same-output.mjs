// Records what the built command line prints for a fixed set of runs, or checks that it prints the
// same bytes as a recording: the proof that a refactor left the output unchanged.
//
//   node tools/same-output.mjs record DIR [--big DUMP1 DUMP2 DUMP3]
//   node tools/same-output.mjs check DIR  [--big DUMP1 DUMP2 DUMP3]
//
// GAINLINE_CLI names the bundle to run (default dist/cli.js; a saved copy of dist/ records the 'before').
//
// Each run is stored as DIR/NAME.out (standard output), NAME.err (standard error) and NAME.code (exit
// status). The demo files are always used; --big adds three large dumps of the same queries (for
// example from test/support/make-demo-data.mjs with seeds 1, 2 and 3). Every run is made with threads
// chosen from the size, with --threads 1 and with --threads 2 (which takes the threaded paths even on
// small files).
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, writeFileSync, existsSync } from 'node:fs';
import { join } from 'node:path';

const [mode, dir, ...rest] = process.argv.slice(2);
if ((mode !== 'record' && mode !== 'check') || dir === undefined) {
  console.error('usage: node tools/same-output.mjs record|check DIR [--big DUMP1 DUMP2 DUMP3]');
  process.exit(2);
}
const bigAt = rest.indexOf('--big');
const big = bigAt >= 0 ? rest.slice(bigAt + 1, bigAt + 4) : [];
if (bigAt >= 0 && big.length !== 3) {
  console.error('--big: expected three dump files');
  process.exit(2);
}

const CLI = process.env.GAINLINE_CLI ?? 'dist/cli.js';
const A = 'demo/runs/model-a.csv';
const B = 'demo/runs/model-b.csv';
const FORMATS = ['table', 'json', 'csv', 'markdown'];
const THREADS = [[], ['--threads', '1'], ['--threads', '2']];
const runs = [];
const add = (name, args) => THREADS.forEach((t, k) => runs.push({ name: `${name}.t${['auto', '1', '2'][k]}`, args: [...args, ...t] }));

for (const format of FORMATS) {
  add(`demo-eval-a.${format}`, ['eval', A, '--format', format]);
  add(`demo-compare.${format}`, ['compare', A, B, '--format', format]);
  add(`demo-compare3.${format}`, ['compare', A, B, 'demo/runs/model-b.parquet', '--format', format]);
}
add('demo-eval-b-parquet', ['eval', 'demo/runs/model-b.parquet', '--format', 'json']);
add('demo-eval-a-jsonl', ['eval', 'demo/runs/model-a.jsonl.gz', '--format', 'json']);
add('demo-eval-a-run', ['eval', 'demo/runs/model-a.run', '--judgments', 'demo/judgments/grades.qrels', '--format', 'json']);
add('demo-eval-a-sparse', ['eval', 'demo/runs/model-a.sparse', '--scores', 'demo/runs/model-a.sparse.scores', '--format', 'json']);
add('demo-eval-a-joined', ['eval', A, '--queries', 'demo/judgments/queries.tsv', '--items', 'demo/judgments/items.tsv', '--format', 'json']);
add('demo-eval-a-worst', ['eval', A, '--worst', '25', '--sort', 'loss-share', '--ties', 'pessimistic', '--gain', 'linear']);
add('demo-eval-a-diagnostics', ['eval', A, '--diagnostics', '--format', 'json']);
add('demo-eval-a-segment', ['eval', A, '--segment', 'locale', '--format', 'json']);
add('demo-compare-run', ['compare', 'demo/runs/model-a.run', 'demo/runs/model-b.run', '--judgments', 'demo/judgments/grades.qrels', '--format', 'json']);
add('demo-eval-missing', ['eval', 'demo/runs/no-such-file.csv']);
if (big.length === 3) {
  const [b1, b2, b3] = big;
  for (const format of FORMATS) {
    add(`big-eval.${format}`, ['eval', b1, '--format', format]);
    add(`big-compare.${format}`, ['compare', b1, b2, '--format', format]);
    add(`big-compare3.${format}`, ['compare', b1, b2, b3, '--format', format]);
  }
  add('big-eval-diagnostics', ['eval', b1, '--diagnostics', '--format', 'json']);
}

mkdirSync(dir, { recursive: true });
let differing = 0;
for (const run of runs) {
  const result = spawnSync(process.execPath, [CLI, ...run.args], { maxBuffer: 1 << 30 });
  const files = { out: result.stdout, err: result.stderr, code: Buffer.from(`${result.status}\n`) };
  for (const [ext, bytes] of Object.entries(files)) {
    const path = join(dir, `${run.name}.${ext}`);
    if (mode === 'record') writeFileSync(path, bytes);
    else if (!existsSync(path) || !readFileSync(path).equals(bytes)) {
      differing++;
      console.log(`differs: ${path}`);
    }
  }
}
console.log(`${runs.length} runs ${mode === 'record' ? 'recorded' : differing === 0 ? 'all byte-identical' : `, ${differing} files differ`}`);
process.exit(differing === 0 ? 0 : 1);
