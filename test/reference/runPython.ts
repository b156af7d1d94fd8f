/**
 * Runs a reference script from test/reference (through python.mjs, the one Python helper), passing
 * JSON in and out through temporary files. A missing interpreter or package throws with a clear
 * message: the test fails, it is never skipped.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runPython } from './python.mjs';

export function runReference<T>(script: string, input: unknown): T {
  const dir = mkdtempSync(join(tmpdir(), 'gainline-ref-'));
  try {
    const inPath = join(dir, 'in.json');
    const outPath = join(dir, 'out.json');
    writeFileSync(inPath, JSON.stringify(input));
    runPython([join(__dirname, script), inPath, outPath], { what: `reference script ${script}` });
    return JSON.parse(readFileSync(outPath, 'utf8')) as T;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
