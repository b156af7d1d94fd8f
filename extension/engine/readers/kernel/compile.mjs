// Compiles the WebAssembly kernels from AssemblyScript (used by build.mjs and by the tests): the record
// kernel that reads delimited text, the sort of a query's items by score, and the writer of the JSON
// report's records.
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));

/** `virtual`: sources made here, by file name, offered to the compiler as if they were on disk. */
async function compileKernel(source, outFile, virtual = {}) {
  const asc = (await import('assemblyscript/asc')).default;
  const { error, stderr } = await asc.main([source, '--outFile', outFile, '-O3', '--runtime', 'stub', '--importMemory', '--noAssert', '--enable', 'simd'], {
    readFile: async (name, baseDir) => {
      const made = virtual[name.split('/').pop()];
      if (made !== undefined) return made;
      const { readFile } = await import('node:fs/promises');
      return readFile(join(baseDir, name), 'utf8').catch(() => null);
    },
  });
  if (error) throw new Error(`compiling ${source} failed: ${error.message}\n${stderr.toString()}`);
}

export async function compileRecordKernel(outFile) {
  await compileKernel(join(here, 'simpleRecords.ts'), outFile, { 'powersOfFive128.ts': powersOfFive128Source() });
}

/** decimalToDouble.ts alone, its function exported (the decimal tests call it directly). */
export async function compileDecimalKernel(outFile) {
  await compileKernel(join(here, 'decimalToDouble.ts'), outFile, { 'powersOfFive128.ts': powersOfFive128Source() });
}

export async function compileKeySortKernel(outFile) {
  await compileKernel(join(here, '../../evaluate/kernel/keySort.ts'), outFile);
}

export async function compileRecordTextKernel(outFile) {
  await compileKernel(join(here, '../../report/kernel/recordText.ts'), outFile, { 'powersOfFive.ts': powersOfFiveSource() });
}

/**
 * The power-of-five tables of the shortest-digits printer (Adams, "Ryū", PLDI 2018), computed exactly with
 * BigInt: POW5_SPLIT[i] is 5^i cut to its top 125 bits, POW5_INV_SPLIT[q] is ⌊2^(bits(5^q) − 1 + 125) / 5^q⌋ + 1,
 * each stored as two u64 (low word first). Sizes cover every double's exponent (q ≤ 290, i ≤ 325).
 */
export function powersOfFiveSource() {
  const BITS = 125n;
  const mask = (1n << 64n) - 1n;
  const words = (v) => [`0x${(v & mask).toString(16)}`, `0x${(v >> 64n).toString(16)}`];
  const split = [];
  const inverse = [];
  for (let i = 0n; i <= 325n; i++) {
    const pow = 5n ** i;
    const length = BigInt(pow.toString(2).length);
    const shift = length - BITS;
    split.push(...words(shift >= 0n ? pow >> shift : pow << -shift));
    if (i <= 290n) inverse.push(...words((1n << (length - 1n + BITS)) / pow + 1n));
  }
  return `// Made by compile.mjs.\nexport const POW5_SPLIT: StaticArray<u64> = [${split.join(', ')}];\n` +
    `export const POW5_INV_SPLIT: StaticArray<u64> = [${inverse.join(', ')}];\n`;
}

/**
 * The Eisel–Lemire table (decimalToDouble.ts), computed exactly with BigInt: for each q from -342 to 308, 5^q
 * scaled into [2^127, 2^128), as two u64 (high word first). A positive power is truncated; a negative one is
 * the quotient 2^b / 5^-q plus one, b giving 128 bits for q >= -27 and 128 more bits truncated below that (as
 * Lemire's paper describes the table, recalled from memory; the decimal tests compare every use with Number()).
 */
export function powersOfFive128Source() {
  const SMALLEST = -342;
  const LARGEST = 308;
  const mask = (1n << 64n) - 1n;
  const entries = [];
  for (let q = SMALLEST; q <= LARGEST; q++) {
    let c;
    if (q < 0) {
      const power = 5n ** BigInt(-q);
      const z = BigInt(power.toString(2).length); // 2^z > power > 2^(z-1): 5^k is never a power of two
      c = (1n << (q >= -27 ? z + 127n : 2n * z + 128n)) / power + 1n;
      while (c >= 1n << 128n) c >>= 1n;
    } else {
      c = 5n ** BigInt(q);
      while (c < 1n << 127n) c <<= 1n;
      while (c >= 1n << 128n) c >>= 1n;
    }
    if (c < 1n << 127n || c >= 1n << 128n) throw new Error(`powers of five: entry ${q} is not 128 bits`);
    entries.push(`0x${(c >> 64n).toString(16)}`, `0x${(c & mask).toString(16)}`);
  }
  return `// Made by compile.mjs.\nexport const SMALLEST_POWER_OF_TEN: i32 = ${SMALLEST};\nexport const LARGEST_POWER_OF_TEN: i32 = ${LARGEST};\n` +
    `export const POWERS_OF_FIVE_128: StaticArray<u64> = [${entries.join(', ')}];\n`;
}
