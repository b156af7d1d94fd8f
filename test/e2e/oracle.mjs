// Expected values for the end-to-end checks, taken from the command line
// (dist/cli.js) on the very same files the UI opens. The UI and the CLI share
// the engine, so this checks the whole path from file to pixels agrees with it;
// the engine itself is checked against outside references in test/engine.
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { REPO_ROOT } from '../support/code-server-install.mjs';

const CLI = join(REPO_ROOT, 'dist', 'cli.js');

function runCli(args) {
  const result = spawnSync(process.execPath, [CLI, ...args], { cwd: REPO_ROOT, encoding: 'utf8', maxBuffer: 256 * 1024 * 1024 });
  return { status: result.status, stdout: result.stdout ?? '', stderr: result.stderr ?? '' };
}

function runJson(args) {
  const result = runCli(args);
  if (result.status !== 0) {
    throw new Error(`gainline ${args.join(' ')} exited ${result.status}: ${result.stderr.trim().split('\n')[0]}`);
  }
  return JSON.parse(result.stdout);
}

/** Same rounding the UI promises: exactly 4 decimals. */
export function fourDecimals(value) {
  return Number(value).toFixed(4);
}

/** `gainline eval FILE --format json`, reduced to what the UI checks need. */
export function evalExpectations(file) {
  const json = runJson(['eval', file, '--format', 'json']);
  const headline = json.headline ?? 'ndcg@10';
  const mean = json.summary[headline];
  const scored = json.queries.filter((q) => !q.skipped && typeof q[headline] === 'number');
  if (scored.length === 0) throw new Error(`${file}: no scored query in the CLI output`);
  const lowest = Math.min(...scored.map((q) => q[headline]));
  // Several queries can share the lowest value; any of them may come first.
  const worstQueries = scored.filter((q) => q[headline] === lowest).map((q) => q.query);
  return { headline, mean, meanText: fourDecimals(mean), worstQueries, lowest, queryCount: json.queryCount, json };
}

/** Exit status and first error line of `gainline eval` on a file expected to be malformed. */
export function evalFailure(file) {
  const result = runCli(['eval', file, '--format', 'json']);
  return { status: result.status, message: result.stderr.trim().split('\n')[0] ?? '' };
}

/** `gainline compare A B --format json`: wins, ties and losses of B against A on the headline metric. */
export function compareExpectations(fileA, fileB) {
  const json = runJson(['compare', fileA, fileB, '--format', 'json']);
  return { ...readWinsTiesLosses(json), json };
}

/**
 * Finds the win/tie/loss counts in the compare JSON. The command's layout is
 * owned by the CLI; this accepts the counts either at the top level, under
 * `outcome`/`headline`, or in the headline metric's entry.
 */
export function readWinsTiesLosses(json) {
  const candidates = [json, json.outcome, json.headline, json.summary];
  const metric = typeof json.headline === 'string' ? json.headline : 'ndcg@10';
  for (const list of [json.metrics, json.tests, json.summary?.metrics]) {
    if (Array.isArray(list)) candidates.push(list.find((m) => m && (m.key === metric || m.metric === metric || m.name === metric)));
    else if (list && typeof list === 'object') candidates.push(list[metric]);
  }
  for (const c of candidates) {
    if (c && typeof c === 'object' && Number.isInteger(c.wins) && Number.isInteger(c.losses)) {
      return { wins: c.wins, ties: Number.isInteger(c.ties) ? c.ties : undefined, losses: c.losses };
    }
  }
  throw new Error(`no wins/losses found in the compare JSON (keys: ${Object.keys(json).join(', ')})`);
}
