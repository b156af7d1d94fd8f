/**
 * What the worker reads for a dump the editor opened: the dump with its judgments and scores files,
 * then its queries and items tables. Kept apart from the worker's message loop so tests read a source
 * exactly as the editor does.
 */
import { InputError } from '../engine/errors';
import { readDump, type RankedDump, type ReadOptions } from '../engine/index';
import { SHARES_NO_QUERY } from '../engine/readers/judgments';
import { withSideTables } from '../engine/tables/join';
import type { DumpSource } from '../protocol/worker';

/** Reads `source`; `extra` adds threads, cancellation and progress. */
export async function readSource(source: DumpSource, extra: Pick<ReadOptions, 'threads' | 'signal' | 'onProgress'> = {}): Promise<RankedDump> {
  const options: ReadOptions = {
    ...extra,
    ...(source.format ? { format: source.format as ReadOptions['format'] } : {}),
    ...(source.columns ? { columns: source.columns } : {}),
    ...(source.judgments ? { judgments: source.judgments } : {}),
    ...(source.scores ? { scores: source.scores } : {}),
    ...(source.missingQueries ? { missingQueries: source.missingQueries } : {}),
  };
  const dump = await readWithFoundJudgments(source, options);
  return withSideTables(dump, {
    ...(source.queries ? { queries: source.queries } : {}),
    ...(source.items ? { items: source.items } : {}),
    ...(source.tablesFound ? { found: true } : {}),
  }, extra.signal);
}

/**
 * A judgments file found by the naming rule for a dump with labels of its own (never a run file, which
 * needs one) that shares no query with the dump belongs to other data: the dump keeps its own labels,
 * and a note says why the file was not used. Any other problem in that file is reported as usual.
 */
async function readWithFoundJudgments(source: DumpSource, options: ReadOptions): Promise<RankedDump> {
  try {
    return await readDump(source.path, options);
  } catch (error) {
    const unrelated = source.judgmentsFound === true && error instanceof InputError && error.file === options.judgments
      && error.expected.startsWith(SHARES_NO_QUERY);
    if (!unrelated) throw error;
    const { judgments, missingQueries: _policy, ...ownLabels } = options;
    const own = await readDump(source.path, ownLabels);
    const note = `${judgments} was found beside the dump but names none of its queries; it is not used (the dump's own labels are).`;
    return { ...own, notes: { ...own.notes, messages: [note, ...own.notes.messages] } };
  }
}
