/**
 * Runs a reference script from test/reference with Debian's /usr/bin/python3 (where scikit-learn and
 * scipy are installed), passing JSON in and out through temporary files. A missing interpreter or package
 * throws with a clear message: the test fails, it is never skipped.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

export const PYTHON = '/usr/bin/python3';

export function runReference<T>(script: string, input: unknown): T {
  const dir = mkdtempSync(join(tmpdir(), 'gainline-ref-'));
  try {
    const inPath = join(dir, 'in.json');
    const outPath = join(dir, 'out.json');
    writeFileSync(inPath, JSON.stringify(input));
    const run = spawnSync(PYTHON, [join(__dirname, script), inPath, outPath], { encoding: 'utf8', timeout: 120_000 });
    if (run.error) throw new Error(`could not run ${PYTHON} for reference values: ${run.error.message}`);
    if (run.status !== 0) {
      throw new Error(
        `reference script ${script} failed (exit ${run.status}); install python3-sklearn and python3-scipy for ${PYTHON}.\n${run.stderr}`,
      );
    }
    return JSON.parse(readFileSync(outPath, 'utf8')) as T;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
