/**
 * Runs test/reference/stats_scipy.py through python.mjs (Debian's interpreter, where python3-scipy
 * lives). A missing interpreter or scipy fails the calling test with a clear message.
 */
import { fileURLToPath } from 'node:url';
import { runPython } from './python.mjs';

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

const SCRIPT = fileURLToPath(new URL('./stats_scipy.py', import.meta.url));

export function scipyReference(cases: readonly ScipyCase[]): ScipyResult[] {
  return JSON.parse(runPython([SCRIPT], { input: JSON.stringify(cases), what: 'the scipy reference' })) as ScipyResult[];
}
