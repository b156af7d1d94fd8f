// The score-only form of a grouped benchmark dump, with its labels moved to a judgments file, as ranking
// teams often keep them: `<base>-scores.tsv` is the dump without its grade column, `<base>-judgments.tsv`
// (query, product_id, grade) judges every JUDGE_EVERY-th row with the row's own grade and, per query, a few
// items the run never retrieved. Written in chunks from the dump, so neither file sits in memory.
import { closeSync, openSync, readSync, renameSync, writeSync } from 'node:fs';

const JUDGE_EVERY = 8;
const UNRETRIEVED_PER_QUERY = 2;
const CHUNK = 8 << 20;

export function writeJudgedVariant(dumpFile, scoresFile, judgmentsFile) {
  const input = openSync(dumpFile, 'r');
  const scores = openSync(`${scoresFile}.partial`, 'w');
  const judgments = openSync(`${judgmentsFile}.partial`, 'w');
  const buffer = Buffer.alloc(CHUNK);
  let carry = '';
  let row = -1;
  let lastQuery = '';
  let queries = 0;
  let judged = 0;
  writeSync(judgments, 'query\tproduct_id\tgrade\n');
  for (;;) {
    const n = readSync(input, buffer, 0, CHUNK, null);
    const text = carry + buffer.toString('utf8', 0, n);
    const end = n === 0 ? text.length : text.lastIndexOf('\n') + 1;
    carry = text.slice(end);
    let out = '';
    let judgedOut = '';
    for (const line of text.slice(0, end).split('\n')) {
      if (line.length === 0) continue;
      const [query, item, grade, ...rest] = line.split('\t');
      out += `${query}\t${item}\t${rest.join('\t')}\n`;
      if (++row === 0) continue; // the header
      if (row % JUDGE_EVERY === 0) {
        judgedOut += `${query}\t${item}\t${grade}\n`;
        judged++;
      }
      if (query !== lastQuery) {
        lastQuery = query;
        queries++;
        for (let u = 0; u < UNRETRIEVED_PER_QUERY; u++) judgedOut += `${query}\tSKU-UNSEEN-${queries}-${u}\t${(queries + u) % 4}\n`;
        judged += UNRETRIEVED_PER_QUERY;
      }
    }
    writeSync(scores, out);
    writeSync(judgments, judgedOut);
    if (n === 0) break;
  }
  for (const fd of [input, scores, judgments]) closeSync(fd);
  renameSync(`${scoresFile}.partial`, scoresFile);
  renameSync(`${judgmentsFile}.partial`, judgmentsFile);
  return { rows: row, queries, judged };
}
