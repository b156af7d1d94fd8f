/** Side files in the editor: settings per file pattern, the naming rule, and the demo workspace as the view lists it. */
import { readdirSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import { describe, expect, it } from 'vitest';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { readDump } from '../../extension/engine/readers/index';
import { groupByQuery } from '../../extension/engine/model/groups';
import { withSideTables } from '../../extension/engine/tables/join';
import { QueryTable } from '../../extension/worker/queryTable';
import { CONFIG_DEFAULTS, readConfig } from '../../extension/host/config';
import { globToRegExp } from '../../extension/host/glob';
import { isSideTableName, sourceFor } from '../../extension/host/sources';
import type { DumpSource } from '../../extension/protocol/worker';

const DEMO = join(__dirname, '../../demo');

/** What the worker does with a source: read the dump, then join its side tables. */
async function load(source: DumpSource) {
  const dump = await readDump(source.path, { ...(source.judgments ? { judgments: source.judgments } : {}), ...(source.scores ? { scores: source.scores } : {}) });
  return withSideTables(dump, { ...(source.queries ? { queries: source.queries } : {}), ...(source.items ? { items: source.items } : {}), found: source.tablesFound });
}

function filesUnder(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const p = join(dir, name);
    return statSync(p).isDirectory() ? filesUnder(p) : [p];
  });
}

describe('side files for the editor', () => {
  it('finds queries.* and items.* beside a run file by the naming rule and joins them', async () => {
    const config = readConfig(() => undefined);
    const { source } = await sourceFor(join(DEMO, 'runs/model-a.run'), 'runs/model-a.run', config);
    expect(source).toMatchObject({ queries: join(DEMO, 'judgments/queries.tsv'), items: join(DEMO, 'judgments/items.tsv'), tablesFound: true });
    const dump = await load(source);
    expect(dump.joined?.queryText?.[dump.queries.find('q001')]).toBe('gartenschlauch reel');
    expect(dump.segments.map((s) => s.name)).toEqual(['locale', 'device']);
    expect(dump.joined?.itemTitle?.[dump.items.find('SKU-109817')]).toMatch(/\w/);
    // Every query and every product of the demo run is in the tables: nothing to report.
    expect(dump.joined?.notes).toEqual([]);
    // The worst-queries table shows the text and its filter matches it.
    const groups = groupByQuery(dump);
    const table = new QueryTable({ dump, evaluation: evaluate(dump, parseMetricList('ndcg@10'), DEFAULT_CONVENTIONS, { groups, sensitivity: false }), groups });
    const page = table.page({ offset: 0, limit: 10, filter: 'gartenschlauch reel' });
    expect(page.rows.map((r) => [r.query, r.text])).toEqual([['q001', 'gartenschlauch reel']]);
  });

  it('leaves out a found queries table that names none of the dump\'s queries, and says so', async () => {
    const config = readConfig(() => undefined);
    const { source } = await sourceFor(join(DEMO, 'runs/model-b.csv'), 'runs/model-b.csv', config);
    const dump = await load(source);
    // The CSV dumps key queries by their text, the queries table by id: the table is not used…
    expect(dump.segments.map((s) => s.name)).toEqual(['locale', 'device']);
    expect(dump.joined?.queriesFile).toBeUndefined();
    expect(dump.joined?.notes[0]).toMatch(/queries\.tsv was found beside the dump but names none of its queries; it is not used\./);
    // …while the items table, keyed by product id like the dump, is.
    expect(dump.joined?.itemsFile).toBe(join(DEMO, 'judgments/items.tsv'));
  });

  it('takes judgments, queries and items from gainline.sideFilesByPattern, relative to the workspace folder', async () => {
    const config = readConfig((key) => key === 'sideFilesByPattern'
      ? { 'runs/*.run': { judgments: 'judgments/grades.qrels', queries: 'judgments/queries.tsv' } } : undefined);
    const { source, judgmentChoices } = await sourceFor(join(DEMO, 'runs/model-b.run'), 'runs/model-b.run', config);
    expect(judgmentChoices).toBeUndefined();
    expect(source).toEqual({ path: join(DEMO, 'runs/model-b.run'), judgments: join(DEMO, 'judgments/grades.qrels'), queries: join(DEMO, 'judgments/queries.tsv') });
    const bad = readConfig((key) => key === 'sideFilesByPattern' ? { '*.run': { labels: 'x.qrels' } } : undefined);
    expect(bad.problems.join('\n')).toMatch(/sideFilesByPattern\["\*\.run"\]/);
  });

  it('every demo file the Ranked Lists view lists is readable; side tables are not listed', async () => {
    const glob = globToRegExp(CONFIG_DEFAULTS.dumpGlob);
    const listed = filesUnder(DEMO).map((p) => relative(DEMO, p)).filter((p) => glob.test(p) && !isSideTableName(p));
    expect(listed).not.toContain('judgments/queries.tsv');
    expect(listed).not.toContain('judgments/items.tsv');
    expect(listed.length).toBeGreaterThanOrEqual(6);
    const config = readConfig(() => undefined);
    for (const file of listed) {
      const { source } = await sourceFor(join(DEMO, file), file, config);
      const dump = await load(source);
      const ev = evaluate(dump, parseMetricList('ndcg@10'), DEFAULT_CONVENTIONS, { sensitivity: false });
      expect(ev.queryCount, file).toBe(300);
    }
  });
});
