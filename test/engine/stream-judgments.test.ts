/**
 * A dump that streams with its labels from a judgments file, against the in-memory read of the same
 * files (readDump with `judgments`, then evaluateDump): every per-query value, count, note and warning
 * bit for bit, the JSON report byte for byte, and each query's detail. Blocks are tiny so that queries
 * straddle block boundaries and are joined again whole. Runs on this thread (no thread scripts under
 * vitest); test/worker/stream-threads.test.ts runs the join on worker threads.
 *
 * The rules themselves (a judgment replaces the row's label, judged items a query lacks count in its
 * ideal ranking and its judged-set denominators) are the in-memory join's, checked against published
 * definitions in test/engine/judgments*.test.ts; here the stream must give exactly what it gives.
 */
import { readFileSync } from 'node:fs';
import { gzipSync } from 'node:zlib';
import { afterAll, describe, expect, it } from 'vitest';
import { evaluateDump, readDump, streamOrRead } from '../../extension/engine/index';
import type { Evaluation } from '../../extension/engine/evaluate/types';
import { queryDetail } from '../../extension/engine/evaluate/detail';
import { gradeRange } from '../../extension/engine/evaluate/evaluate';
import { DEFAULT_CONVENTIONS, type Conventions } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { DEFAULT_METRICS } from '../../extension/engine/metrics/registry';
import type { MissingQueriesPolicy } from '../../extension/engine/model/dump';
import { readJudgments } from '../../extension/engine/readers/index';
import { streamedQueryDetail } from '../../extension/engine/stream/queryDetail';
import { segmentRowsOf } from '../../extension/engine/stream/segmentRows';
import { segmentBreakdown } from '../../extension/engine/evaluate/segments';
import { joinTables } from '../../extension/engine/tables/join';
import { firstQueries, judgesFirstQueries } from '../../extension/engine/stream/firstQueries';
import { streamEvaluate } from '../../extension/engine/stream/streamEvaluate';
import { streamJudgments } from '../../extension/engine/stream/streamJudgments';
import { TempDir } from './fixtures/readers/tempFiles';
import { plainEvaluation } from './fixtures/plainEvaluation';
import { expectStreamedAsInMemory, poolNames as names } from './fixtures/streamedAsInMemory';
import { groupedDump, judgmentsFor, type GroupedShape, type JudgmentsShape } from './fixtures/streamFiles';

const tmp = new TempDir();
afterAll(() => tmp.remove());

const METRICS = parseMetricList(DEFAULT_METRICS);

/** The dump's text without its grade column: a score-only dump whose labels live in the judgments alone. */
function withoutGrades(text: string): string {
  return text.split('\n').map((line) => line.split('\t').filter((_, k) => k !== 2).join('\t')).join('\n');
}

async function streamJoined(file: string, judgments: string, policy: MissingQueriesPolicy, conventions: Conventions, metrics = METRICS, blockBytes = 700) {
  const table = await readJudgments(judgments);
  return streamEvaluate(file, 'tsv', metrics, conventions, { blockBytes, judgments: streamJudgments(table, policy) });
}

async function expectIdentical(file: string, judgments: string, policy: MissingQueriesPolicy, conventions: Conventions = DEFAULT_CONVENTIONS,
  metrics = METRICS): Promise<Evaluation> {
  const dump = await readDump(file, { judgments, missingQueries: policy });
  const memory = await evaluateDump(dump, metrics, conventions, { threads: 1 });
  expectStreamedAsInMemory(await streamJoined(file, judgments, policy, conventions, metrics), memory, dump, metrics);
  return memory;
}

const CASES: [string, GroupedShape, JudgmentsShape][] = [
  ['the usual mix', { queries: 60, maxRows: 12 }, {}],
  ['ties, repeated items and unjudged rows', { queries: 60, maxRows: 12, scoreLevels: 3, duplicateShare: 0.15, unjudgedShare: 0.1 }, { skipRowShare: 0.3 }],
  ['many unretrieved judged items', { queries: 50, maxRows: 8 }, { unretrievedPerQuery: 12, disagreeShare: 0.3 }],
  ['no relevant queries and bad scores', { queries: 60, maxRows: 10, noRelevantShare: 0.3, badScoreShare: 0.1 }, { unjudgedQueryShare: 0.3 }],
  ['one query longer than many blocks', { queries: 10, maxRows: 200, scoreLevels: 5 }, { unretrievedPerQuery: 5 }],
];

