import { describe, expect, it } from 'vitest';
import { formatCsv } from '../../extension/engine/report/csv';
import { formatJson, jsonFrame } from '../../extension/engine/report/json';
import { formatReportPieces, writeReport } from '../../extension/engine/report/index';
import { formatMarkdown } from '../../extension/engine/report/markdown';
import { packNames, stringifyQueryRecords } from '../../extension/engine/report/jsonRecords';
import { jsonNumber, queryColumns, worstQueries, type ReportInput } from '../../extension/engine/report/reportInput';
import { MapStringPool } from '../../extension/engine/model/stringPool';
import { formatTable } from '../../extension/engine/report/table';
import { FIXTURE_QUERIES, fixtureInput } from '../cli/support/evaluationFixture';
import { runPython } from '../reference/python.mjs';


describe('JSON report', () => {
  it('keeps the document shape: conventions, summary, queries, warnings, degenerate, sensitivity', () => {
    const doc = JSON.parse(formatJson(fixtureInput()));
    expect(Object.keys(doc)).toEqual(
      expect.arrayContaining(['conventions', 'summary', 'queries', 'warnings', 'degenerate', 'sensitivity']),
    );
    expect(doc.summary).toEqual({ 'ndcg@10': 0.625, ap: 0.525, rbp: 0.28, tau: 0.0333333333 });
    expect(doc.conventions).toEqual({
      gain: 'exponential',
      ties: 'average',
      noRelevant: 'skip',
      relevantFrom: 1,
      maxGrade: null,
      rbpPersistence: 0.8,
    });
    expect(doc.headline).toBe('ndcg@10');
    expect(doc.sensitivity[1]).toMatchObject({ label: 'no relevant: zero', mean: 0.4166666667, counted: 3 });
  });

  it('writes one record per query with metric keys as written, companions beside them, and null for skipped', () => {
    const doc = JSON.parse(formatJson(fixtureInput()));
    expect(doc.queries).toHaveLength(3);
    expect(doc.queries[0]).toEqual({
      query: 'cordless drill 18v',
      items: 5,
      relevant: 2,
      'ndcg@10': 0.75,
      ap: 0.8,
      rbp: 0.36,
      rbp_residual: 0.32768,
      tau: 0.4,
      inversions: 2,
      skipped: false,
    });
    expect(doc.queries[1]).toMatchObject({ query: FIXTURE_QUERIES[1], 'ndcg@10': null, ap: null, tau: null, skipped: true });
    // Key order follows the request: each companion right after its metric.
    expect(Object.keys(doc.queries[2])).toEqual(['query', 'items', 'relevant', 'ndcg@10', 'ap', 'rbp', 'rbp_residual', 'tau', 'inversions', 'skipped']);
  });

  it('leaves out rbp_residual when the evaluation has no residuals', () => {
    const doc = JSON.parse(formatJson(fixtureInput({}, false)));
    expect(doc.queries[0]).not.toHaveProperty('rbp_residual');
  });

  it('writes a gain map as grade → gain pairs sorted by grade', () => {
    const input = fixtureInput();
    const gains = new Map([[2, 3], [0, 0], [1, 1]]);
    const ev = { ...input.evaluation, conventions: { ...input.evaluation.conventions, gain: { kind: 'map' as const, gains } } };
    const doc = JSON.parse(formatJson({ ...input, evaluation: ev }));
    expect(doc.conventions.gain).toEqual({ map: { '0': 0, '1': 1, '2': 3 } });
    expect(Object.keys(doc.conventions.gain.map)).toEqual(['0', '1', '2']);
  });
});

/** The document as formatJson wrote it before records were rendered by hand: objects through JSON.stringify. */
function slowJson(input: ReportInput): string {
  const ev = input.evaluation;
  const columns = queryColumns(ev);
  const queries = Array.from({ length: ev.queryCount }, (_, q) => {
    const record: Record<string, unknown> = { query: input.queryNames.get(q), items: ev.perQuery.items[q], relevant: ev.perQuery.relevant[q] };
    for (const column of columns) record[column.key] = jsonNumber(column.valueOf(q));
    record.skipped = ev.perQuery.skipped[q] === 1;
    return record;
  });
  const head = JSON.parse(formatJson({ ...input, evaluation: { ...ev, queryCount: 0 } }));
  return JSON.stringify({ ...head, queryCount: ev.queryCount, queries }, null, 1) + '\n';
}

