// AssemblyScript, part of the record writer (recordText.ts), compiled to WebAssembly by build.mjs.
//
// Numbers printed as JavaScript's Number::toString prints them (ECMA-262, Number::toString): the
// shortest digit string that reads back as the same double, the one nearest the exact value when
// several are that short, and an exactly halfway tie to the even digit. The digits come from the
// Ryū algorithm (Adams, "Ryū: fast float-to-string conversion", PLDI 2018), whose output has those
// three properties; the tests compare this printer with String(x) on millions of doubles.

import { POW5_INV_SPLIT, POW5_SPLIT } from './powersOfFive';
import { multiplyHigh } from '../../readers/kernel/wideMultiply';

const MANTISSA_BITS: i32 = 52;
const EXPONENT_BIAS: i32 = 1023;
// Bit widths of the table entries (the tables are made with the same numbers: compile.mjs).
const POW5_INV_BITCOUNT: i32 = 125;
const POW5_BITCOUNT: i32 = 125;

const ZERO: u32 = 48;
const DOT: u32 = 46;
const MINUS: u32 = 45;
const PLUS: u32 = 43;
const LETTER_E: u32 = 101;

/** "00" to "99": two digits per store. */
const DIGIT_PAIRS = memory.data<u8>([
  48, 48, 48, 49, 48, 50, 48, 51, 48, 52, 48, 53, 48, 54, 48, 55, 48, 56, 48, 57, 49, 48, 49, 49, 49, 50, 49, 51, 49, 52, 49, 53, 49, 54,
  49, 55, 49, 56, 49, 57, 50, 48, 50, 49, 50, 50, 50, 51, 50, 52, 50, 53, 50, 54, 50, 55, 50, 56, 50, 57, 51, 48, 51, 49, 51, 50, 51, 51,
  51, 52, 51, 53, 51, 54, 51, 55, 51, 56, 51, 57, 52, 48, 52, 49, 52, 50, 52, 51, 52, 52, 52, 53, 52, 54, 52, 55, 52, 56, 52, 57, 53, 48,
  53, 49, 53, 50, 53, 51, 53, 52, 53, 53, 53, 54, 53, 55, 53, 56, 53, 57, 54, 48, 54, 49, 54, 50, 54, 51, 54, 52, 54, 53, 54, 54, 54, 55,
  54, 56, 54, 57, 55, 48, 55, 49, 55, 50, 55, 51, 55, 52, 55, 53, 55, 54, 55, 55, 55, 56, 55, 57, 56, 48, 56, 49, 56, 50, 56, 51, 56, 52,
  56, 53, 56, 54, 56, 55, 56, 56, 56, 57, 57, 48, 57, 49, 57, 50, 57, 51, 57, 52, 57, 53, 57, 54, 57, 55, 57, 56, 57, 57,
]);

/** Digits of the number being printed, written right to left ending at DIGITS + 32. */
export const DIGITS = memory.data(48);

// ---- Shortest digits (Ryū) ----

// Results of `shortest`: the value is decimalDigits × 10^decimalExponent.
let decimalDigits: u64 = 0;
let decimalExponent: i32 = 0;

/** ceil(log2(5^e)) for 0 < e ≤ 3528; 1 for e = 0. */
@inline function pow5bits(e: i32): i32 {
  return <i32>((<u32>e * 1217359) >> 19) + 1;
}

/** floor(log10(2^e)) for 0 ≤ e ≤ 1650. */
@inline function log10Pow2(e: i32): i32 {
  return <i32>((<u32>e * 78913) >> 18);
}

/** floor(log10(5^e)) for 0 ≤ e ≤ 2620. */
@inline function log10Pow5(e: i32): i32 {
  return <i32>((<u32>e * 732923) >> 20);
}

function pow5Factor(v: u64): i32 {
  let count = 0;
  while (true) {
    const q = v / 5;
    if (v - q * 5 != 0) return count;
    v = q;
    count++;
  }
  return count;
}

@inline function multipleOfPowerOf5(v: u64, p: i32): bool {
  return pow5Factor(v) >= p;
}

@inline function multipleOfPowerOf2(v: u64, p: i32): bool {
  return (v & ((<u64>1 << <u64>p) - 1)) == 0;
}

/** (m × (hi·2^64 + lo)) >> j, for m < 2^55 and 64 < j < 128 (the range Ryū's table widths guarantee). */
@inline function multiplyShift(m: u64, lo: u64, hi: u64, j: i32): u64 {
  const high0 = multiplyHigh(m, lo);
  const low1 = m * hi;
  const sum = high0 + low1;
  const high1 = multiplyHigh(m, hi) + (sum < high0 ? 1 : 0);
  const shift = <u64>(j - 64);
  return (high1 << (64 - shift)) | (sum >> shift);
}

/**
 * The shortest decimal of a positive finite double given by its exponent and mantissa fields, into
 * decimalDigits and decimalExponent.
 */