describe('streamed with a judgments file against in memory, seeded files', () => {
  for (const [name, shape, judged] of CASES) {
    it(name, async () => {
      for (const seed of [1, 2]) {
        const text = groupedDump(seed, shape);
        const file = tmp.file(`${name.replace(/\W+/g, '-')}-${seed}.tsv`, text);
        const judgments = tmp.file(`${name.replace(/\W+/g, '-')}-${seed}.judgments.tsv`, judgmentsFor(text, seed + 100, judged));
        const memory = await expectIdentical(file, judgments, 'skip');
        // The fixture is what it claims: labels replaced, judged items unretrieved, judged queries absent.
        const notes = (await readDump(file, { judgments })).notes;
        expect(notes.judgments!.disagreements).toBeGreaterThan(0);
        expect(notes.judgments!.unretrieved).toBeGreaterThan(0);
        expect(notes.judgedQueriesWithoutRun).toBe(3);
        expect(memory.perQuery.unretrieved!.some((u) => u > 0)).toBe(true);
        await expectIdentical(file, judgments, 'zero');
      }
    });
  }

  it('a score-only dump (no grade column): every label from the judgments', async () => {
    const text = groupedDump(3, { queries: 60, maxRows: 10 });
    const file = tmp.file('scores-only.tsv', withoutGrades(text));
    const judgments = tmp.file('scores-only.judgments.tsv', judgmentsFor(text, 7));
    const memory = await expectIdentical(file, judgments, 'skip');
    expect((await readDump(file, { judgments })).notes.judgments!.inlineLabelRows).toBe(0);
    expect(memory.summary[0]!.counted).toBeGreaterThan(30);
  });

  it('under other conventions and metric lists, with ERR\'s highest grade only among unretrieved judged items', async () => {
    const text = groupedDump(9, { queries: 50, maxRows: 10, scoreLevels: 4, noRelevantShare: 0.2 });
    const file = tmp.file('conventions.tsv', text);
    // Grade 6 appears only on judged items no row names: g_max must come from them, in memory and streamed.
    const judgments = tmp.file('conventions.judgments.tsv', judgmentsFor(text, 19, { unretrievedPerQuery: 4, unretrievedTopGrade: 6 }));
    const variants: Conventions[] = [
      { ...DEFAULT_CONVENTIONS, ties: 'pessimistic' },
      { ...DEFAULT_CONVENTIONS, ties: 'optimistic', noRelevant: 'zero' },
      { ...DEFAULT_CONVENTIONS, ties: 'file-order', noRelevant: 'one' },
      { ...DEFAULT_CONVENTIONS, gain: { kind: 'linear' }, relevantFrom: 2 },
      { ...DEFAULT_CONVENTIONS, gain: { kind: 'map', gains: new Map([[0, 0], [1, 1], [2, 3], [3, 7], [4, 15], [6, 40]]) } },
    ];
    for (const c of variants) await expectIdentical(file, judgments, 'skip', c);
    const memory = await expectIdentical(file, judgments, 'zero', DEFAULT_CONVENTIONS, parseMetricList('err@5,ndcg,tau,judged@5,r@10,ap'));
    expect(memory.warnings.join(' ')).toMatch(/never retrieved/);
    const notes = (await readDump(file, { judgments })).notes;
    expect(notes.gradeRange?.highest).toBe(6);
  });
});

