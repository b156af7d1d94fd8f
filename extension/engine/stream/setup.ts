/**
 * The evaluation setup of a streamed dump. The in-memory path checks the conventions against the whole
 * dump before scoring; a stream scores before it has seen the whole file, so it scores under the
 * conventions as given and checks them once every block is in (see streamEvaluate.ts).
 */
import { type EvaluationSetup } from '../evaluate/evaluate';
import { SensitivityPass } from '../evaluate/sensitivity';
import { headlineCutoff } from '../evaluate/scorer';
import type { Conventions, GainConvention } from '../metrics/conventions';
import { residualMetricIndex, type MetricSpec } from '../metrics/registry';
import type { QueryGroups } from '../model/groups';
import type { GradeRange } from '../model/rowSummary';

export function scoredBlockSetup(metrics: readonly MetricSpec[], conventions: Conventions, groups: QueryGroups, queryCount: number,
  gmax: number, sensitivity: boolean, gradeRange: GradeRange = { lowest: 0, highest: 0 }, largestQuery = 0): EvaluationSetup {
  return {
    metrics,
    conventions,
    groups,
    queryCount,
    gmax,
    gradeRange,
    largestQuery,
    hasRbp: residualMetricIndex(metrics) >= 0,
    sensitivity,
  };
}

/** A sensitivity pass whose alternative gains are judged by `gainProblem` (a stream's blocks judge none: every gain is kept until the end). */
export function newSensitivityPassWith(setup: EvaluationSetup, gainProblem: (gain: GainConvention) => string | undefined): SensitivityPass {
  return new SensitivityPass(setup.conventions, headlineCutoff(setup.metrics), gainProblem);
}
