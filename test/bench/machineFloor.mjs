// Floors of this machine that bound the 10M-row targets, measured in the bench's own run (run-bench.mjs
// prints them under the 10m-distinct targets): how long Node takes to start, how long a bare two-thread
// scan of the file takes (floorScan.mjs), and what writing fresh memory costs per MB (the first write to
// each page faults; on this virtual machine that costs far more than copying the page).
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { benchDir } from './benchTools.mjs';

/** Node running `args` with `env`, best wall time of `runs` (seconds, from outside). */
function bestNode(args, runs, env = process.env) {
  let best = Infinity;
  let output = '';
  for (let i = 0; i < runs; i++) {
    const started = process.hrtime.bigint();
    const r = spawnSync(process.execPath, args, { env, encoding: 'utf8' });
    const seconds = Number(process.hrtime.bigint() - started) / 1e9;
    if (r.status !== 0) throw new Error(`node ${args.join(' ')} exited ${r.status}: ${r.stderr}`);
    if (seconds < best) {
      best = seconds;
      output = r.stdout;
    }
  }
  return { seconds: best, output };
}

// Allocates 256 MB, writes one byte per 4 KB page, and prints the milliseconds per MB of that first write.
const TOUCH = `const mb = 256; const t = performance.now(); const a = new Uint8Array(new ArrayBuffer(mb << 20));
for (let i = 0; i < a.length; i += 4096) a[i] = 1; console.log((performance.now() - t) / mb);`;

/**
 * Milliseconds per MB to write fresh memory over `runs` processes, with 4 KB pages and with the large-pages
 * tunable the CLI sets. With large pages it swings from run to run (whether the machine still holds freed
 * huge pages), so both ends are kept.
 */
export function firstTouchCost(runs = 3) {
  const of = (env) => Array.from({ length: runs }, () => Number(bestNode(['-e', TOUCH], 1, env).output));
  const plain = { ...process.env };
  delete plain.GLIBC_TUNABLES;
  const small = of(plain);
  const large = of({ ...plain, GLIBC_TUNABLES: 'glibc.malloc.hugetlb=1' });
  return { small: { min: Math.min(...small), max: Math.max(...small) }, large: { min: Math.min(...large), max: Math.max(...large) } };
}

/** Node's start (`node -e 0`) and the bare scan of `file` on two threads, best of `runs`, seconds of wall time. */
export function scanFloor(file, runs = 3) {
  const start = bestNode(['-e', '0'], runs).seconds;
  const scan = bestNode([join(benchDir, 'floorScan.mjs'), file, '2'], runs);
  return { nodeStart: start, scan: scan.seconds, rows: JSON.parse(scan.output).rows };
}
