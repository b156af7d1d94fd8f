/**
 * Number formatting for every output: the CLI's table and Markdown reports, the editor's screens,
 * tooltips, exports and status bar. Every figure goes through here so that the same value reads the
 * same everywhere. No Node or DOM dependency. CSV and JSON keep full precision (String(x), the shortest
 * text that reads back as the same double) and do not round.
 *
 * Rounding follows the exact binary value of the double and breaks exact ties to even, which is what
 * Python's `format(x, '.4f')` does; `Number.prototype.toFixed` breaks exact ties away from zero
 * instead, so 0.125 would show as 0.13 here but 0.12 in a notebook. Matching the notebook matters
 * because users paste our numbers next to theirs.
 */

/** Shown for values that do not exist (skipped query, metric undefined). */
export const MISSING = '—';

/**
 * `x` with exactly `decimals` digits after the point, rounded half-to-even on the exact value.
 * NaN gives the missing marker; infinities give "∞"/"-∞". Negative values that round to zero keep
 * their sign ("-0.0000"), as Python does, so a tiny regression is not shown as no change.
 */
export function formatFixed(x: number, decimals = 4): string {
  if (Number.isNaN(x)) return MISSING;
  if (!Number.isFinite(x)) return x > 0 ? '∞' : '-∞';
  if (!Number.isInteger(decimals) || decimals < 0 || decimals > 20) throw new RangeError(`decimals ${decimals}`);
  const negative = x < 0; // -0 (e.g. a zero delta computed as -a + a) shows as plain zero
  const abs = Math.abs(x);
  if (abs >= 1e21) return (negative ? '-' : '') + abs.toString();
  // toFixed(100) yields the exact decimal digits of any double of practical size (see module note).
  const exact = abs.toFixed(100);
  const point = exact.indexOf('.');
  const intPart = exact.slice(0, point);
  const frac = exact.slice(point + 1);
  const kept = intPart + frac.slice(0, decimals);
  const rest = frac.slice(decimals);
  const first = rest.charCodeAt(0) - 48;
  const beyondFirstNonZero = /[1-9]/.test(rest.slice(1));
  let roundUp = first > 5 || (first === 5 && beyondFirstNonZero);
  if (first === 5 && !beyondFirstNonZero) roundUp = (kept.charCodeAt(kept.length - 1) - 48) % 2 === 1;
  const digits = roundUp ? incrementDigits(kept) : kept;
  const cut = digits.length - decimals;
  const whole = digits.slice(0, cut).replace(/^0+(?=\d)/, '');
  const text = decimals > 0 ? `${whole}.${digits.slice(cut)}` : whole;
  return (negative ? '-' : '') + text;
}

function incrementDigits(digits: string): string {
  const out = digits.split('');
  let i = out.length - 1;
  while (i >= 0) {
    if (out[i] === '9') {
      out[i] = '0';
      i--;
    } else {
      out[i] = String.fromCharCode(out[i]!.charCodeAt(0) + 1);
      return out.join('');
    }
  }
  return '1' + out.join('');
}

/**
 * A signed difference: "+0.0123", "-0.0040", "0.0000" for exactly zero. A tiny non-zero difference keeps
 * its sign ("-0.0000", "+0.0000") so a regression too small to show is not read as no change.
 */
export function formatDelta(x: number, decimals = 4): string {
  const text = formatFixed(x, decimals);
  return x > 0 ? `+${text}` : text;
}

/** A 95% interval of a difference: "[-0.0100, +0.0200]". */
export function formatInterval(low: number, high: number): string {
  if (Number.isNaN(low) || Number.isNaN(high)) return MISSING;
  return `[${formatDelta(low)}, ${formatDelta(high)}]`;
}

/** A 95% interval of a mean (not a difference): unsigned bounds, "[0.6100, 0.6400]". */
export function formatMeanInterval(low: number, high: number): string {
  return Number.isNaN(low) || Number.isNaN(high) ? MISSING : `[${formatValue(low)}, ${formatValue(high)}]`;
}

/** A metric value in text reports: 4 decimals, whole numbers for counts, the missing marker when undefined. */
export function formatValue(x: number, whole = false): string {
  if (Number.isNaN(x)) return MISSING;
  return whole ? String(Math.round(x)) : formatFixed(x, 4);
}

/** Integers with thin grouping so 100000 reads as 100 000 (locale-neutral, no comma/point confusion). */
export function formatCount(n: number): string {
  if (!Number.isFinite(n)) return MISSING;
  const sign = n < 0 ? '-' : '';
  const digits = Math.round(Math.abs(n)).toString();
  return sign + digits.replace(/\B(?=(\d{3})+(?!\d))/g, '\u202f');
}

/**
 * A whole count in running text, grouped with commas: "10,000,000 rows", what `toLocaleString('en-US')`
 * writes, without the locale data that call loads on its first use in a process (18 ms, paid by every
 * command line run). A fractional or non-finite value is left to that call.
 */
export function formatCountInText(n: number): string {
  if (!Number.isSafeInteger(n)) return n.toLocaleString('en-US');
  const digits = String(Math.abs(n));
  let out = '';
  for (let end = digits.length; end > 0; end -= 3) out = (end > 3 ? ',' : '') + digits.slice(Math.max(0, end - 3), end) + out;
  return n < 0 || Object.is(n, -0) ? `-${out}` : out;
}

/**
 * p-values: four decimals, and "<0.0001" for any p below 0.0001, so a p of 0.00007 never reads as
 * 0.0001 (or as zero); the missing marker when the test could not be run.
 */
export function formatP(p: number): string {
  if (Number.isNaN(p)) return MISSING;
  if (p < 0.0001) return '<0.0001';
  return formatFixed(p, 4);
}

/** A share in [0, 1] as a percentage with one decimal: 0.1234 → "12.3%". */
export function formatShare(x: number): string {
  if (Number.isNaN(x)) return MISSING;
  // A present but tiny share must not read as none.
  if (x > 0 && x < 0.0005) return '<0.1%';
  return `${formatFixed(x * 100, 1)}%`;
}

/** The full-precision value for tooltips: shortest round-trip form, so nothing is hidden. */
export function exactValue(x: number): string {
  if (Number.isNaN(x)) return 'not defined';
  return String(x);
}
