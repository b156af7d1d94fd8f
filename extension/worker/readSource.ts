/**
 * What the worker reads for a dump the editor opened: the dump with its judgments and scores files,
 * then its queries and items tables. Kept apart from the worker's message loop so tests read a source
 * exactly as the editor does.
 */
import { readDump, type RankedDump, type ReadOptions } from '../engine/index';
import { withSideTables } from '../engine/tables/join';
import type { DumpSource } from '../protocol/worker';

/** Reads `source`; `extra` adds threads, cancellation and progress. */
export async function readSource(source: DumpSource, extra: Pick<ReadOptions, 'threads' | 'signal' | 'onProgress'> = {}): Promise<RankedDump> {
  const options: ReadOptions = {
    ...extra,
    ...(source.format ? { format: source.format as ReadOptions['format'] } : {}),
    ...(source.columns ? { columns: source.columns } : {}),
    ...(source.judgments ? { judgments: source.judgments } : {}),
    // Found beside the dump rather than named: the engine leaves it out when it names none of the dump's queries.
    ...(source.judgments && source.judgmentsFound ? { judgmentsFound: true } : {}),
    ...(source.scores ? { scores: source.scores } : {}),
    ...(source.missingQueries ? { missingQueries: source.missingQueries } : {}),
  };
  const dump = await readDump(source.path, options);
  return withSideTables(dump, {
    ...(source.queries ? { queries: source.queries } : {}),
    ...(source.items ? { items: source.items } : {}),
    ...(source.tablesFound ? { found: true } : {}),
  }, extra.signal);
}
