// Writes one large CSV dump in the demo scenario's shape, for benchmarks: the same columns as
// demo/runs/model-a.csv, query sizes varying around rows/queries, graded 0–4, scores correlated
// with grades. Streams in chunks so 10M rows never sit in memory. With `distinctItems`, every row names
// an item no other row names (as in web search or a catalogue-scale recommender) instead of items that
// recur across queries; a file named *.tsv is written tab-separated.
import { closeSync, openSync, readFileSync, writeSync } from 'node:fs';
import { DEVICES, LOCALES, PRODUCTS } from './demo-vocabulary.mjs';
import { randomTools, seededRandom } from './demo-random.mjs';

const CHUNK_CHARS = 4 << 20;
// Cumulative grade probabilities for grades 0..4: most items in a candidate list are not relevant.
const GRADE_CDF = [0.55, 0.75, 0.88, 0.96, 1];

// Distinct ids: the row number times a prime coprime to the modulus is a bijection modulo it, so ids
// never repeat below DISTINCT_SPAN rows while consecutive rows get scattered, catalogue-like numbers.
const DISTINCT_SPAN = 900_000_000;
const DISTINCT_STEP = 104729;

export function writeLargeDump(file, totalRows, queryCount, seed, { distinctItems = false } = {}) {
  if (distinctItems && totalRows > DISTINCT_SPAN) throw new Error(`distinct item ids go up to ${DISTINCT_SPAN} rows`);
  const sep = file.endsWith('.tsv') ? '\t' : ',';
  const t = randomTools(seededRandom(seed));
  const fd = openSync(file, 'w');
  let bytes = 0;
  let chunk = ['query', 'product_id', 'grade', 'score', 'locale', 'device'].join(sep) + '\n';
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
    const text = `${product.en} ${product.variants[q % product.variants.length]} ${q + 1}`;
    const tail = `${sep}${LOCALES[q % LOCALES.length]}${sep}${t.rand() < 0.58 ? DEVICES[1] : DEVICES[0]}\n`;
    const shift = t.normal() * 0.4;
    for (let i = 0; i < size; i++) {
      const u = t.rand();
      let grade = 0;
      while (u >= GRADE_CDF[grade]) grade++;
      // Distinct items within a query: i * prime stays distinct modulo 900000 for i < 900000.
      const sku = distinctItems
        ? 100_000_000 + (((written + i) * DISTINCT_STEP) % DISTINCT_SPAN)
        : 100000 + ((q * 7919 + i * 104729) % 900000);
      const score = 0.7 * grade + t.normal() + shift;
      chunk += `${text}${sep}SKU-${sku}${sep}${grade}${sep}${score.toFixed(4)}${tail}`;
      if (chunk.length >= CHUNK_CHARS) flush();
    }
    written += size;
    q++;
  }
  flush();
  closeSync(fd);
  return { rows: written, queries: q, bytes };
}

/**
 * Rewrites a dump with its data rows in a seeded random order (the header stays first): the rows of a
 * query end up spread over the whole file, as when many inference jobs append to one dump at once. The
 * file is held in memory as bytes with an offset per line (about 0.7 GB for 10M rows), never as strings.
 */
export function scatterRows(from, to, seed) {
  const text = readFileSync(from);
  const headerEnd = text.indexOf(10) + 1;
  const starts = [];
  for (let at = headerEnd; at < text.length; at = text.indexOf(10, at) + 1 || text.length) starts.push(at);
  const lineStart = Float64Array.from(starts);
  const order = new Uint32Array(lineStart.length);
  for (let i = 0; i < order.length; i++) order[i] = i;
  const rand = seededRandom(seed);
  for (let i = order.length - 1; i > 0; i--) {
    const j = Math.floor(rand() * (i + 1));
    const swap = order[i];
    order[i] = order[j];
    order[j] = swap;
  }
  const fd = openSync(to, 'w');
  const out = Buffer.alloc(CHUNK_CHARS + 65536);
  let used = text.copy(out, 0, 0, headerEnd);
  for (const line of order) {
    const end = line + 1 < lineStart.length ? lineStart[line + 1] : text.length;
    if (used + (end - lineStart[line]) > out.length) {
      writeSync(fd, out, 0, used);
      used = 0;
    }
    used += text.copy(out, used, lineStart[line], end);
  }
  writeSync(fd, out, 0, used);
  closeSync(fd);
}