describe('what the join needs of the whole file', () => {
  it('a judgments file that shares no query is the in-memory error, word for word', async () => {
    const file = tmp.file('unrelated.tsv', groupedDump(5, { queries: 20, maxRows: 5 }));
    const judgments = tmp.file('unrelated.qrels', 'tap-washer 0 SKU-1 1\ntap-washer 0 SKU-2 0\n');
    const memory = await readDump(file, { judgments }).then(() => 'read', (e: Error) => e.message);
    const streamed = await streamJoined(file, judgments, 'skip', DEFAULT_CONVENTIONS).then(() => 'read', (e: Error) => e.message);
    expect(memory).toMatch(/judgments file sharing queries with the run/);
    expect(streamed).toBe(memory);
  });

  it('judgment lines (query unused item grade) and the items no row names are counted as in memory', async () => {
    const rows = ['query\titem\tscore'];
    for (let q = 1; q <= 30; q++) for (let i = 1; i <= 6; i++) rows.push(`q${q}\tSKU-${q * 10 + i}\t${(7 - i) / 10}`);
    const file = tmp.file('lines.tsv', rows.join('\n') + '\n');
    const qrels: string[] = [];
    for (let q = 1; q <= 32; q++) for (const i of [1, 3, 8]) qrels.push(`q${q} 0 SKU-${q * 10 + i} ${i % 3}`);
    const judgments = tmp.file('lines.qrels', qrels.join('\n') + '\n');
    await expectIdentical(file, judgments, 'skip');
    const notes = (await readDump(file, { judgments })).notes;
    // Named by no row: SKU-q8 of each of the 30 run queries (rows name SKU-q1 to SKU-q6), and the three
    // items of each of the 2 judged queries the run lacks: 36.
    expect(notes.messages).toContain('36 judged items do not occur anywhere in the run');
    expect(notes.judgedQueriesWithoutRun).toBe(2);
  });

  it('a judged grade the gain cannot take (2^2000 − 1), unretrieved or not, makes the stream give way; in memory names the line', async () => {
    const text = groupedDump(15, { queries: 30, maxRows: 6 });
    const file = tmp.file('huge.tsv', text);
    for (const item of ['SKU-NEVER-RETRIEVED', text.split('\n')[40]!.split('\t')[1]!]) {
      const query = text.split('\n')[40]!.split('\t')[0]!;
      // The pair's own judgment, if any, is taken out first: a pair judged twice is another error.
      const others = judgmentsFor(text, 6).replace(new RegExp(`^${query}\t${item}\t\\d+\n`, 'm'), '');
      const judgments = tmp.file('huge.judgments.tsv', `${others}${query}\t${item}\t2000\n`);
      const s = await streamJoined(file, judgments, 'skip', DEFAULT_CONVENTIONS);
      expect(s.kind === 'fallback' && s.reason).toMatch(/^the conventions cannot score this data/);
      // In memory the error names the judgment line of an unretrieved item, the dump's row of a retrieved one.
      const lineOfHuge = readFileSync(judgments, 'utf8').split('\n').findIndex((l) => l.endsWith('\t2000')) + 1;
      const where = item === 'SKU-NEVER-RETRIEVED' ? `huge.judgments.tsv:${lineOfHuge}:` : 'huge.tsv:41:';
      const memory = readDump(file, { judgments }).then((d) => evaluateDump(d, METRICS, DEFAULT_CONVENTIONS));
      await expect(memory).rejects.toThrow(where);
      await expect(memory).rejects.toThrow(/grade 2000 gives gain Infinity/);
    }
  });

  it('under missing queries zero with a weight column and segments: absent queries weigh 1 and belong to no segment, as in memory', async () => {
    const text = groupedDump(12, { queries: 40, maxRows: 6, weights: true, segments: true });
    const file = tmp.file('weighted.tsv', text);
    const judgments = tmp.file('weighted.judgments.tsv', judgmentsFor(text, 3));
    // As the command line reads it: the weight column joined per query, after the judgments.
    const dump = joinTables(await readDump(file, { judgments, missingQueries: 'zero' }));
    const memory = await evaluateDump(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 1 });
    expect(dump.joined!.notes.join(' ')).toMatch(/3 judged queries missing from the run \(scored 0\) have no weight of their own/);
    const table = await readJudgments(judgments);
    const streamed = expectStreamedAsInMemory(await streamEvaluate(file, 'tsv', METRICS, DEFAULT_CONVENTIONS,
      { blockBytes: 700, segments: true, judgments: streamJudgments(table, 'zero') }), memory, dump, METRICS);
    expect(streamed.dump.joined?.notes).toEqual(dump.joined!.notes);
    const rows = segmentRowsOf(streamed.dump);
    expect(rows.segments.map((c) => c.name)).toEqual(['locale', 'device']);
    expect(dump.segments.map((c) => c.name)).toEqual(['locale', 'device']);
    for (const column of [0, 1]) expect(segmentBreakdown(rows, streamed.evaluation, column)).toEqual(segmentBreakdown(dump, memory, column));
  });

  it('through the engine entry, a named judgments file no longer stops a stream', async () => {
    const text = groupedDump(14, { queries: 30, maxRows: 6 });
    const file = tmp.file('entry.tsv', text);
    const judgments = tmp.file('entry.judgments.tsv', judgmentsFor(text, 4));
    const outcome = await streamOrRead(file, { judgments, missingQueries: 'zero' }, METRICS, DEFAULT_CONVENTIONS, { reading: 'stream' });
    expect(outcome.kind).toBe('streamed');
    const memory = await evaluateDump(await readDump(file, { judgments, missingQueries: 'zero' }), METRICS, DEFAULT_CONVENTIONS, { threads: 1 });
    if (outcome.kind === 'streamed') expect(plainEvaluation(outcome.evaluation)).toEqual(plainEvaluation(memory));
    // A file found beside the dump (not named) is joined only if it names the dump's queries: that is known after a read.
    const found = await streamOrRead(file, { judgments, judgmentsFound: true }, METRICS, DEFAULT_CONVENTIONS, { reading: 'stream' });
    expect(found.kind === 'read' && found.why).toBe('a judgments file found beside it may belong to other data');
  });
});

