/**
 * The conventions line printed beside every result (CLI reports, Markdown, the editor's screens and
 * tooltips, the status bar): one wording everywhere, so two outputs of the same run read the same.
 */
import type { Conventions, GainConvention } from '../engine/metrics/conventions';

/** "exponential (2^g - 1)", "linear (g)", "map 0=0,1=1,2=3". */
export function describeGain(gain: GainConvention): string {
  if (gain.kind === 'exponential') return 'exponential (2^g - 1)';
  if (gain.kind === 'linear') return 'linear (g)';
  return 'map ' + [...gain.gains].sort((a, b) => a[0] - b[0]).map(([g, v]) => `${g}=${v}`).join(',');
}

/** One line naming every convention. */
export function describeConventions(c: Conventions): string {
  const parts = [
    `gain ${describeGain(c.gain)}`,
    `ties ${c.ties}`,
    `no relevant: ${c.noRelevant}`,
    `relevant from grade ${c.relevantFrom}`,
    `ERR max grade ${c.maxGrade ?? 'from data'}`,
    `RBP persistence ${c.rbpPersistence}`,
    // Only with labels from a judgments file: judged queries the run lacks.
    ...(c.missingQueries !== undefined ? [`missing queries: ${c.missingQueries}`] : []),
  ];
  return parts.join(' · ');
}
