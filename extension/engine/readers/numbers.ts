/**
 * Numbers parsed straight from bytes, without making a string per field.
 *
 * Fast path (Clinger 1990, "How to read floating point numbers accurately"): when the decimal
 * digits form an integer m <= 2^53 and there are at most 22 fraction digits, m and 10^k are both
 * exact doubles and one IEEE division m / 10^k is correctly rounded, so the result equals
 * Number(text) bit for bit. The digits are summed in a double, exact only below 2^53: a sum that
 * reached 2^53 may have rounded there from above (9007199254740993 does), so it takes the slow path. Anything else (exponents, long mantissas, padding) goes through Number()
 * on the decoded text after a strict syntax check, so hex, "1_0" and other JS-only forms are refused.
 */

const POW10 = Array.from({ length: 23 }, (_, k) => Number(`1e${k}`));
const TWO_53 = 2 ** 53;
const DECIMAL = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
const MISSING = new Set(['', 'nan', 'na', 'n/a', 'null', 'none', '?']);
const INFINITE = new Set(['inf', '+inf', '-inf', 'infinity', '+infinity', '-infinity']);

/** Value of bytes[start, end); NaN when the text is not a plain decimal number (see `describeNonNumber`). */
export function parseNumber(bytes: Uint8Array, start: number, end: number): number {
  let i = start;
  let negative = false;
  let c = i < end ? bytes[i]! : 0;
  if (c === 45 || c === 43) {
    negative = c === 45;
    i++;
  }
  let mantissa = 0;
  let sawDigit = false;
  let fractionDigits = 0;
  while (i < end) {
    c = bytes[i]! - 48;
    if (c < 0 || c > 9) break;
    mantissa = mantissa * 10 + c;
    sawDigit = true;
    i++;
  }
  if (i < end && bytes[i] === 46) {
    i++;
    while (i < end) {
      c = bytes[i]! - 48;
      if (c < 0 || c > 9) break;
      mantissa = mantissa * 10 + c;
      fractionDigits++;
      sawDigit = true;
      i++;
    }
  }
  if (i === end && sawDigit && mantissa < TWO_53 && fractionDigits <= 22) {
    const value = fractionDigits === 0 ? mantissa : mantissa / POW10[fractionDigits]!;
    return negative ? -value : value;
  }
  return parseNumberSlow(bytes, start, end);
}

function parseNumberSlow(bytes: Uint8Array, start: number, end: number): number {
  const text = latin1(bytes, start, end).trim();
  return DECIMAL.test(text) ? Number(text) : NaN;
}

/** Why a field did not parse: 'missing' (empty, NaN, NA, null), 'infinite', or 'invalid'. */
export function describeNonNumber(bytes: Uint8Array, start: number, end: number): 'missing' | 'infinite' | 'invalid' {
  return describeNonNumberText(latin1(bytes, start, end));
}

export function describeNonNumberText(raw: string): 'missing' | 'infinite' | 'invalid' {
  const text = raw.trim().toLowerCase();
  if (MISSING.has(text)) return 'missing';
  if (INFINITE.has(text)) return 'infinite';
  return 'invalid';
}

/** Parses a JS string with the same rules as `parseNumber` (used by JSON and side files). */
export function parseNumberText(raw: string): number {
  const text = raw.trim();
  return DECIMAL.test(text) ? Number(text) : NaN;
}

function latin1(bytes: Uint8Array, start: number, end: number): string {
  return Buffer.from(bytes.buffer, bytes.byteOffset + start, end - start).toString('latin1');
}