describe('JSON records rendered by hand', () => {
  it('are byte for byte what JSON.stringify writes, on random values and awkward names', () => {
    // Outside reference: JSON.stringify (ECMA-262) on the same records built as plain objects.
    let seed = 777;
    const rand = () => ((seed = (Math.imul(seed, 1103515245) + 12345) >>> 0) / 2 ** 32);
    const odd = ['"quoted"', 'back\\slash', 'tab\there', 'new\nline', '\u0001ctl', 'ünïcödé 丁字', '\ud83d\udd27 spanner', 'lone \ud800', '\u2028sep', ''];
    const specials = [NaN, Infinity, -Infinity, -0, 0, 1, 1e21, 1e-7, 5e-324, -1 / 3, 0.1 + 0.2, 123456789012];
    for (let trial = 0; trial < 30; trial++) {
      const base = fixtureInput({}, trial % 2 === 0);
      const n = trial === 0 ? 1 : 1 + Math.floor(rand() * 40);
      const value = () => (rand() < 0.3 ? specials[Math.floor(rand() * specials.length)]! : rand() * 2 - 1);
      const column = () => Float64Array.from({ length: n }, value);
      const perQuery = {
        items: Uint32Array.from({ length: n }, () => Math.floor(rand() * 500)),
        relevant: Uint32Array.from({ length: n }, () => Math.floor(rand() * 20)),
        values: base.evaluation.metrics.map(column),
        inversions: Float64Array.from({ length: n }, () => Math.floor(rand() * 900)),
        inversionCost: column(),
        skipped: Uint8Array.from({ length: n }, () => (rand() < 0.2 ? 1 : 0)),
        ...(base.evaluation.perQuery.rbpResidual ? { rbpResidual: column() } : {}),
      };
      const names = new MapStringPool();
      for (let q = 0; q < n; q++) names.intern(`${odd[Math.floor(rand() * odd.length)]} ${q}`);
      const input = { ...base, queryNames: names, evaluation: { ...base.evaluation, queryCount: n, perQuery } };
      expect(formatJson(input)).toBe(slowJson(input));
    }
  });

  it('with no queries, writes an empty array', () => {
    const base = fixtureInput();
    const input = { ...base, evaluation: { ...base.evaluation, queryCount: 0 } };
    expect(formatJson(input)).toBe(JSON.stringify({ ...JSON.parse(formatJson(input)) }, null, 1) + '\n');
    expect(JSON.parse(formatJson(input)).queries).toEqual([]);
  });

  it('records rendered in pieces (more queries than one piece holds) are the same text', () => {
    // Outside reference: JSON.stringify (ECMA-262) on the same records built as plain objects.
    const base = fixtureInput();
    const n = 40_000;
    const column = (k: number) => Float64Array.from({ length: n }, (_, q) => (q % 97 === k ? NaN : ((q * 7 + k) % 1000) / 999));
    const perQuery = {
      items: Uint32Array.from({ length: n }, (_, q) => q % 50), relevant: Uint32Array.from({ length: n }, (_, q) => q % 7),
      values: base.evaluation.metrics.map((_, k) => column(k)), inversions: column(90), inversionCost: column(91),
      skipped: Uint8Array.from({ length: n }, (_, q) => (q % 11 === 0 ? 1 : 0)),
      ...(base.evaluation.perQuery.rbpResidual ? { rbpResidual: column(92) } : {}),
    };
    const names = new MapStringPool();
    for (let q = 0; q < n; q++) names.intern(`drill bit ${q}`);
    const input = { ...base, queryNames: names, evaluation: { ...base.evaluation, queryCount: n, perQuery } };
    const pieces = [...formatReportPieces('json', input, { worst: 10 })];
    expect(pieces.length).toBeGreaterThan(4);
    expect(pieces.join('')).toBe(slowJson(input));
  });

  it('written piece by piece (records rendered on this thread), the same bytes as formatJson, records between the frame\'s two halves', async () => {
    const input = fixtureInput();
    const pieces: (string | Uint8Array)[] = [];
    await writeReport('json', input, { worst: 10 }, (piece) => pieces.push(piece));
    const text = Buffer.concat(pieces.map((p) => (typeof p === 'string' ? Buffer.from(p) : p))).toString();
    expect(text).toBe(formatJson(input));
    expect(text).toBe(slowJson(input));
    const frame = jsonFrame(input);
    expect(pieces[0]).toBe(frame.before);
    expect(pieces.at(-1)).toBe(frame.after);
    // Every record is in the one piece between them (three queries, one chunk), rendered as bytes.
    expect(pieces).toHaveLength(3);
    expect(pieces[1]).toBeInstanceOf(Uint8Array);
    const spec = { metrics: input.evaluation.metrics, names: packNames(input.queryNames) };
    expect(new TextDecoder().decode(pieces[1] as Uint8Array)).toBe(stringifyQueryRecords(spec, input.evaluation.perQuery, 0, 3));
    expect(stringifyQueryRecords(spec, input.evaluation.perQuery, 2, 2)).toBe('');
  });

  it('with no queries the frame alone is the document, and parses', () => {
    const input = fixtureInput();
    const empty = { ...input, evaluation: { ...input.evaluation, queryCount: 0 } };
    const frame = jsonFrame(empty);
    expect(JSON.parse(frame.before + frame.after).queries).toEqual([]);
    expect(formatJson(empty)).toBe(frame.before + frame.after);
  });
});

