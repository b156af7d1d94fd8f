/**
 * A query's detail screen and its copy as JSON, made the same way whether the rows were read into memory
 * (engineWorker.ts) or fetched back from an SQL engine for this one query (sqlSession.ts).
 */
import { scoresByGrade } from '../engine/evaluate/diagnostics';
import type { Evaluation, QueryDetail } from '../engine/evaluate/types';
import type { RankedDump } from '../engine/model/dump';
import { conventionsAsJson } from '../engine/report/reportInput';
import type { QueryDetailView } from '../protocol/messages';
import { scoresByGradeView } from './diagnosticsView';
import type { QueryTable } from './queryTable';
import { detailView } from './viewModels';

/** The detail screen of query `id` (its index in `evaluation`), with the scores of each grade in the list. */
export function detailScreen(dump: RankedDump, evaluation: Evaluation, detail: QueryDetail, id: number, table: QueryTable): QueryDetailView {
  const rows = detail.positions.map((p) => p.row);
  return { ...detailView(dump, evaluation, detail, id, table), scoresByGrade: scoresByGradeView(scoresByGrade(dump, rows, 10)) };
}

/**
 * The query as indented JSON: its values (null where a metric is undefined), the conventions and each
 * listed item with its line in `file` (`lineOf` gives null where the rows have no line, as an SQL
 * engine's). Judged items never retrieved are listed only when there are some.
 */
export function queryJsonText(query: string, file: string, evaluation: Evaluation, id: number, detail: QueryDetail, lineOf: (row: number) => number | null): string {
  const values: Record<string, number | null> = {};
  evaluation.metrics.forEach((m, i) => {
    const v = evaluation.perQuery.values[i]![id]!;
    values[m.key] = Number.isFinite(v) ? v : null;
  });
  const json = {
    query,
    file,
    conventions: conventionsAsJson(evaluation.conventions),
    values,
    items: detail.positions.map((p) => ({
      position: p.position,
      item: p.item,
      grade: Number.isFinite(p.label) ? p.label : null,
      score: Number.isFinite(p.score) ? p.score : null,
      idealPosition: p.idealPosition,
      line: lineOf(p.row),
    })),
    ...(detail.notRetrieved.length > 0
      ? { notRetrieved: detail.notRetrieved.map((m) => ({ item: m.item, grade: m.label, idealPosition: m.idealPosition })) }
      : {}),
  };
  return JSON.stringify(json, null, 2);
}
