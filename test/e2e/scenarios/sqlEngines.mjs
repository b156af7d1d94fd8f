// Views computed where the data lives, in the real editor: a demo run opened with "Open Through
// DuckDB" from the Explorer shows the command line's headline (the local engine), its worst query first,
// and that query's detail with the rows fetched back from DuckDB; the same for a ClickHouse table URL.
import { readFileSync } from 'node:fs';
import { ClickHouseCluster, CLUSTER } from '../../sql/clickhouse-cluster.mjs';
import { closeAllEditors, explorerContextMenu, runCommand, typeInQuickInput } from '../harness.mjs';
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

/**
 * A two-shard ClickHouse cluster on loopback (test/sql/clickhouse-cluster.mjs) holding demo run A with its
 * row numbers; "Gainline: Open a ClickHouse Table..." asks for the URL, and the view shows the local
 * engine's headline and the worst query's rows fetched from the cluster. The profile names the order
 * column (gainline.clickhouse.orderColumn = row), so repeated rows and ties resolve as in the file.
 */
export const clickhouseTableUrl = {
  name: '"Open a ClickHouse Table..." on a two-shard cluster holding demo run A: the CLI\'s headline and worst query\'s rows',
  async run(ctx) {
    const expected = evalExpectations(ctx.files.runA);
    const cluster = new ClickHouseCluster('e2e-only-password');
    const started = Date.now();
    try {
      await cluster.start();
      const columns = '(row UInt64, query String, product_id String, grade Float64, score Float64, locale String, device String)';
      for (let i = 0; i < 2; i++) {
        await cluster.run(i, 'CREATE DATABASE shop');
        await cluster.run(i, `CREATE TABLE shop.rows_local ${columns} ENGINE = MergeTree ORDER BY (query, row)`);
        await cluster.run(i, `CREATE TABLE shop.rows AS shop.rows_local ENGINE = Distributed(${CLUSTER}, shop, rows_local, cityHash64(query))`);
      }
      const lines = readFileSync(ctx.files.runA, 'utf8').trim().split('\n').slice(1);
      const body = lines.map((line, i) => `${i}\t${line.split(',').join('\t')}`).join('\n') + '\n';
      await cluster.run(0, 'INSERT INTO shop.rows FORMAT TabSeparated', body, { insert_distributed_sync: '1' });
      ctx.log(`cluster started and loaded in ${((Date.now() - started) / 1000).toFixed(1)} s`);
      await closeAllEditors(ctx.page);
      await runCommand(ctx.page, 'Gainline: Open a ClickHouse Table...');
      await typeInQuickInput(ctx.page, `clickhouse://127.0.0.1:${cluster.servers[0].httpPort}/shop.rows`);
      const { frame, value } = await readHeadline(ctx.page, undefined, { timeoutMs: 120_000 });
      assert(value === expected.meanText, `headline from ClickHouse shows ${value}, the local engine says ${expected.meanText}`);
      const { row, query } = await firstWorstRow(frame);
      assert(expected.worstQueries.includes(query), `first row is "${query}", the local engine's worst are ${JSON.stringify(expected.worstQueries)}`);
      await openDetailFromRow(ctx.page, frame, row, query);
      const predicted = await itemIds(frame, '#gl-predicted-order');
      const cliRow = expected.json.queries.find((q) => q.query === query);
      assert(predicted.length > 0 && predicted.length === cliRow?.items,
        `the detail fetched from ClickHouse lists ${predicted.length} items, the local engine counts ${cliRow?.items}`);
      ctx.log(`ClickHouse scenario, cluster start to detail: ${((Date.now() - started) / 1000).toFixed(1)} s`);
    } finally {
      await closeAllEditors(ctx.page).catch(() => {});
      await cluster.stop();
    }
  },
};
