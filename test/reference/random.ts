/**
 * Seeded pseudo-random numbers for reproducible test cases (mulberry32, common practice). Every
 * TypeScript test and the webview harness share this one generator, so seeded expectations stay tied
 * to one sequence.
 */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Product-search style query names for generated cases (invented hardware store). */
export const QUERY_NAMES = ['cordless drill 18v', 'wood screws 4x40', 'masonry bit 8mm', 'garden hose 25m', 'led bulb e27', 'paint roller'];
