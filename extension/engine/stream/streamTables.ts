/**
 * A queries table joined to a streamed dump, as tables/join.ts joins it to a dump read in memory: by
 * query id, once the stream has met every query, before the means are taken (a weight column weighs
 * them). The rules and the notes are the in-memory join's own (joinQueriesTable): text, weights and
 * segments by query; a column named like one of the dump's segments replaces it; the table's weight
 * column replaces the dump's; judged queries the run lacks (missing queries `zero`) that the table
 * gives no weight weigh 1. A table found beside the dump rather than named is left out, with the
 * same note, when it names none of the dump's queries. A segment of the table is each query's value,
 * as a segment of the dump is each query's first row's, so the segment means come out as in memory.
 */
import type { JoinedFacts } from '../model/dump';
import { MapStringPool, type StringPool } from '../model/stringPool';
import { addQueriesTable, sharesAnId, unusedTableNote, weighAbsentQueries, type JoiningFacts } from '../tables/join';
import type { TextTable } from '../tables/readTable';
import { resolveSideColumns } from '../tables/sideRoles';

/** A queries table read before the stream, so its errors come first as in a read. */
export interface StreamQueriesTable {
  readonly table: TextTable;
  /** Found by the naming rule, not named: left out when it names none of the dump's queries. */
  readonly found?: boolean;
}

/** One segment column by query (StreamedDump.querySegments). */
export interface QuerySegment {
  readonly name: string;
  readonly values: StringPool;
  readonly ofQuery: Uint32Array;
}

export interface StreamedQueryFacts {
  /** The dump's queries, those the run lacks (from `runQueries` on) included. */
  readonly queries: StringPool;
  readonly runQueries: number;
  /** The dump's own segment columns by query, the weight column left out. */
  readonly ownSegments: readonly QuerySegment[];
  /** The dump's own weight column, each query's weight (NaN from `runQueries` on). */
  readonly ownWeight?: { readonly weight: Float64Array; readonly source: string };
}

/** The joined facts and segment columns of a streamed dump; `joined` is undefined when nothing was joined or weighed. */
export function joinStreamedQueries(own: StreamedQueryFacts, queriesTable: StreamQueriesTable | undefined):
  { readonly joined?: JoinedFacts; readonly querySegments: readonly QuerySegment[] } {
  let table = queriesTable?.table;
  const skipped: string[] = [];
  if (table && queriesTable!.found === true && !sharesAnId(table, 'queries', own.queries)) {
    skipped.push(unusedTableNote(table.file, 'queries'));
    table = undefined;
  }
  if (table === undefined && own.ownWeight === undefined) {
    return { ...(skipped.length > 0 ? { joined: { notes: skipped } } : {}), querySegments: own.ownSegments };
  }
  const notes: string[] = [];
  const facts: JoiningFacts = { notes };
  if (own.ownWeight) {
    facts.queryWeight = own.ownWeight.weight;
    facts.weightSource = own.ownWeight.source;
  }
  const segments = [...own.ownSegments];
  if (table !== undefined) {
    addQueriesTable(facts, notes, segments, table, own.queries, (name, valueOfQuery) => {
      const values = new MapStringPool();
      return { name, values, ofQuery: Uint32Array.from(valueOfQuery, (v) => values.intern(v)) };
    });
  }
  if (facts.queryWeight !== undefined) notes.push(...weighAbsentQueries(own.queries, own.runQueries, facts.queryWeight));
  return { joined: { ...facts, notes: [...skipped, ...notes] }, querySegments: segments };
}

/**
 * Each query's weight in a named queries table, for the means shown while the dump streams in (the final
 * means take the join's weights); undefined when the table has no weight column or was only found.
 */
export function partialWeights(queriesTable: StreamQueriesTable | undefined): Map<string, number> | undefined {
  if (queriesTable === undefined || queriesTable.found === true) return undefined;
  const { table } = queriesTable;
  const roles = resolveSideColumns(table, 'queries');
  if (roles.weight < 0) return undefined;
  const weights = new Map<string, number>();
  for (let r = 0; r < table.rowCount; r++) {
    // A weight the join will refuse (negative, not a number) weighs nothing in the means shown meanwhile.
    const w = Number(table.cells[roles.weight]![r]!.trim() || NaN);
    weights.set(table.cells[roles.key]![r]!, Number.isFinite(w) && w >= 0 ? w : NaN);
  }
  return weights;
}
