// What the bench scripts share: their paths, a seeded generator for derived data, and one CLI run timed
// from outside with /usr/bin/time -v. Not named bench-*.mjs, so run-bench.mjs does not run it as a bench.
import { spawn } from 'node:child_process';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

export const benchDir = dirname(fileURLToPath(import.meta.url));
export const root = resolve(benchDir, '../..');
/** Generated dumps: test/bench/data/, or GAINLINE_BENCH_DATA (a folder with room for a few GB, shared by clones). */
export const dataDir = process.env.GAINLINE_BENCH_DATA ? resolve(process.env.GAINLINE_BENCH_DATA) : join(benchDir, 'data');
export const cli = join(root, 'dist/cli.js');
export const TIME = '/usr/bin/time';

/** xorshift32, seeded: generated and derived data are the same every time, without the engine's generator. */
export function rng(seed) {
  let x = seed >>> 0 || 1;
  return () => {
    x ^= x << 13;
    x ^= x >>> 17;
    x ^= x << 5;
    return (x >>> 0) / 4294967296;
  };
}

/** One CLI run timed from outside (wall, CPU = user + system over all threads, peak RSS); stdout kept for checks. */
export function timedCli(argv) {
  return timedNode([cli, ...argv]);
}

/** Node with these arguments, timed from outside like timedCli. */
export function timedNode(nodeArgs) {
  return new Promise((done, fail) => {
    const start = process.hrtime.bigint();
    const child = spawn(TIME, ['-v', process.execPath, ...nodeArgs], { cwd: root, stdio: ['ignore', 'pipe', 'pipe'] });
    const out = [];
    let err = '';
    child.stdout.on('data', (d) => out.push(d));
    child.stderr.on('data', (d) => (err += d));
    child.on('error', fail);
    child.on('close', (code) => {
      const seconds = Number(process.hrtime.bigint() - start) / 1e9;
      if (code !== 0) return fail(new Error(`node ${nodeArgs.join(' ')} exited ${code}:\n${err.slice(-2000)}`));
      const user = /User time \(seconds\): ([\d.]+)/.exec(err);
      const system = /System time \(seconds\): ([\d.]+)/.exec(err);
      const rss = /Maximum resident set size \(kbytes\): (\d+)/.exec(err);
      done({ seconds, cpu: Number(user?.[1]) + Number(system?.[1]), peakMB: Number(rss?.[1]) / 1024, stdout: Buffer.concat(out).toString('utf8') });
    });
  });
}
