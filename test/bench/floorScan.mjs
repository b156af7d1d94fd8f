// The floor of reading a dump on this machine, for the bench's 5×-numpy line (machineFloor.mjs runs it):
// each thread reads its share of the file in 4 MB chunks and touches every byte once, cutting fields at
// the delimiter and newlines, parses the grade and score fields to doubles and counts query changes by
// comparing each row's query bytes with the previous row's. Nothing is kept, nothing is scored: any
// reader that gives these numbers does at least this. Quote-free files only (the bench's dumps).
// Usage: node floorScan.mjs FILE THREADS  → one JSON line { rows, queries, seconds }
import { closeSync, fstatSync, openSync, readSync } from 'node:fs';
import { isMainThread, parentPort, Worker, workerData } from 'node:worker_threads';

function scan({ path, start, end, delimiter, queryField, gradeField, scoreField }) {
  const fd = openSync(path, 'r');
  const buf = Buffer.alloc(4 << 20);
  const previous = Buffer.alloc(4096);
  let previousLength = -1;
  let pos = start;
  let carry = 0;
  let rows = 0;
  let queries = 0;
  let checksum = 0;
  while (pos < end) {
    const n = readSync(fd, buf, carry, Math.min(buf.length - carry, end - pos), pos);
    if (n <= 0) break;
    pos += n;
    const limit = carry + n;
    let i = 0;
    let lineStart = 0;
    for (;;) {
      let field = 0;
      let fieldStart = i;
      let queryStart = i;
      let queryEnd = i;
      let j = i;
      let complete = false;
      while (j < limit) {
        const c = buf[j];
        if (c === delimiter || c === 10) {
          if (field === queryField) {
            queryStart = fieldStart;
            queryEnd = j;
          } else if (field === gradeField || field === scoreField) {
            // A plain decimal: sign, digits, point, digits (the bench's dumps hold nothing else).
            let k = fieldStart;
            let negative = false;
            let whole = 0;
            let fraction = 0;
            let scale = 1;
            if (buf[k] === 45) {
              negative = true;
              k++;
            }
            while (k < j && buf[k] !== 46) whole = whole * 10 + (buf[k++] - 48);
            if (k < j) for (k++; k < j; k++) {
              fraction = fraction * 10 + (buf[k] - 48);
              scale *= 10;
            }
            const value = whole + fraction / scale;
            checksum += negative ? -value : value;
          }
          field++;
          fieldStart = j + 1;
          if (c === 10) {
            complete = true;
            break;
          }
        }
        j++;
      }
      if (!complete) break;
      const length = queryEnd - queryStart;
      let same = length === previousLength;
      for (let k = 0; same && k < length; k++) if (buf[queryStart + k] !== previous[k]) same = false;
      if (!same) {
        queries++;
        buf.copy(previous, 0, queryStart, queryEnd);
        previousLength = length;
      }
      rows++;
      i = j + 1;
      lineStart = i;
    }
    carry = limit - lineStart;
    buf.copy(buf, 0, lineStart, limit);
  }
  closeSync(fd);
  return { rows, queries, checksum };
}

if (isMainThread) {
  const [path, threadText] = process.argv.slice(2);
  const threads = Math.max(1, Number(threadText ?? 2));
  const started = performance.now();
  const fd = openSync(path, 'r');
  const size = fstatSync(fd).size;
  const head = Buffer.alloc(64 * 1024);
  readSync(fd, head, 0, head.length, 0);
  const headerEnd = head.indexOf(10);
  const delimiter = path.endsWith('.tsv') ? 9 : 44;
  const names = head.subarray(0, headerEnd).toString('utf8').replace(/\r$/, '').split(String.fromCharCode(delimiter));
  const field = (name) => {
    const k = names.indexOf(name);
    if (k < 0) throw new Error(`${path}: no column named ${name}`);
    return k;
  };
  const roles = { delimiter, queryField: field('query'), gradeField: field('grade'), scoreField: field('score') };
  const cuts = [headerEnd + 1];
  for (let k = 1; k < threads; k++) {
    const at = Math.floor((size * k) / threads);
    readSync(fd, head, 0, head.length, at);
    cuts.push(at + head.indexOf(10) + 1);
  }
  cuts.push(size);
  closeSync(fd);
  const parts = cuts.slice(0, -1).map((start, k) => ({ path, start, end: cuts[k + 1], ...roles }));
  // Every share on a worker, the main thread waiting: each thread starts the same way.
  const results = await Promise.all(parts.map((part) => new Promise((resolve, reject) => {
    const worker = new Worker(new URL(import.meta.url), { workerData: part });
    worker.once('message', resolve);
    worker.once('error', reject);
  })));
  // A query cut by a share's end is counted in both shares: the count is exact up to threads - 1.
  const sum = (key) => results.reduce((a, r) => a + r[key], 0);
  console.log(JSON.stringify({ rows: sum('rows'), queries: sum('queries'), seconds: (performance.now() - started) / 1000 }));
} else {
  parentPort.postMessage(scan(workerData));
}
