/** Side files in the editor: settings per file pattern, the naming rule, and the demo workspace as the view lists it. */
import { mkdirSync, mkdtempSync, readdirSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, relative } from 'node:path';
import { readDump } from '../../extension/engine/readers/index';
import { describe, expect, it } from 'vitest';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { groupByQuery } from '../../extension/engine/model/groups';
import { QueryTable } from '../../extension/worker/queryTable';
import { CONFIG_DEFAULTS, readConfig } from '../../extension/host/config';
import { globToRegExp } from '../../extension/host/glob';
import { isSideTableName, sourceFor } from '../../extension/host/sources';
import type { DumpSource } from '../../extension/protocol/worker';
import { readSource } from '../../extension/worker/readSource';

const DEMO = join(__dirname, '../../demo');

/** What the worker does with a source: read the dump with its judgments, then join its side tables. */
const load = (source: DumpSource) => readSource(source);

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
    expect(source).toEqual({ path: join(DEMO, 'runs/model-b.run'), judgments: join(DEMO, 'judgments/grades.qrels'), queries: join(DEMO, 'judgments/queries.tsv'), missingQueries: 'skip' });
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

describe('judgments for every dump format in the editor', () => {
  // Two queries; q1 has a judged item (d, grade 3) that no dump retrieves. Hand-derived NDCG@10 with
  // exponential gain 2^g - 1 and log2(position + 1) discount (the published definition, common practice):
  // q1 ranks a(2) b(0) c(1): DCG = 3/1 + 0 + 1/log2(4) = 3.5; the ideal d(3) a(2) c(1) b(0) gives
  // 7 + 3/log2(3) + 1/2; q2 ranks y(0) above x(1): DCG = 1/log2(3) against an ideal of 1.
  const q1 = 3.5 / (7 + 3 / Math.log2(3) + 0.5);
  const q2 = 1 / Math.log2(3);
  const root = mkdtempSync(join(tmpdir(), 'gainline-judged-'));
  mkdirSync(join(root, 'dumps'));
  mkdirSync(join(root, 'judgments'));
  const rows = [['q1', 'a', 0.9], ['q1', 'b', 0.8], ['q1', 'c', 0.1], ['q2', 'x', 0.5], ['q2', 'y', 0.7]] as const;
  writeFileSync(join(root, 'dumps', 'a.csv'), ['query,item,score', ...rows.map((r) => r.join(','))].join('\n') + '\n');
  writeFileSync(join(root, 'dumps', 'a.jsonl'), rows.map(([query, item, score]) => JSON.stringify({ query, item, score })).join('\n') + '\n');
  writeFileSync(join(root, 'dumps', 'a.run'), ['q1 Q0 a 1 0.9 r', 'q1 Q0 b 2 0.8 r', 'q1 Q0 c 3 0.1 r', 'q2 Q0 y 1 0.7 r', 'q2 Q0 x 2 0.5 r'].join('\n') + '\n');
  writeFileSync(join(root, 'dumps', 'a.sparse'), '0 qid:1 1:0.5\n');
  writeFileSync(join(root, 'dumps', 'a.sparse.scores'), '0.3\n');
  writeFileSync(join(root, 'judgments', 'grades.qrels'), ['q1 0 a 2', 'q1 0 b 0', 'q1 0 c 1', 'q1 0 d 3', 'q2 0 x 1', 'q2 0 y 0'].join('\n') + '\n');
  const qrels = join(root, 'judgments', 'grades.qrels');
  const ndcgOf = async (source: DumpSource) => {
    const dump = await readSource(source);
    const ev = evaluate(dump, parseMetricList('ndcg@10'), DEFAULT_CONVENTIONS, { sensitivity: false });
    return { dump, values: Array.from(ev.perQuery.values[0]!), unretrieved: ev.judgments?.unretrieved };
  };

  it('finds the judgments file by the naming rule for CSV, JSON Lines and run files alike, with the same numbers', async () => {
    const config = readConfig(() => undefined);
    for (const file of ['dumps/a.csv', 'dumps/a.jsonl', 'dumps/a.run']) {
      const choice = await sourceFor(join(root, file), file, config);
      expect(choice.source.judgments, file).toBe(qrels);
      expect(choice.source.missingQueries, file).toBe('skip');
      expect(choice.judgmentsRequired, file).toBe(file.endsWith('.run'));
      const { dump, values, unretrieved } = await ndcgOf(choice.source);
      const order = ['q1', 'q2'].map((q) => dump.queries.find(q));
      expect(order.map((q) => values[q]!), file).toEqual([q1, q2].map((v) => expect.closeTo(v, 12)));
      expect(unretrieved, file).toBe(1);
    }
    // Sparse feature lines get their scores file and the judgments file together.
    const sparse = await sourceFor(join(root, 'dumps/a.sparse'), 'dumps/a.sparse', config);
    expect(sparse.source).toMatchObject({ scores: join(root, 'dumps/a.sparse.scores'), judgments: qrels, judgmentsFound: true });
  });

  it('takes the judgments file of gainline.sideFilesByPattern for any format, including Parquet', async () => {
    const config = readConfig((key) => key === 'sideFilesByPattern' ? { 'dumps/*': { judgments: 'judgments/grades.qrels' } } : undefined);
    for (const file of ['dumps/a.csv', 'dumps/a.jsonl', 'dumps/a.parquet', 'dumps/a.sparse', 'dumps/a.run']) {
      const { source, judgmentChoices } = await sourceFor(join(root, file), file, config);
      expect(judgmentChoices, file).toBeUndefined();
      expect(source.judgments, file).toBe(qrels);
      // Named by the user: never dropped for sharing no query (that is an error, as on the command line).
      expect(source.judgmentsFound, file).toBeUndefined();
    }
    const { values } = await ndcgOf((await sourceFor(join(root, 'dumps/a.csv'), 'dumps/a.csv', config)).source);
    expect([...values].sort()).toEqual([q1, q2].map((v) => expect.closeTo(v, 12)).sort());
  });

  it('keeps a labelled dump\'s own grades when the judgments file found beside it names none of its queries, and says so', async () => {
    const config = readConfig(() => undefined);
    // The demo CSV keys queries by their text, its judgments file by id.
    const { source } = await sourceFor(join(DEMO, 'runs/model-b.csv'), 'runs/model-b.csv', config);
    expect(source).toMatchObject({ judgments: join(DEMO, 'judgments/grades.qrels'), judgmentsFound: true });
    const dump = await readSource(source);
    expect(dump.notes.messages[0]).toMatch(/grades\.qrels was found beside the dump but names none of its queries; it is not used/);
    expect(dump.notes.judgments).toBeUndefined();
    const own = await readDump(join(DEMO, 'runs/model-b.csv'));
    expect(Array.from(dump.label)).toEqual(Array.from(own.label));
    // The same file named in the setting is the user's choice: sharing no query is then an error.
    const named = readConfig((key) => key === 'sideFilesByPattern' ? { 'runs/*.csv': { judgments: 'judgments/grades.qrels' } } : undefined);
    await expect(readSource((await sourceFor(join(DEMO, 'runs/model-b.csv'), 'runs/model-b.csv', named)).source)).rejects.toThrow(/sharing queries with the run/);
  });
});
