// Builds the demo scenario in memory: the store's catalogue, ~300 product-search queries, the
// candidate items each query returned, graded judgments (0–4) and two model versions' scores.
// Model B is better on average but worse on a minority of queries, so comparing runs has
// something to find. A few queries have nothing relevant, some have tied scores, and a few rows
// are duplicated, because real dumps have all three.
import { BRANDS, DEVICES, LOCALES, PRODUCTS } from './demo-vocabulary.mjs';
import { randomTools, seededRandom } from './demo-random.mjs';

const SKUS_PER_FAMILY = 48;

function buildCatalogue(t) {
  const catalogue = [];
  let sku = 104000;
  PRODUCTS.forEach((product, family) => {
    for (let i = 0; i < SKUS_PER_FAMILY; i++) {
      sku += t.int(1, 37);
      const variant = t.int(0, product.variants.length - 1);
      catalogue.push({
        id: `SKU-${sku}`,
        family,
        variant,
        title: `${t.pick(BRANDS)} ${product.en} ${product.variants[variant]}`,
        popularity: t.rand(),
      });
    }
  });
  return catalogue;
}

function buildQueries(t) {
  const all = [];
  PRODUCTS.forEach((product, family) => {
    product.variants.forEach((variant, v) => {
      for (const locale of LOCALES) {
        const head = locale === 'de-DE' ? product.de : locale === 'fr-FR' ? product.fr : product.en;
        all.push({ text: `${head} ${variant}`, family, variant: v, locale });
      }
    });
  });
  const chosen = t.shuffle(all).slice(0, 300);
  return chosen.map((q, i) => ({ ...q, id: `q${String(i + 1).padStart(3, '0')}`, device: t.rand() < 0.58 ? DEVICES[1] : DEVICES[0] }));
}

/** How relevant a catalogue item is to a query, 0–4, with some judge noise. */
function gradeOf(t, query, item) {
  if (item.family !== query.family) return t.rand() < 0.04 ? 1 : 0;
  if (item.variant === query.variant) return t.rand() < 0.6 ? 4 : 3;
  const u = t.rand();
  return u < 0.2 ? 2 : u < 0.45 ? 1 : 0;
}

/**
 * @returns {{ queries, catalogue, rows }} where each row is
 *   { query, item, grade, scoreA, scoreB, duplicate } and rows of one query are contiguous.
 */
export function buildScenario(seed = 'kettlewood-demo-1') {
  const t = randomTools(seededRandom(seed));
  const catalogue = buildCatalogue(t);
  const byFamily = PRODUCTS.map((_, f) => catalogue.filter((item) => item.family === f));
  const queries = buildQueries(t);
  const rows = [];

  queries.forEach((query, qi) => {
    // Every 50th query stands for a search the catalogue cannot answer: only unrelated items came back.
    const unanswerable = qi % 50 === 17;
    const tied = qi % 20 === 3; // scores rounded coarsely, so equal scores occur
    const regressed = t.rand() < 0.14; // model B does worse here than model A
    const size = t.int(8, 36);
    // About 60% of the candidates come from the right product family, the rest are near misses
    // from other families (the retrieval stage is not perfect either).
    const others = catalogue.filter((item) => item.family !== query.family);
    const fromFamily = unanswerable ? 0 : Math.round(size * (0.45 + 0.3 * t.rand()));
    const candidates = t.shuffle([...byFamily[query.family]]).slice(0, fromFamily);
    while (candidates.length < size) candidates.push(t.pick(others));
    const seen = new Set();
    const queryShiftA = t.normal() * 0.4;
    const queryShiftB = t.normal() * 0.4;
    for (const item of t.shuffle(candidates)) {
      if (seen.has(item.id)) continue;
      seen.add(item.id);
      const grade = unanswerable ? 0 : gradeOf(t, query, item);
      const signal = grade + 0.6 * item.popularity;
      let scoreA = 0.55 * signal + 1.1 * t.normal() + queryShiftA;
      let scoreB = (regressed ? -0.25 : 0.85) * signal + 0.75 * t.normal() + queryShiftB + (regressed ? 1.2 * item.popularity : 0);
      scoreA = roundTo(scoreA, tied ? 0 : 4);
      scoreB = roundTo(scoreB, tied ? 0 : 4);
      rows.push({ query, item, grade, scoreA, scoreB, duplicate: false });
    }
  });

  // A handful of exact duplicate rows, as a logging pipeline that retries would leave behind.
  for (let i = 0; i < 9; i++) {
    const at = t.int(0, rows.length - 1);
    rows.splice(at + 1, 0, { ...rows[at], duplicate: true });
  }
  return { queries, catalogue, rows };
}

function roundTo(x, digits) {
  const f = 10 ** digits;
  return Math.round(x * f) / f;
}
