// Compiles the record kernel from AssemblyScript to WebAssembly (used by build.mjs and by the tests).
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const source = join(dirname(fileURLToPath(import.meta.url)), 'simpleRecords.ts');

export async function compileRecordKernel(outFile) {
  const asc = (await import('assemblyscript/asc')).default;
  const { error, stderr } = await asc.main([source, '--outFile', outFile, '-O3', '--runtime', 'stub', '--importMemory', '--noAssert', '--enable', 'simd']);
  if (error) throw new Error(`compiling the record kernel failed: ${error.message}\n${stderr.toString()}`);
}
