/**
 * Runs test/reference/stats_scipy.py with Debian's /usr/bin/python3 (where python3-scipy lives, not the
 * python3 first on PATH). A missing interpreter or scipy fails the calling test with a clear message.
 */
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';

export interface ScipyCase {
  readonly a: readonly number[];
  readonly b: readonly number[];
  readonly wilcoxon_method?: 'auto' | 'approx';
  readonly exact_permutation?: boolean;
  readonly bootstrap?: number;
}

export interface ScipyResult {
  readonly scipy: string;
  readonly t: number | null;
  readonly t_p: number | null;
  readonly w_stat?: number | null;
  readonly w_p?: number | null;
  readonly perm_p?: number | null;
  readonly boot_low?: number | null;
  readonly boot_high?: number | null;
}

const PYTHON = '/usr/bin/python3';
const SCRIPT = fileURLToPath(new URL('./stats_scipy.py', import.meta.url));

export function scipyReference(cases: readonly ScipyCase[]): ScipyResult[] {
  const run = spawnSync(PYTHON, [SCRIPT], { input: JSON.stringify(cases), encoding: 'utf8', maxBuffer: 64 << 20 });
  if (run.error) throw new Error(`cannot run ${PYTHON} for the scipy reference: ${run.error.message}`);
  if (run.status !== 0) {
    throw new Error(`scipy reference failed (exit ${run.status}): ${run.stderr.trim() || 'no message'}`);
  }
  return JSON.parse(run.stdout) as ScipyResult[];
}
