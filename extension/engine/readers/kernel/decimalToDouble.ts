// AssemblyScript, compiled into the record kernel (simpleRecords.ts); not part of the TypeScript program.
//
// A decimal w × 10^q (w below 2^64, so at most 19 significant digits) to the nearest double, ties to even:
// the Eisel–Lemire algorithm (D. Lemire, "Number parsing at a gigabyte per second", Software: Practice and
// Experience 51(8), 2021; the rounding step as the paper gives it, recalled from memory and checked here
// against Number() on millions of decimals, see test/engine/readers-kernel-decimals.test.ts). w is scaled by
// a 128-bit truncation of 5^q; when the product's bits cannot settle the rounding, or the result would be
// subnormal or infinite, it answers NaN and the JavaScript parsers take the field (Number() of its text), so
// every answer it gives equals Number(text) bit for bit.

import { POWERS_OF_FIVE_128, SMALLEST_POWER_OF_TEN, LARGEST_POWER_OF_TEN } from './powersOfFive128';
import { multiplyHigh } from './wideMultiply';

/**
 * The double nearest w × 10^q (negated when `negative`), or NaN when this path cannot be sure of it.
 * w = 0 gives a zero of the sign asked for, as Number("-0e5") does.
 */
export function decimalToDouble(w: u64, q: i32, negative: bool): f64 {
  if (w == 0) return negative ? -0.0 : 0.0;
  if (q < SMALLEST_POWER_OF_TEN || q > LARGEST_POWER_OF_TEN) return NaN;
  const lz = <i32>clz(w);
  w <<= <u64>lz;
  const index = (q - SMALLEST_POWER_OF_TEN) << 1;
  const powerHigh = unchecked(POWERS_OF_FIVE_128[index]);
  // The top 64 bits of w × 5^q's 128-bit truncation: the low product only matters when the bits below the
  // 55 kept ones (52 + hidden + round + one spare) are all ones, where its carry could reach them.
  let high = multiplyHigh(w, powerHigh);
  let low = w * powerHigh;
  if ((high & 0x1ff) == 0x1ff) {
    const secondHigh = multiplyHigh(w, unchecked(POWERS_OF_FIVE_128[index + 1]));
    low += secondHigh;
    if (secondHigh > low) high++;
  }
  // A truncated product whose low word is all ones may be one short of a carry: left to Number().
  if (low == 0xffffffffffffffff) return NaN;
  const upperBit = <i32>(high >> 63);
  const shift = <u64>(upperBit + 9);
  let mantissa = high >> shift;
  // power(q) = floor(q × log2(10)) + 63, by the paper's fixed-point product; -1023 is the exponent bias less one.
  let power2 = (((152170 + 65536) * q) >> 16) + 63 + upperBit - lz + 1023;
  if (power2 <= 0) return NaN; // subnormal
  // Exactly halfway between two doubles can only happen for 10^q in [10^-4, 10^23]; round to even there.
  if (low <= 1 && q >= -4 && q <= 23 && (mantissa & 3) == 1 && (mantissa << shift) == high) mantissa &= ~(<u64>1);
  mantissa += mantissa & 1;
  mantissa >>= 1;
  if (mantissa >= (<u64>2 << 52)) {
    mantissa = <u64>1 << 52;
    power2++;
  }
  mantissa &= ~(<u64>1 << 52);
  if (power2 >= 0x7ff) return NaN; // infinite: the JavaScript parsers say what that means
  const bits = mantissa | (<u64>power2 << 52) | (negative ? <u64>1 << 63 : 0);
  return reinterpret<f64>(bits);
}