function shortest(ieeeMantissa: u64, ieeeExponent: i32): void {
  let e2: i32;
  let m2: u64;
  if (ieeeExponent == 0) {
    // Subnormal. The 2 extra bits give room for the interval's bounds.
    e2 = 1 - EXPONENT_BIAS - MANTISSA_BITS - 2;
    m2 = ieeeMantissa;
  } else {
    e2 = ieeeExponent - EXPONENT_BIAS - MANTISSA_BITS - 2;
    m2 = (<u64>1 << MANTISSA_BITS) | ieeeMantissa;
  }
  // Round-half-even reading: an even mantissa owns the bounds of its interval.
  const acceptBounds = (m2 & 1) == 0;
  const mv = m2 << 2;
  // The lower neighbour is closer when the mantissa is a power of two (except at the smallest exponents).
  const mmShift: u64 = ieeeMantissa != 0 || ieeeExponent <= 1 ? 1 : 0;
  const mp = mv + 2;
  const mm = mv - 1 - mmShift;

  let vr: u64;
  let vp: u64;
  let vm: u64;
  let e10: i32;
  let vmIsTrailingZeros = false;
  let vrIsTrailingZeros = false;
  // The three bounds times 10^-e10, from the table entry of 5^-q (e2 ≥ 0) or 5^i (e2 < 0).
  let q: i32;
  let shift: i32;
  let lo: u64;
  let hi: u64;
  if (e2 >= 0) {
    q = log10Pow2(e2) - (e2 > 3 ? 1 : 0);
    e10 = q;
    shift = -e2 + q + POW5_INV_BITCOUNT + pow5bits(q) - 1;
    lo = unchecked(POW5_INV_SPLIT[q << 1]);
    hi = unchecked(POW5_INV_SPLIT[(q << 1) + 1]);
  } else {
    q = log10Pow5(-e2) - (-e2 > 1 ? 1 : 0);
    e10 = q + e2;
    const i = -e2 - q;
    shift = q - (pow5bits(i) - POW5_BITCOUNT);
    lo = unchecked(POW5_SPLIT[i << 1]);
    hi = unchecked(POW5_SPLIT[(i << 1) + 1]);
  }
  vr = multiplyShift(mv, lo, hi, shift);
  vp = multiplyShift(mp, lo, hi, shift);
  vm = multiplyShift(mm, lo, hi, shift);
  if (e2 >= 0) {
    if (q <= 21) {
      // At most one of mp, mv and mm is a multiple of 5.
      if (mv % 5 == 0) vrIsTrailingZeros = multipleOfPowerOf5(mv, q);
      else if (acceptBounds) vmIsTrailingZeros = multipleOfPowerOf5(mm, q);
      else vp -= multipleOfPowerOf5(mp, q) ? 1 : 0;
    }
  } else if (q <= 1) {
    // mv = 4·m2 has at least two trailing zero bits; mm has one exactly when mmShift is 1; mp always has one.
    vrIsTrailingZeros = true;
    if (acceptBounds) vmIsTrailingZeros = mmShift == 1;
    else vp--;
  } else if (q < 63) {
    vrIsTrailingZeros = multipleOfPowerOf2(mv, q);
  }

  // Drop digits while the interval still holds a shorter number.
  let removed: i32 = 0;
  let lastRemoved: u64 = 0;
  let output: u64;
  if (vmIsTrailingZeros || vrIsTrailingZeros) {
    // The rare general case: exact values, where ties and the bounds need care.
    while (true) {
      const vpDiv = vp / 10;
      const vmDiv = vm / 10;
      if (vpDiv <= vmDiv) break;
      vmIsTrailingZeros = vmIsTrailingZeros && vm - vmDiv * 10 == 0;
      vrIsTrailingZeros = vrIsTrailingZeros && lastRemoved == 0;
      const vrDiv = vr / 10;
      lastRemoved = vr - vrDiv * 10;
      vr = vrDiv;
      vp = vpDiv;
      vm = vmDiv;
      removed++;
    }
    if (vmIsTrailingZeros) {
      while (true) {
        const vmDiv = vm / 10;
        if (vm - vmDiv * 10 != 0) break;
        vrIsTrailingZeros = vrIsTrailingZeros && lastRemoved == 0;
        const vrDiv = vr / 10;
        lastRemoved = vr - vrDiv * 10;
        vr = vrDiv;
        vp = vp / 10;
        vm = vmDiv;
        removed++;
      }
    }
    // Exactly halfway (…50000): round to even.
    if (vrIsTrailingZeros && lastRemoved == 5 && (vr & 1) == 0) lastRemoved = 4;
    output = vr + ((vr == vm && (!acceptBounds || !vmIsTrailingZeros)) || lastRemoved >= 5 ? 1 : 0);
  } else {
    // The common case: two digits at a time first.
    let roundUp = false;
    const vpDiv100 = vp / 100;
    const vmDiv100 = vm / 100;
    if (vpDiv100 > vmDiv100) {
      const vrDiv100 = vr / 100;
      roundUp = vr - vrDiv100 * 100 >= 50;
      vr = vrDiv100;
      vp = vpDiv100;
      vm = vmDiv100;
      removed += 2;
    }
    while (true) {
      const vpDiv = vp / 10;
      const vmDiv = vm / 10;
      if (vpDiv <= vmDiv) break;
      const vrDiv = vr / 10;
      roundUp = vr - vrDiv * 10 >= 5;
      vr = vrDiv;
      vp = vpDiv;
      vm = vmDiv;
      removed++;
    }
    output = vr + (vr == vm || roundUp ? 1 : 0);
  }
  decimalDigits = output;
  decimalExponent = e10 + removed;
}

