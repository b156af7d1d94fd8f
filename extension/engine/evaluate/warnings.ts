/**
 * Plain sentences describing what was counted, skipped or assumed while evaluating. Shown beside every
 * result so nobody has to guess why two numbers differ.
 */
import type { RankedDump } from '../model/dump';
import type { Conventions } from '../metrics/conventions';
import { anyNeeds, metricDefinition, metricLabel, type MetricSpec } from '../metrics/registry';
import type { DegenerateCounts } from './types';
import { formatCountInText } from '../../presentation/numbers';

export interface WarningInput {
  /** For the judgments notes; callers without a dump in memory (the SQL engines) leave it out. */
  readonly dump?: Pick<RankedDump, 'notes' | 'joined'>;
  readonly conventions: Conventions;
  readonly metrics: readonly MetricSpec[];
  readonly queryCount: number;
  readonly degenerate: DegenerateCounts;
  readonly emptyQueries: number;
  readonly tauUndefined: number;
  readonly gmax: number;
  readonly headlineK: number;
}

const TIE_TEXT: Record<Conventions['ties'], string> = {
  average: 'scoring the average over every order of each tied group',
  pessimistic: 'placing lower grades first within each tie',
  optimistic: 'placing higher grades first within each tie',
  'file-order': 'keeping file order within each tie',
};

/** "A, B and C". */
function listed(items: readonly string[]): string {
  return items.length <= 1 ? (items[0] ?? '') : `${items.slice(0, -1).join(', ')} and ${items[items.length - 1]}`;
}

function rows(n: number, one: string, many: string): string {
  return `${formatCountInText(n)} ${n === 1 ? one : many}`;
}

/**
 * Where the labels came from when a judgments file gave them: judged items the run never retrieved (they
 * count in the ideal ranking and the judged-set denominators), judged queries the run lacks, disagreements
 * with labels in the dump.
 */
export function describeJudgments(dump: Pick<RankedDump, 'notes'>): string[] {
  const j = dump.notes.judgments;
  if (j === undefined) return [];
  const out = [
    `${rows(j.unretrieved, 'judged item was', 'judged items were')} never retrieved by the run; they count in the ideal ranking and in the ` +
      'relevant count of recall and AP (tau, inversions, precision, ERR and RBP stay over the retrieved list).',
  ];
  if (j.absentQueries > 0) {
    out.push(`${rows(j.absentQueries, 'judged query has', 'judged queries have')} no row in the run (e.g. ${j.absentExamples.join(', ')}); ` +
      (j.missingQueries === 'zero'
        ? 'each scores 0 on every metric and enters every mean (missing queries: zero, common practice of evaluation campaigns).'
        : 'they are left out of every mean (missing queries: skip).'));
  }
  if (j.inlineLabelRows > 0) {
    out.push(`The dump has labels too; the judgments file wins: ${rows(j.disagreements, 'labelled row disagrees', 'labelled rows disagree')} ` +
      `of ${formatCountInText(j.inlineLabelRows)}${j.disagreementExamples.length > 0 ? ` (e.g. ${j.disagreementExamples.join('; ')})` : ''}.`);
  }
  return out;
}

/**
 * What the reading of a dump says about it: the reader's own notes (a rank standing in for the score, JSON
 * Lines fields first written after the lines the shape is learnt from) and where its labels came from.
 * Every report shows them, the command line's as well as the editor's.
 */
export function describeReading(dump: Pick<RankedDump, 'notes'>): string[] {
  return [...dump.notes.messages, ...describeJudgments(dump)];
}

export function describeDegenerate(w: WarningInput): string[] {
  const c = w.conventions;
  const d = w.degenerate;
  const out: string[] = w.dump ? describeReading(w.dump) : [];
  if (d.noRelevantQueries > 0) {
    const head = `${rows(d.noRelevantQueries, 'query has', 'queries have')} no item with grade >= ${c.relevantFrom}`;
    if (c.noRelevant === 'skip') {
      out.push(`${head}; they are left out of every mean (no-relevant policy: skip).`);
    } else {
      const v = c.noRelevant === 'zero' ? 0 : 1;
      const labels = (normalised: boolean): string =>
        listed(w.metrics.filter((m) => metricDefinition(m.name).normalised === normalised).map((m) => metricLabel(m.key)));
      const scored = labels(true);
      const plain = labels(false);
      out.push(
        `${head}; ${scored || 'no metric listed'} score ${v} for them (no-relevant policy: ${c.noRelevant})` +
          (plain ? `, while ${plain} keep the value their grades give.` : '.'),
      );
    }
  }
  if (w.emptyQueries > 0) out.push(`${rows(w.emptyQueries, 'query has', 'queries have')} no rows at all; treated as having no relevant item.`);
  if (d.duplicateRows > 0) {
    out.push(`${rows(d.duplicateRows, 'row repeats', 'rows repeat')} a (query, item) pair seen earlier; the first row of each pair is ranked, the repeats are ignored.`);
  }
  if (d.missingScoreRows > 0) {
    out.push(`${rows(d.missingScoreRows, 'row has', 'rows have')} no usable score; they are ranked after every scored item of their query, in file order.`);
  }
  if (d.unjudgedRows > 0) {
    out.push(`${rows(d.unjudgedRows, 'row has', 'rows have')} no judgment; they count as grade 0 (and add to RBP's residual).`);
  }
  if (d.tiedScoreRows > 0) {
    out.push(`${rows(d.tiedScoreRows, 'row ties', 'rows tie')} another row's score in the same query; ties are handled by ${TIE_TEXT[c.ties]}.`);
  }
  if (d.singleItemQueries > 0) {
    out.push(`${rows(d.singleItemQueries, 'query has', 'queries have')} a single item; every ranking of them is perfect.`);
  }
  if (w.tauUndefined > 0) {
    out.push(`Kendall's tau is undefined for ${rows(w.tauUndefined, 'query', 'queries')} (all scores or all grades equal); left out of its mean.`);
  }
  if (anyNeeds(w.metrics, 'maxGrade')) {
    const source = c.maxGrade === undefined ? 'the highest grade in the data' : 'as configured';
    out.push(`ERR uses a maximum grade of ${w.gmax} (${source}).`);
  }
  for (const spec of w.metrics) {
    const note = metricDefinition(spec.name).note?.(spec.key, spec.k);
    if (note) out.push(note);
  }
  const hk = Number.isFinite(w.headlineK) ? `@${w.headlineK}` : '';
  out.push(`Inversion cost is the NDCG${hk} that swapping each inverted pair would recover, summed per query.`);
  if (w.dump?.joined) out.push(...w.dump.joined.notes);
  return out;
}
