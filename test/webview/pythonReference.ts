/**
 * Runs a short script under the system Python (/usr/bin/python3, where Debian's numpy/scipy live)
 * and returns its JSON output. Fails loudly when the interpreter or a module is missing: an outside
 * reference that silently disappears would leave a test that cannot fail.
 */
import { spawnSync } from 'node:child_process';

const PYTHON = '/usr/bin/python3';

export function runPython<T>(script: string, input: unknown): T {
  const result = spawnSync(PYTHON, ['-c', script], { input: JSON.stringify(input), encoding: 'utf8', maxBuffer: 64 << 20 });
  if (result.error) throw new Error(`cannot run ${PYTHON}: ${result.error.message}`);
  if (result.status !== 0) {
    throw new Error(`${PYTHON} failed (is numpy installed for it? apt-get install python3-numpy):\n${result.stderr}`);
  }
  return JSON.parse(result.stdout) as T;
}
