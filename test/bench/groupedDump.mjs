// Writes one large TSV dump whose rows are grouped by query, in the demo scenario's shape (query text,
// product id, grade 0–4, score correlated with grade, locale, device), for the streaming benchmark.
// Seeded: the same seed gives a byte-identical file. Item ids are distinct within each query and repeat
// across queries, as in a catalogue. Written in chunks, so the file never sits in memory.
//
//   node test/bench/groupedDump.mjs --rows N --queries Q --out FILE [--seed S]
import { closeSync, openSync, renameSync, writeSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { DEVICES, LOCALES, PRODUCTS } from '../support/demo-vocabulary.mjs';
import { randomTools, seededRandom } from '../support/demo-random.mjs';

const CHUNK_CHARS = 8 << 20;
const GRADE_CDF = [0.55, 0.75, 0.88, 0.96, 1];

export function writeGroupedTsv(file, totalRows, queryCount, seed) {
  const t = randomTools(seededRandom(seed));
  // Written under a temporary name and renamed at the end, so a half-written file is never taken for a whole one.
  const partial = `${file}.partial`;
  const fd = openSync(partial, 'w');
  let bytes = 0;
  let chunk = 'query\tproduct_id\tgrade\tscore\tlocale\tdevice\n';
  const flush = () => {
    bytes += writeSync(fd, chunk);
    chunk = '';
  };
  const mean = totalRows / queryCount;
  let written = 0;
  let q = 0;
  while (written < totalRows) {
    const remainingQueries = Math.max(1, queryCount - q);
    const target = remainingQueries === 1 ? totalRows - written : Math.round(mean * (0.5 + t.rand()));
    const size = Math.max(1, Math.min(target, totalRows - written));
    const product = PRODUCTS[q % PRODUCTS.length];
    const head = `${product.en} ${product.variants[q % product.variants.length]} ${q + 1}\t`;
    const tail = `\t${LOCALES[q % LOCALES.length]}\t${t.rand() < 0.58 ? DEVICES[1] : DEVICES[0]}\n`;
    const shift = t.normal() * 0.4;
    for (let i = 0; i < size; i++) {
      const u = t.rand();
      let grade = 0;
      while (u >= GRADE_CDF[grade]) grade++;
      // i * prime stays distinct modulo 9,000,000 for i < 9,000,000: distinct items within a query.
      const sku = 1000000 + ((q * 7919 + i * 104729) % 9000000);
      const score = 0.7 * grade + t.normal() + shift;
      chunk += `${head}SKU-${sku}\t${grade}\t${score.toFixed(4)}${tail}`;
      if (chunk.length >= CHUNK_CHARS) flush();
    }
    written += size;
    q++;
  }
  flush();
  closeSync(fd);
  renameSync(partial, file);
  return { rows: written, queries: q, bytes };
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const { values } = parseArgs({ options: { rows: { type: 'string' }, queries: { type: 'string' }, out: { type: 'string' }, seed: { type: 'string' } } });
  const rows = Number(values.rows);
  if (!Number.isInteger(rows) || rows < 1 || !values.out) {
    console.error('usage: groupedDump.mjs --rows N --queries Q --out FILE [--seed S]');
    process.exit(2);
  }
  const queries = values.queries ? Number(values.queries) : Math.max(1, Math.round(rows / 100));
  const w = writeGroupedTsv(values.out, rows, queries, values.seed ?? 'kettlewood-grouped-1');
  console.log(`wrote ${w.rows} rows, ${w.queries} queries, ${(w.bytes / 1e9).toFixed(2)} GB → ${values.out}`);
}
