// A small seeded pseudo-random generator (sfc32 state update, seeded by hashing a string) so the
// demo files come out byte-identical on every machine and every run.

/** Returns a function giving floats in [0, 1), fully determined by `seed`. */
export function seededRandom(seed) {
  // FNV-1a over the seed text spreads similar seeds apart.
  let h = 0x811c9dc5;
  for (const ch of String(seed)) {
    h ^= ch.codePointAt(0);
    h = Math.imul(h, 0x01000193) >>> 0;
  }
  let a = h ^ 0x9e3779b9, b = h ^ 0x243f6a88, c = h ^ 0xb7e15162, d = 1;
  const next = () => {
    a >>>= 0; b >>>= 0; c >>>= 0; d >>>= 0;
    const t = (((a + b) | 0) + d) | 0;
    d = (d + 1) | 0;
    a = b ^ (b >>> 9);
    b = (c + (c << 3)) | 0;
    c = (c << 21) | (c >>> 11);
    c = (c + t) | 0;
    return (t >>> 0) / 4294967296;
  };
  for (let i = 0; i < 16; i++) next(); // warm up: early outputs of a fresh state are correlated
  return next;
}

/** Helpers bound to one generator. */
export function randomTools(rand) {
  const int = (lo, hi) => lo + Math.floor(rand() * (hi - lo + 1)); // inclusive bounds
  const pick = (list) => list[Math.floor(rand() * list.length)];
  let spare = NaN;
  const normal = () => {
    // Box–Muller; keeps the second value for the next call.
    if (!Number.isNaN(spare)) {
      const s = spare;
      spare = NaN;
      return s;
    }
    const u = 1 - rand();
    const v = rand();
    const r = Math.sqrt(-2 * Math.log(u));
    spare = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  };
  const shuffle = (list) => {
    for (let i = list.length - 1; i > 0; i--) {
      const j = Math.floor(rand() * (i + 1));
      [list[i], list[j]] = [list[j], list[i]];
    }
    return list;
  };
  return { rand, int, pick, normal, shuffle };
}