describe('a query in detail', () => {
  it('gives the in-memory detail of every query, unretrieved judged items by name, judged queries the run lacks too', async () => {
    const text = groupedDump(31, { queries: 30, maxRows: 10, scoreLevels: 3, duplicateShare: 0.1 });
    const file = tmp.file('detail.tsv', text);
    const judgments = tmp.file('detail.judgments.tsv', judgmentsFor(text, 8, { unretrievedPerQuery: 3 }));
    const dump = await readDump(file, { judgments, missingQueries: 'zero' });
    const s = await streamJoined(file, judgments, 'zero', DEFAULT_CONVENTIONS, METRICS, 500);
    if (s.kind !== 'streamed') throw new Error('fell back');
    const range = gradeRange(dump);
    let unretrievedShown = 0;
    for (let q = 0; q < dump.queries.size; q++) {
      const memory = queryDetail(dump, q, DEFAULT_CONVENTIONS, 10, { metrics: METRICS, gradeRange: range });
      const streamed = await streamedQueryDetail(s.dump, q, DEFAULT_CONVENTIONS, 10, { metrics: METRICS });
      expect(streamed).toEqual(memory);
      unretrievedShown += memory.notRetrieved?.length ?? 0;
    }
    expect(unretrievedShown).toBeGreaterThan(10);
  });
});

describe('the first queries of a dump, for a judgments file found beside it', () => {
  it('are the queries of whole lines from the first bytes; other formats and gzip give none', async () => {
    const text = groupedDump(41, { queries: 400, maxRows: 10 });
    const file = tmp.file('first.tsv', text);
    const all = (await readDump(file)).queries;
    const whole = await firstQueries(file, {});
    expect(names(whole!)).toEqual(names(all));
    // A few hundred bytes: the queries of the lines those bytes reach (the last line read whole), in order.
    const some = await firstQueries(file, {}, 300);
    const upTo = text.indexOf('\n', text.indexOf('\n') + 1 + 300 - 1) + 1;
    const expected = [...new Set(text.slice(text.indexOf('\n') + 1, upTo).split('\n').filter((l) => l).map((l) => l.split('\t')[0]))];
    expect(names(some!)).toEqual(expected);
    expect(expected.length).toBeLessThan(all.size);
    expect(await firstQueries(tmp.file('first.jsonl', '{"query":"a","item":"b","label":1,"score":0.5}\n'), {})).toBeUndefined();
    expect(await firstQueries(tmp.file('first.tsv.gz', gzipSync(text)), {})).toBeUndefined();
    // Judgments of a late query only: not known to go with the dump from its first lines.
    const judgments = await readJudgments(tmp.file('late.judgments.tsv', `query\tproduct_id\tgrade\n${all.get(all.size - 1)}\tSKU-1\t1\n`));
    expect(await judgesFirstQueries(file, judgments, {})).toBe(true);
    const firstOnly = tmp.file('first-only.tsv', text.slice(0, upTo));
    expect(await judgesFirstQueries(firstOnly, judgments, {})).toBe(false);
  });
});
