// Views computed where the data lives, in the real editor: a demo run opened with "Open Through
// DuckDB" from the Explorer shows the command line's headline (the local engine), its worst query first,
// and that query's detail with the rows fetched back from DuckDB. (A ClickHouse twin, a two-shard cluster
// opened from the palette, passed but took about two minutes on a busy 2-core machine, mostly the six
// statements ClickHouse 18.16 analyses for the table and its sensitivity rows: the worker test covers it.)
import { closeAllEditors, explorerContextMenu } from '../harness.mjs';
import { evalExpectations } from '../oracle.mjs';
import { firstWorstRow, itemIds, openDetailFromRow, readHeadline } from '../views.mjs';

function assert(condition, message) {
  if (!condition) throw new Error(message);
}

export const duckdbServedFile = {
  name: 'Explorer menu "Open Through DuckDB" on the Parquet demo run: the CLI\'s headline, worst query and its rows',
  async run(ctx) {
    const expected = evalExpectations(ctx.files.runBParquet);
    await closeAllEditors(ctx.page);
    await explorerContextMenu(ctx.page, ctx.rel(ctx.files.runBParquet), 'Open Through DuckDB');
    const { frame, value } = await readHeadline(ctx.page, undefined, { timeoutMs: 120_000 });
    assert(value === expected.meanText, `headline through DuckDB shows ${value}, the local engine says ${expected.meanText}`);
    const { row, query } = await firstWorstRow(frame);
    assert(expected.worstQueries.includes(query),
      `first row is "${query}", the local engine's lowest ${expected.headline} (${expected.lowest}) is ${JSON.stringify(expected.worstQueries)}`);
    await openDetailFromRow(ctx.page, frame, row, query);
    const predicted = await itemIds(frame, '#gl-predicted-order');
    const ideal = await itemIds(frame, '#gl-ideal-order');
    const cliRow = expected.json.queries.find((q) => q.query === query);
    assert(predicted.length > 0 && predicted.length === cliRow?.items,
      `the detail fetched from DuckDB lists ${predicted.length} items, the local engine counts ${cliRow?.items}`);
    assert([...predicted].sort().join('\n') === [...ideal].sort().join('\n'), 'predicted and ideal orders hold different items');
    await ctx.shot('duckdb-detail');
  },
};
