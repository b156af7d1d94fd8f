/** Score diagnostics for the webview: the engine's results with null for NaN (JSON has no NaN). */
import { dcgByPosition, scoresByGrade, type ScoresByGrade } from '../engine/evaluate/diagnostics';
import type { Evaluation } from '../engine/evaluate/types';
import type { RankedDump } from '../engine/model/dump';
import type { QueryGroups } from '../engine/model/groups';
import type { ScoreDiagnosticsView, ScoresByGradeView } from '../protocol/messages';

const maybe = (x: number) => (Number.isFinite(x) ? x : null);

export function scoresByGradeView(s: ScoresByGrade): ScoresByGradeView {
  return {
    edges: s.edges,
    grades: s.grades.map((g) => ({ grade: g.grade, count: g.count, missing: g.missing, q1: maybe(g.q1), median: maybe(g.median), q3: maybe(g.q3), mean: maybe(g.mean), bins: g.bins })),
  };
}

/** The overview's diagnostics over every query (one more pass over the queries, as long as scoring them once). */
export function overviewDiagnostics(dump: RankedDump, evaluation: Evaluation, groups: QueryGroups): ScoreDiagnosticsView {
  const weights = dump.joined?.queryWeight;
  const d = dcgByPosition(dump, evaluation.metrics, evaluation.conventions, { groups, ...(weights ? { weights } : {}) });
  return {
    scoresByGrade: scoresByGradeView(scoresByGrade(dump)),
    dcgByPosition: { k: Number.isFinite(d.k) ? d.k : null, depth: d.depth, queries: d.queries, predicted: d.predicted.map(maybe), ideal: d.ideal.map(maybe) },
  };
}
