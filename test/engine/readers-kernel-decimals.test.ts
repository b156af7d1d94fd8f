/**
 * The record kernel's decimal conversion (readers/kernel/decimalToDouble.ts, Eisel–Lemire) must give
 * Number(text) bit for bit whenever it answers, and answer for every decimal of a normal double's range.
 * The reference is the JavaScript engine's own Number(), which ECMA-262 requires to round correctly
 * (ties to even). Cases: seeded random digit strings and exponents over the whole table; the shortest
 * text of random doubles (what printers write); and numbers exactly halfway between two doubles and one
 * unit either side (where only the round-to-even step decides).
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
// @ts-expect-error a plain ES module without types
import { compileDecimalKernel } from '../../extension/engine/readers/kernel/compile.mjs';
import { seededRandom } from '../reference/random';
import { TempDir } from './fixtures/readers/tempFiles';

type Convert = (w: bigint, q: number, negative: number) => number;
const tmp = new TempDir();
let convert: Convert;

beforeAll(async () => {
  const file = join(tmp.path, 'decimalToDouble.wasm');
  await compileDecimalKernel(file);
  const wasm = (globalThis as unknown as { WebAssembly: { Module: new (b: Uint8Array) => object; Instance: new (m: object, i: object) => { exports: Record<string, unknown> }; Memory: new (d: { initial: number }) => object } }).WebAssembly;
  const memory = new wasm.Memory({ initial: 1 });
  const instance = new wasm.Instance(new wasm.Module(readFileSync(file)), { env: { memory, abort: () => { throw new Error('abort'); } } });
  convert = instance.exports.decimalToDouble as Convert;
}, 120_000);

/** Compares the kernel on w × 10^q with Number("we q"); returns how many it answered and left. */
function check(cases: Iterable<[bigint, number]>): { answered: number; left: number; wrong: string[] } {
  let answered = 0;
  let left = 0;
  const wrong: string[] = [];
  for (const [w, q] of cases) {
    for (const negative of [0, 1]) {
      const text = `${negative ? '-' : ''}${w}e${q}`;
      const expected = Number(text);
      const got = convert(w, q, negative);
      if (Number.isNaN(got)) {
        left++;
        // Left to Number() only outside the normal doubles (or for the rare undecided product).
        if (Number.isFinite(expected) && Math.abs(expected) >= 2.2250738585072014e-308) wrong.push(`${text} left`);
      } else if (Object.is(got, expected)) answered++;
      else wrong.push(`${text}: ${got} not ${expected}`);
    }
  }
  return { answered, left, wrong: wrong.slice(0, 5) };
}

function* randomDecimals(seed: number, count: number): Generator<[bigint, number]> {
  const rnd = seededRandom(seed);
  for (let i = 0; i < count; i++) {
    const digits = 1 + Math.floor(rnd() * 19);
    let text = String(1 + Math.floor(rnd() * 9));
    for (let d = 1; d < digits; d++) text += String(Math.floor(rnd() * 10));
    yield [BigInt(text), Math.floor(rnd() * 700) - 360];
  }
}

/** The shortest text of doubles with random bits (every exponent), as (digits, exponent). */
function* shortestTexts(seed: number, count: number): Generator<[bigint, number]> {
  const rnd = seededRandom(seed);
  const view = new DataView(new ArrayBuffer(8));
  for (let i = 0; i < count; i++) {
    view.setUint32(0, Math.floor(rnd() * 2 ** 32) & 0x7fefffff);
    view.setUint32(4, Math.floor(rnd() * 2 ** 32));
    const x = view.getFloat64(0);
    const [mantissa, exponent] = x.toExponential().split('e') as [string, string];
    const [whole, fraction = ''] = mantissa.split('.') as [string, string?];
    yield [BigInt(whole + fraction), Number(exponent) - fraction.length];
  }
}

/**
 * Halfway points between neighbouring doubles that have at most 19 significant digits: (2M+1) × 2^s for a
 * 53-bit M, written as (2M+1)·5^j × 10^-j when s = -j, or as the integer when s >= 0, with its trailing zeros
 * moved to the exponent; and one unit of the last digit either side.
 */
function* halfways(seed: number, count: number): Generator<[bigint, number]> {
  const rnd = seededRandom(seed);
  for (let i = 0; i < count; i++) {
    const m = (1n << 52n) + (BigInt(Math.floor(rnd() * 2 ** 26)) << 26n) + BigInt(Math.floor(rnd() * 2 ** 26));
    const s = Math.floor(rnd() * 15) - 4;
    let w = s < 0 ? (2n * m + 1n) * 5n ** BigInt(-s) : (2n * m + 1n) << BigInt(s);
    let q = s < 0 ? s : 0;
    while (w % 10n === 0n) {
      w /= 10n;
      q++;
    }
    if (w >= 10n ** 19n) continue;
    yield [w, q];
    yield [w - 1n, q];
    yield [w + 1n, q];
  }
}

describe('decimalToDouble equals Number(text)', () => {
  it('on 300k random decimals of 1 to 19 digits over exponents -360 to 340', () => {
    const { answered, left, wrong } = check(randomDecimals(20261205, 300_000));
    expect(wrong).toEqual([]);
    // It answers for everything in the normal range (exponents about -307 to 308 of 700).
    expect(answered).toBeGreaterThan(0.8 * (answered + left));
  });

  it('on the shortest text of 300k doubles with random bits', () => {
    const { answered, left, wrong } = check(shortestTexts(7, 300_000));
    expect(wrong).toEqual([]);
    // Only the doubles of the two lowest exponent fields (subnormals, and the lowest normal binade, which the
    // algorithm sees as subnormal before rounding) are left: about 2 in 2048.
    expect(left).toBeLessThan(600_000 * (4 / 2048));
    expect(answered + left).toBe(600_000);
  });

  it('on numbers halfway between two doubles, and one unit either side', () => {
    const { answered, wrong } = check(halfways(11, 100_000));
    expect(wrong).toEqual([]);
    expect(answered).toBeGreaterThan(100_000);
    // Worked cases (common practice): 2^53 + 1 rounds to even, down to 2^53; 2^53 + 3 rounds up to 2^53 + 4.
    expect(convert(9007199254740993n, 0, 0)).toBe(9007199254740992);
    expect(convert(9007199254740995n, 0, 0)).toBe(9007199254740996);
  });

  it('gives zeros their sign, and leaves subnormals, infinities and exponents past the table', () => {
    expect(Object.is(convert(0n, 5, 1), -0)).toBe(true);
    expect(Object.is(convert(0n, -400, 0), 0)).toBe(true);
    expect(convert(5n, -324, 0)).toBeNaN();
    expect(convert(1n, 309, 0)).toBeNaN();
    expect(convert(1n, -343, 0)).toBeNaN();
    expect(convert(17976931348623157n, 292, 0)).toBe(1.7976931348623157e308);
    expect(convert(22250738585072014n, -324, 0)).toBe(2.2250738585072014e-308);
  });
});