// ---- Text ----

/** Writes the decimal digits of v (v < 10^20) ending at `end`; returns how many. */
export function writeDigits(v: u64, end: usize): i32 {
  let p = end;
  // Eight digits at a time with 64-bit division, the rest with 32-bit arithmetic.
  while (v >= 100000000) {
    const high = v / 100000000;
    let low = <u32>(v - high * 100000000);
    v = high;
    for (let k = 0; k < 4; k++) {
      const pair = low % 100;
      low /= 100;
      p -= 2;
      store<u16>(p, load<u16>(DIGIT_PAIRS + (<usize>pair << 1)));
    }
  }
  let small = <u32>v;
  while (small >= 100) {
    const pair = small % 100;
    small /= 100;
    p -= 2;
    store<u16>(p, load<u16>(DIGIT_PAIRS + (<usize>pair << 1)));
  }
  if (small >= 10) {
    p -= 2;
    store<u16>(p, load<u16>(DIGIT_PAIRS + (<usize>small << 1)));
  } else {
    p--;
    store<u8>(p, <u8>(ZERO + small));
  }
  return <i32>(end - p);
}

@inline function writeZeros(at: usize, count: i32): usize {
  for (let i = 0; i < count; i++) store<u8>(at + <usize>i, <u8>ZERO);
  return at + <usize>count;
}

@inline export function copyDigits(to: usize, from: usize, count: i32): usize {
  for (let i = 0; i < count; i++) store<u8>(to + <usize>i, load<u8>(from + <usize>i));
  return to + <usize>count;
}

/** Writes String(x) for a finite x at `at`; returns the end. */
export function writeNumber(x: f64, at: usize): usize {
  const bits = reinterpret<u64>(x);
  const ieeeMantissa = bits & ((<u64>1 << MANTISSA_BITS) - 1);
  const ieeeExponent = <i32>((bits >> MANTISSA_BITS) & 0x7ff);
  if (ieeeMantissa == 0 && ieeeExponent == 0) {
    // 0 and -0 both print as 0.
    store<u8>(at, <u8>ZERO);
    return at + 1;
  }
  let p = at;
  if ((bits >> 63) != 0) {
    store<u8>(p, <u8>MINUS);
    p++;
  }
  const magnitude = abs(x);
  if (magnitude < 1e15 && <f64><u64>magnitude == magnitude) {
    // A whole number below 10^15 prints as its digits (shortest, and the common integer case).
    const v = <u64>magnitude;
    const count = writeDigits(v, DIGITS + 32);
    return copyDigits(p, DIGITS + 32 - <usize>count, count);
  }
  shortest(ieeeMantissa, ieeeExponent);
  const k = writeDigits(decimalDigits, DIGITS + 32);
  const digits = DIGITS + 32 - <usize>k;
  // n: where the decimal point goes, counted from the first digit (Number::toString's n).
  const n = decimalExponent + k;
  if (k <= n && n <= 21) {
    p = copyDigits(p, digits, k);
    return writeZeros(p, n - k);
  }
  if (0 < n && n <= 21) {
    p = copyDigits(p, digits, n);
    store<u8>(p, <u8>DOT);
    return copyDigits(p + 1, digits + <usize>n, k - n);
  }
  if (-6 < n && n <= 0) {
    store<u8>(p, <u8>ZERO);
    store<u8>(p + 1, <u8>DOT);
    p = writeZeros(p + 2, -n);
    return copyDigits(p, digits, k);
  }
  store<u8>(p, load<u8>(digits));
  p++;
  if (k > 1) {
    store<u8>(p, <u8>DOT);
    p = copyDigits(p + 1, digits + 1, k - 1);
  }
  store<u8>(p, <u8>LETTER_E);
  const e = n - 1;
  store<u8>(p + 1, <u8>(e < 0 ? MINUS : PLUS));
  const count = writeDigits(<u64>(e < 0 ? -e : e), DIGITS + 32);
  return copyDigits(p + 2, DIGITS + 32 - <usize>count, count);
}
