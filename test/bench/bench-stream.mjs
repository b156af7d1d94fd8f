#!/usr/bin/env node
// Streamed scoring of dumps grouped by query: `gainline eval` on a 100M-row TSV (about 6 GB; auto picks
// the stream from 1 GiB), timed end to end with its peak memory, against the targets of at most 40 s wall
// and 2 GB peak; and on a 10M-row TSV the stream against reading in memory, in the same run, with the two
// reports checked equal byte for byte. Then the same two files with their labels in a judgments file
// (the dump without its grade column, test/bench/judgedVariant.mjs): the stream joins each block to the
// judgments; on 10M rows against the in-memory join, reports checked equal; on 100M rows its time and peak
// beside the inline-label run (no target: the judgments' own size adds to the peak). The load average is
// printed beside every figure: on a shared machine it says how much the seconds mean.
//
//   node test/bench/bench-stream.mjs [--data-dir DIR] [--only 10m|100m] [--runs N]
// The files are generated once (seeded, test/bench/groupedDump.mjs) into DIR (default $GAINLINE_BENCH_DATA,
// else test/bench/data).
import { existsSync, mkdirSync, statSync } from 'node:fs';
import { loadavg } from 'node:os';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { dataDir, timedCli } from './benchTools.mjs';
import { writeGroupedTsv } from './groupedDump.mjs';
import { writeJudgedVariant } from './judgedVariant.mjs';

const { values: args } = parseArgs({ options: { 'data-dir': { type: 'string' }, only: { type: 'string' }, runs: { type: 'string' } } });
const dir = args['data-dir'] ?? process.env.GAINLINE_BENCH_DATA ?? dataDir;
const runs = Math.max(1, Number(args.runs ?? 1));
const SIZES = [
  { name: '10m', rows: 10_000_000, queries: 100_000 },
  { name: '100m', rows: 100_000_000, queries: 1_000_000 },
].filter((s) => !args.only || s.name === args.only);

function ensureFile(size) {
  mkdirSync(dir, { recursive: true });
  const file = join(dir, `grouped-${size.name}.tsv`);
  if (!existsSync(file)) {
    console.log(`generating ${file} (${size.rows.toLocaleString('en-US')} rows, ${size.queries.toLocaleString('en-US')} queries)…`);
    writeGroupedTsv(file, size.rows, size.queries, 'kettlewood-grouped-1');
  }
  return file;
}

/** The score-only dump and its judgments file, made once from the grouped dump. */
function ensureJudged(file) {
  const base = file.replace(/\.tsv$/, '');
  const scores = `${base}-scores.tsv`;
  const judgments = `${base}-judgments.tsv`;
  if (!existsSync(scores) || !existsSync(judgments)) {
    console.log(`writing ${scores} and ${judgments}…`);
    const w = writeJudgedVariant(file, scores, judgments);
    console.log(`  ${w.judged.toLocaleString('en-US')} judgments for ${w.queries.toLocaleString('en-US')} queries`);
  }
  return { scores, judgments };
}

const load = () => loadavg().map((x) => x.toFixed(1)).join(' ');
const gb = (mb) => (mb / 1024).toFixed(2);

async function measure(label, argv) {
  let best;
  for (let i = 0; i < runs; i++) {
    const before = load();
    const r = await timedCli(argv);
    console.log(`  ${label}: ${r.seconds.toFixed(1)} s wall, ${r.cpu.toFixed(1)} s CPU, peak ${gb(r.peakMB)} GB (load average ${before} → ${load()})`);
    if (!best || r.seconds < best.seconds) best = r;
  }
  return best;
}

for (const size of SIZES) {
  const file = ensureFile(size);
  console.log(`\n${size.name}: ${file}, ${(statSync(file).size / 1e9).toFixed(2)} GB`);
  if (size.name === '100m') {
    const r = await measure('eval (auto: streamed from 1 GiB)', ['eval', file]);
    console.log(`  targets: ≤ 40 s wall ${r.seconds <= 40 ? 'met' : 'missed'}, ≤ 2 GB peak ${r.peakMB <= 2048 ? 'met' : 'missed'}`);
  } else {
    const s = await measure('eval --reading stream', ['eval', file, '--format', 'json', '--reading', 'stream']);
    const m = await measure('eval --reading memory', ['eval', file, '--format', 'json', '--reading', 'memory']);
    const same = s.stdout === m.stdout;
    console.log(`  stream / memory: ${(s.seconds / m.seconds).toFixed(2)}× wall, ${(s.cpu / m.cpu).toFixed(2)}× CPU, ${(s.peakMB / m.peakMB).toFixed(2)}× peak; ` +
      `reports ${same ? 'identical' : 'DIFFER'}`);
    if (!same) process.exitCode = 1;
  }
  const { scores, judgments } = ensureJudged(file);
  console.log(`  labels from ${judgments} (${(statSync(judgments).size / 1e6).toFixed(0)} MB):`);
  const js = await measure('eval --judgments, streamed', ['eval', scores, '--judgments', judgments, '--format', 'json', '--reading', 'stream']);
  if (size.name === '10m') {
    const jm = await measure('eval --judgments, in memory', ['eval', scores, '--judgments', judgments, '--format', 'json', '--reading', 'memory']);
    const same = js.stdout === jm.stdout;
    console.log(`  stream / memory: ${(js.seconds / jm.seconds).toFixed(2)}× wall, ${(js.peakMB / jm.peakMB).toFixed(2)}× peak; reports ${same ? 'identical' : 'DIFFER'}`);
    if (!same) process.exitCode = 1;
  }
}
