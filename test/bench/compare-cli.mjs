// End-to-end part of bench-compare.mjs: what a user waits for. Two 1M-row CSV runs of the same queries
// and items (B = A's scores with seeded noise), then `node dist/cli.js eval A`, `eval B` and
// `compare A B`, all with `--format json` (output captured for a consistency check), best of 2 each, wall and CPU
// (user + system over all threads) from /usr/bin/time -v. Target: comparing two 1M-row
// runs takes at most 1.5× the time of evaluating both.
import { spawnSync } from 'node:child_process';
import { closeSync, createReadStream, existsSync, mkdirSync, openSync, renameSync, statSync, writeSync } from 'node:fs';
import { loadavg } from 'node:os';
import { join } from 'node:path';
import { createInterface } from 'node:readline';
import { cli, dataDir, rng, root, TIME, timedCli } from './benchTools.mjs';

const RUNS = 2;

/** Run A: the same 1M-row file the other benchmarks use (10k queries), generated when missing. */
function ensureRunA() {
  const file = join(dataDir, 'dump-1m.csv');
  if (existsSync(file) && statSync(file).size >= 30_000_000) return file;
  mkdirSync(dataDir, { recursive: true });
  console.log(`generating ${file} (1M rows, 10k queries)…`);
  const r = spawnSync(process.execPath, [join(root, 'test/support/make-demo-data.mjs'), '--rows', '1000000', '--queries', '10000', '--out', file], { stdio: 'inherit' });
  if (r.status !== 0) throw new Error('generating run A failed');
  return file;
}

/**
 * Run B: A line by line with the score column (4th field) moved by seeded noise, so the queries, items
 * and grades match and only the order changes. The generated file has no quoted fields.
 */
async function ensureRunB(fileA) {
  const file = join(dataDir, 'dump-1m-b.csv');
  if (existsSync(file) && statSync(file).mtimeMs >= statSync(fileA).mtimeMs) return file;
  console.log(`deriving ${file} from ${fileA} (scores + seeded noise)…`);
  const random = rng(20261202);
  const partial = `${file}.partial`;
  const fd = openSync(partial, 'w');
  let chunk = '';
  let header = true;
  for await (const line of createInterface({ input: createReadStream(fileA), crlfDelay: Infinity })) {
    if (header || line === '') {
      chunk += line + '\n';
      header = false;
      continue;
    }
    const fields = line.split(',');
    fields[3] = (Number(fields[3]) + (random() - 0.5) * 1.2).toFixed(4);
    chunk += fields.join(',') + '\n';
    if (chunk.length >= 1 << 20) {
      writeSync(fd, chunk);
      chunk = '';
    }
  }
  writeSync(fd, chunk);
  closeSync(fd);
  renameSync(partial, file);
  return file;
}

/** Best of `RUNS` by wall time and, separately, by CPU time (the least disturbed run of each kind). */
async function best(argv) {
  const runs = [];
  for (let i = 0; i < RUNS; i++) runs.push(await timedCli(argv));
  return {
    seconds: Math.min(...runs.map((r) => r.seconds)),
    cpu: Math.min(...runs.map((r) => r.cpu)),
    peakMB: Math.max(...runs.map((r) => r.peakMB)),
    stdout: runs[0].stdout,
  };
}

export async function benchCompareCli() {
  if (!existsSync(cli)) throw new Error('dist/cli.js is missing: run "npm run build" first (npm run bench does)');
  if (!existsSync(TIME)) throw new Error(`${TIME} is missing (Debian package "time"): it gives the CPU time of the child and its threads`);
  const fileA = ensureRunA();
  const fileB = await ensureRunB(fileA);
  console.log(`end to end, node dist/cli.js on ${fileA} and ${fileB} (load average ${loadavg().map((x) => x.toFixed(1)).join(' ')}, best of ${RUNS})`);
  const evalA = await best(['eval', fileA, '--format', 'json']);
  const evalB = await best(['eval', fileB, '--format', 'json']);
  const compare = await best(['compare', fileA, fileB, '--format', 'json']);
  const fmt = (x) => x.toFixed(2);
  const line = (label, r) => console.log(`  ${label.padEnd(16)} ${fmt(r.seconds)} s wall, ${fmt(r.cpu)} s CPU, peak ${r.peakMB.toFixed(0)} MB`);
  line('eval A', evalA);
  line('eval B', evalB);
  line('compare A B', compare);

  // The comparison must have scored the same numbers eval did, or the timing compares different work.
  const report = JSON.parse(compare.stdout);
  const headline = report.metrics.find((m) => m.key === report.headline);
  const meanA = JSON.parse(evalA.stdout).summary[report.headline];
  const meanB = JSON.parse(evalB.stdout).summary[report.headline];
  const agree = Math.abs(headline.meanA - meanA) < 1e-9 && Math.abs(headline.meanB - meanB) < 1e-9;
  console.log(`  ${report.headline}: A ${meanA.toFixed(5)}, B ${meanB.toFixed(5)}, Δ ${headline.meanDelta.toFixed(5)} ` +
    `(${report.options.permutations} sign patterns, ${report.options.bootstrap} resamples); compare and eval means ${agree ? 'agree' : 'DIFFER'}`);
  if (!agree) process.exitCode = 1;

  const wallRatio = compare.seconds / (evalA.seconds + evalB.seconds);
  const cpuRatio = compare.cpu / (evalA.cpu + evalB.cpu);
  console.log(`  target: compare ≤ 1.5× (eval A + eval B): wall ${fmt(wallRatio)}×, CPU ${fmt(cpuRatio)}× → ` +
    `${wallRatio <= 1.5 ? 'met' : 'MISSED'} on wall time, ${cpuRatio <= 1.5 ? 'met' : 'MISSED'} on CPU time`);
}
