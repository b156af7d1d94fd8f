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
  await compileKernel(join(here, 'simpleRecords.ts'), outFile);
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