describe('CSV report', () => {
  it('quotes per RFC 4180 and reads back identically with Python\'s csv module', () => {
    // Outside reference: Python's standard-library csv reader (RFC 4180 dialect "excel").
    const text = formatCsv(fixtureInput());
    const script = 'import csv,sys,json; print(json.dumps(list(csv.reader(sys.stdin))))';
    const rows: string[][] = JSON.parse(runPython(['-c', script], { input: text, what: "Python's csv reader" }));
    expect(rows[0]).toEqual(['query', 'items', 'relevant', 'skipped', 'ndcg@10', 'ap', 'rbp', 'rbp_residual', 'tau', 'inversions']);
    expect(rows.slice(1).map((r) => r[0])).toEqual(FIXTURE_QUERIES);
    expect(rows[2]).toEqual([FIXTURE_QUERIES[1], '3', '0', 'true', '', '', '0', '0.512', '', '0']);
    expect(Number(rows[3]![8])).toBe(-1 / 3); // full precision, not rounded for display
  });
});

describe('worst queries', () => {
  it('orders by the headline metric ascending and drops skipped queries', () => {
    expect(worstQueries(fixtureInput().evaluation, 10)).toEqual([2, 0]);
    expect(worstQueries(fixtureInput().evaluation, 1)).toEqual([2]);
    expect(worstQueries(fixtureInput().evaluation, 0)).toEqual([]);
  });

  it('matches a slow reference on seeded random values with many ties', () => {
    let seed = 12345;
    const rand = () => ((seed = (Math.imul(seed, 1103515245) + 12345) >>> 0) / 2 ** 32);
    // Values with ties, NaN (left out), ±0 and ±Infinity; lists long enough to keep the selection's heap busy.
    const special = [NaN, 0, -0, Infinity, -Infinity];
    for (let trial = 0; trial < 80; trial++) {
      const n = 1 + Math.floor(rand() * (trial % 4 === 0 ? 3000 : 60));
      const values = Float64Array.from({ length: n }, () => (rand() < 0.15 ? special[Math.floor(rand() * special.length)]! : Math.round(rand() * 5) / 5));
      const skipped = Uint8Array.from({ length: n }, () => (rand() < 0.1 ? 1 : 0));
      const base = fixtureInput().evaluation;
      const ev = { ...base, queryCount: n, perQuery: { ...base.perQuery, values: [values], skipped }, headline: 0 };
      const limit = Math.floor(rand() * (trial % 4 === 0 ? 200 : 15));
      // Slow and obvious: collect (value, id) pairs, sort by value then id.
      const pairs: [number, number][] = [];
      for (let q = 0; q < n; q++) if (!skipped[q] && !Number.isNaN(values[q]!)) pairs.push([values[q]!, q]);
      pairs.sort((a, b) => (a[0] !== b[0] ? a[0] - b[0] : a[1] - b[1]));
      expect(worstQueries(ev, limit)).toEqual(pairs.slice(0, limit).map((p) => p[1]));
    }
  });
});

describe('text table report', () => {
  const text = formatTable(fixtureInput(), { worst: 10 });

  it('shows the summary, conventions, notes, sensitivity and worst queries', () => {
    expect(text).toContain('runs/store-search.csv');
    expect(text).toContain('13 rows · 3 queries · 2 in the ndcg@10 mean');
    expect(text).toMatch(/ndcg@10\s+0\.6250\s+2/);
    expect(text).toContain('gain exponential (2^g - 1) · ties average · no relevant: skip');
    expect(text).toContain('  - 1 duplicate row; the first was kept.');
    expect(text).toMatch(/gain: linear\s+0\.7000\s+\+0\.0750\s+2/);
    expect(text).toMatch(/no relevant: zero\s+0\.4167\s+-0\.2083\s+3/);
    expect(text).toContain('Worst 2 queries by ndcg@10');
  });

  it('lists the worst queries in order with aligned columns', () => {
    const lines = text.split('\n');
    const start = lines.findIndex((l) => l.startsWith('Worst'));
    const table = lines.slice(start + 1, start + 4);
    expect(table[1]).toMatch(/^\s+1\s+pvc pipe 32mm\|elbow\s+4\s+1\s+0\.5000\s+0\.2500\s+0\.2000\s+0\.4096\s+-0\.3333\s+3$/);
    expect(table[2]).toMatch(/^\s+2\s+cordless drill 18v\s+5\s+2\s+0\.7500/);
    // Right-aligned last column: every row ends at the same width.
    expect(new Set(table.map((l) => l.length)).size).toBe(1);
  });

  it('prints rounding noise in a sensitivity change as 0.0000, never -0.0000', () => {
    const base = fixtureInput();
    const row = { ...base.evaluation.sensitivity[0]!, label: 'ties: average (as configured)', mean: 0.625 - 1e-17 };
    const text = formatTable({ ...base, evaluation: { ...base.evaluation, sensitivity: [row] } }, { worst: 0 });
    expect(text).toMatch(/ties: average \(as configured\)\s+0\.6250\s+0\.0000\s+2/);
    expect(text).not.toContain('-0.0000');
  });

  it('hides the worst-query list when asked for none', () => {
    expect(formatTable(fixtureInput(), { worst: 0 })).not.toContain('Worst');
  });
});

describe('Markdown report', () => {
  it('has a summary table and a worst-queries table with pipes escaped', () => {
    const md = formatMarkdown(fixtureInput(), { worst: 5 });
    expect(md).toContain('| metric | mean | queries |\n| --- | ---: | ---: |\n| ndcg@10 | 0.6250 | 2 |');
    expect(md).toContain('| 1 | pvc pipe 32mm\\|elbow | 4 | 1 | 0.5000 |');
    expect(md).toContain('#### Worst 2 queries by ndcg@10');
    // Every table row of the worst list has the same number of unescaped cell separators.
    const worstPart = md.slice(md.indexOf('#### Worst'));
    const rows = worstPart.split('\n').filter((l) => l.startsWith('| '));
    expect(rows).toHaveLength(4); // header, rule, two queries
    const cells = rows.map((r) => r.replaceAll('\\|', '').split('|').length);
    expect(new Set(cells).size).toBe(1);
  });
});

describe('query columns', () => {
  it('adds inversions after tau and the residual after rbp only', () => {
    expect(queryColumns(fixtureInput().evaluation).map((c) => c.key)).toEqual(['ndcg@10', 'ap', 'rbp', 'rbp_residual', 'tau', 'inversions']);
  });
});
