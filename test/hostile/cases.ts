/**
 * The hostile-input corpus: one row per case. Each case writes its files into a fresh folder, runs the
 * real command line (dist/cli.js) there, and expects either
 *   - `error`: exit 2 and exactly one line on standard error that starts with the file (resolved in the
 *     folder) and line, `file:line`, or the file alone where no line exists (an empty file, a corrupt
 *     gzip), or the option (`--seed`); `says` must also match the line;
 *   - `rows`: exit 0, and the JSON report's means and per-query values equal the slow reference
 *     (test/reference/slowMetrics.ts) computed on the rows the user meant;
 *   - `means`: exit 0 and hand-derived means (for values the slow reference cannot compute, e.g. 2^2000).
 * To add a case, add a row; the generator in generate.ts makes seeded material.
 */
import { gzipSync } from 'node:zlib';
import type { Conventions } from '../../extension/engine/metrics/conventions';
import { csvWithBadByte, delimited, gzip, jsonLines, METRICS, parquet, parquetColumns, randomRows, runAndJudgments, type Row } from './generate';

export type Expectation =
  | { readonly error: string; readonly says?: RegExp }
  | { readonly rows: readonly Row[]; readonly conventions?: Partial<Conventions> }
  | { readonly means: Readonly<Record<string, number>>; readonly notes?: RegExp };

export interface HostileCase {
  readonly name: string;
  readonly files: Readonly<Record<string, Buffer | string>>;
  /** Arguments after `gainline`; result cases get `--format json --metrics METRICS` added. */
  readonly args: readonly string[];
  readonly expect: Expectation;
}

const HEADER = 'query,item,score,grade\n';
const rows = randomRows(11, 9);
const awkward = randomRows(12, 9, 'awkward');
const csv = (text: string) => Buffer.from(text, 'utf8');
const bytes = (...parts: (string | number[])[]) => Buffer.concat(parts.map((p) => (typeof p === 'string' ? Buffer.from(p, 'utf8') : Buffer.from(p))));
// Run files split at whitespace, so their ids have none.
const runRows = rows.map((r) => ({ ...r, query: r.query.replace(/ /g, '_') }));
const { run, judgments } = runAndJudgments(runRows);
const judgmentLines = judgments.toString('utf8').split('\n').filter((l) => l.trim() !== '');
const okGzip = gzipSync(delimited(rows));
// Every fourth row unjudged, the first among them, written without a grade key (as dumps write unjudged rows).
const unjudgedFirst = rows.map((r, i) => (i % 4 === 0 ? { ...r, grade: NaN } : r));
const gradeWhereJudged = Buffer.from(unjudgedFirst.map((r) => JSON.stringify({ query: r.query, item: r.item,
  ...(Number.isNaN(r.grade) ? {} : { grade: r.grade }), score: Number.isNaN(r.score) ? null : r.score })).join('\n') + '\n');

/** A large quote-free CSV with a bad byte near its end, read on several threads (--threads 3). */
const manyRows = randomRows(13, 3000);
// Fields first written after the lines JSON Lines take their fields from, on most later lines and anywhere
// on the line: plain, escaped, a digit key, nested values (counted in a note, not read).
const LATE_FIELDS = ['"shelf":"aisle 7"', '"st\\u006fck":{"bins":[1,null,{"x":"é"}]}', '"7":true', '"brand":"Kettle\\"wood"'];
const lateFields = Buffer.from(jsonLines(manyRows).toString('utf8').trimEnd().split('\n').map((line, i) => {
  if (i < 300 || i % 5 === 0) return line;
  const field = LATE_FIELDS[i % LATE_FIELDS.length]!;
  return i % 2 === 0 ? line.replace(/^\{/, `{${field},`) : line.replace(/\}$/, `,${field}}`);
}).join('\n') + '\n');
const manyCsv = delimited(manyRows);
const lateLine = manyCsv.toString('utf8').split('\n').length - 5;
const lateBad = (() => {
  const lines = manyCsv.toString('latin1').split('\n');
  lines[lateLine - 1] = lines[lateLine - 1]!.replace('sku-', 'sku-\xe8');
  return Buffer.from(lines.join('\n'), 'latin1');
})();

const seededBad = [101, 102, 103, 104, 105, 106].map((seed) => ({ seed, ...csvWithBadByte(seed) }));

export const CASES: readonly HostileCase[] = [
  // Empty and header-only files.
  { name: 'empty CSV', files: { 'e.csv': '' }, args: ['eval', 'e.csv'], expect: { error: 'e.csv', says: /empty/ } },
  { name: 'header-only CSV', files: { 'h.csv': HEADER }, args: ['eval', 'h.csv'], expect: { error: 'h.csv:2', says: /at least one data row/ } },
  { name: 'blank lines only JSON Lines', files: { 'b.jsonl': '\n\n  \n' }, args: ['eval', 'b.jsonl'], expect: { error: 'b.jsonl', says: /at least one row/ } },
  { name: 'empty gzip', files: { 'e.csv.gz': gzipSync(Buffer.alloc(0)) }, args: ['eval', 'e.csv.gz'], expect: { error: 'e.csv.gz', says: /empty/ } },
  { name: 'empty judgments file', files: { 'r.run': run, 'j.txt': '' }, args: ['eval', 'r.run', '--judgments', 'j.txt'],
    expect: { error: 'j.txt', says: /judgment/ } },

  // Results that must be right whatever the encoding details.
  { name: 'plain CSV', files: { 'd.csv': delimited(rows) }, args: ['eval', 'd.csv'], expect: { rows } },
  { name: 'CSV with BOM and CRLF', files: { 'd.csv': delimited(rows, { bom: true, crlf: true }) }, args: ['eval', 'd.csv'], expect: { rows } },
  { name: 'TSV', files: { 'd.tsv': delimited(rows, { delimiter: '\t' }) }, args: ['eval', 'd.tsv'], expect: { rows } },
  { name: 'quoted awkward ids (commas, quotes, edge spaces, 5 KB id, non-ASCII)', files: { 'a.csv': delimited(awkward) }, args: ['eval', 'a.csv'],
    expect: { rows: awkward } },
  { name: 'gzip CSV', files: { 'd.csv.gz': okGzip }, args: ['eval', 'd.csv.gz'], expect: { rows } },
  { name: 'JSON Lines with a grade key only on judged rows, the first line unjudged', files: { 'u.jsonl': gradeWhereJudged }, args: ['eval', 'u.jsonl'],
    expect: { rows: unjudgedFirst } },
  { name: 'JSON Lines with fields first written after line 300, anywhere on the line', files: { 'late.jsonl': lateFields }, args: ['eval', 'late.jsonl'],
    expect: { rows: manyRows } },
  { name: 'JSON Lines with awkward ids', files: { 'd.jsonl': jsonLines(awkward) }, args: ['eval', 'd.jsonl'], expect: { rows: awkward } },
  { name: 'run file + judgments', files: { 'r.run': run, 'j.txt': judgments }, args: ['eval', 'r.run', '--judgments', 'j.txt'], expect: { rows: runRows } },
  { name: 'Parquet', files: { 'd.parquet': parquet(rows) }, args: ['eval', 'd.parquet'], expect: { rows } },
  // Parts written over time: columns reordered, one added, the grade left out of the last part (its rows unjudged).
  { name: 'a folder of Parquet parts whose columns differ', files: { 'parts/part-0.parquet': parquetColumns(rows.slice(0, 14), ['query', 'item', 'score', 'grade']),
    'parts/part-1.parquet': parquetColumns(rows.slice(14, 28), ['grade', 'shelf', 'item', 'score', 'query']),
    'parts/part-2.parquet': parquetColumns(rows.slice(28), ['query', 'item', 'score']) },
  args: ['eval', 'parts'], expect: { rows: rows.map((r, i) => (i >= 28 ? { ...r, grade: NaN } : r)) } },
  { name: 'large CSV on three threads', files: { 'm.csv': manyCsv }, args: ['eval', 'm.csv', '--threads', '3'], expect: { rows: manyRows } },
  { name: 'non-finite scores count as missing', files: { 'n.csv': csv(`${HEADER}q,a,inf,1\nq,b,NaN,0\nq,c,1,2\nq,d,-inf,0\n`) }, args: ['eval', 'n.csv'],
    expect: { rows: [
      { query: 'q', item: 'a', score: NaN, grade: 1 }, { query: 'q', item: 'b', score: NaN, grade: 0 },
      { query: 'q', item: 'c', score: 1, grade: 2 }, { query: 'q', item: 'd', score: NaN, grade: 0 },
    ] } },

  // Encodings: never merge two ids, never guess.
  { name: 'ids differing only in a non-UTF-8 byte (q\\xE9, q\\xE8)', files: { 'l.csv': bytes(HEADER, 'q', [0xe9], ',a,1,1\nq', [0xe8], ',a,2,0\n') },
    args: ['eval', 'l.csv'], expect: { error: 'l.csv:2', says: /0xE9 .*not UTF-8/ } },
  ...seededBad.map(({ seed, bytes: b, line }): HostileCase => ({
    name: `seeded bad byte, seed ${seed} (line ${line})`, files: { 's.csv': b }, args: ['eval', 's.csv'], expect: { error: `s.csv:${line}` } })),
  ...seededBad.slice(0, 2).map(({ seed, bytes: b, line }): HostileCase => ({
    name: `seeded bad byte in gzip, seed ${seed}`, files: { 's.csv.gz': gzip(b) }, args: ['eval', 's.csv.gz'], expect: { error: `s.csv.gz:${line}` } })),
  { name: 'bad byte late in a large file read on three threads', files: { 'm.csv': lateBad }, args: ['eval', 'm.csv', '--threads', '3'],
    expect: { error: `m.csv:${lateLine}`, says: /0xE8/ } },
  { name: 'seeded bad byte on three threads', files: { 's.csv': seededBad[2]!.bytes }, args: ['eval', 's.csv', '--threads', '3'],
    expect: { error: `s.csv:${seededBad[2]!.line}` } },
  { name: 'the bad byte is shown, escaped, in the message', files: { 'l.csv': bytes(HEADER, 'q', [0xe9], ',a,1,1\n') }, args: ['eval', 'l.csv'],
    expect: { error: 'l.csv:2', says: /\(found "q<E9>,a,1,1"\)$/ } },
  { name: 'bad byte in an SVMlight docid comment', files: { 'd.svm': bytes('1 qid:1 1:0.5 # docid = a\n0 qid:1 1:0.2 # docid = b', [0xe9], '\n'), 'd.scores': '0.5\n0.2\n' },
    args: ['eval', 'd.svm', '--scores', 'd.scores'], expect: { error: 'd.svm:2' } },
  { name: 'bad byte in an SVMlight scores file', files: { 'd.svm': '1 qid:1 1:0.5\n0 qid:1 1:0.2\n', 'd.scores': bytes('0.5\n', [0xfe], '0.2\n') },
    args: ['eval', 'd.svm', '--scores', 'd.scores'], expect: { error: 'd.scores:2' } },
  { name: 'SVMlight with scores', files: { 'd.svm': '2 qid:a 1:0.5 # docid = x\n0 qid:a 1:0.2 # docid = y\n1 qid:b 1:1 # docid = z\n0 qid:b 1:1 # docid = w\n', 'd.scores': '0.1\n0.9\n3\n3\n' },
    args: ['eval', 'd.svm', '--scores', 'd.scores'], expect: { rows: [
      { query: 'a', item: 'x', grade: 2, score: 0.1 }, { query: 'a', item: 'y', grade: 0, score: 0.9 },
      { query: 'b', item: 'z', grade: 1, score: 3 }, { query: 'b', item: 'w', grade: 0, score: 3 },
    ] } },
  { name: 'bad byte in a TSV', files: { 't.tsv': bytes('query\titem\tscore\tgrade\nq\ta\t1\t1\nq\tb', [0xff], '\t2\t0\n') }, args: ['eval', 't.tsv'],
    expect: { error: 't.tsv:3' } },
  { name: 'NUL byte inside an id', files: { 'z.csv': bytes(HEADER, 'q,a,1,1\nq,b', [0], 'c,2,0\n') }, args: ['eval', 'z.csv'], expect: { error: 'z.csv:3', says: /NUL/ } },
  { name: 'UTF-16 with byte-order mark', files: { 'u.csv': Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(`${HEADER}q,a,1,1\n`, 'utf16le')]) },
    args: ['eval', 'u.csv'], expect: { error: 'u.csv:1', says: /UTF-16/ } },
  { name: 'UTF-16 without byte-order mark', files: { 'u.csv': Buffer.from(`${HEADER}q,a,1,1\n`, 'utf16le') }, args: ['eval', 'u.csv'],
    expect: { error: 'u.csv:1', says: /UTF-16/ } },
  { name: 'bad byte in JSON Lines', files: { 'j.jsonl': bytes('{"query":"q","item":"a","score":1,"grade":1}\n{"query":"q', [0xe9], '","item":"b","score":2,"grade":0}\n') },
    args: ['eval', 'j.jsonl'], expect: { error: 'j.jsonl:2' } },
  { name: 'lone surrogate escape in JSON Lines', files: { 'j.jsonl': '{"query":"q\\ud800","item":"a","score":1,"grade":1}\n{"query":"q\\ud801","item":"a","score":1,"grade":0}\n' },
    args: ['eval', 'j.jsonl'], expect: { error: 'j.jsonl:1', says: /surrogate/ } },
  { name: 'lone surrogate escape in a JSON Lines segment value', files: { 'j.jsonl': '{"query":"q","item":"a","score":1,"grade":1,"locale":"de"}\n{"query":"q","item":"b","score":1,"grade":0,"locale":"\\udc00"}\n' },
    args: ['eval', 'j.jsonl'], expect: { error: 'j.jsonl:2', says: /'locale'/ } },
  { name: 'bad byte in a run file', files: { 'r.run': bytes('q Q0 a 1 2 t\nq Q0 b', [0xe9], ' 2 1 t\n'), 'j.txt': 'q 0 a 1\n' },
    args: ['eval', 'r.run', '--judgments', 'j.txt'], expect: { error: 'r.run:2' } },
  { name: 'bad byte in a judgments file', files: { 'r.run': 'q Q0 a 1 2 t\n', 'j.txt': bytes('q 0 a 1\nq 0 b 0\nq 0 c', [0xc0, 0xaf], ' 2\n') },
    args: ['eval', 'r.run', '--judgments', 'j.txt'], expect: { error: 'j.txt:3' } },
  { name: 'Parquet bytes that are not UTF-8', files: { 'p.parquet': parquet(rows.slice(0, 4), rows.slice(0, 4).map((_, i) => (i === 2 ? Uint8Array.from([0x71, 0xe9]) : Uint8Array.from([0x71])))) },
    args: ['eval', 'p.parquet'], expect: { error: 'p.parquet', says: /row 3/ } },

  { name: 'Parquet with an infinite grade names the row', files: { 'p.parquet': parquet(rows.slice(0, 5).map((r, i) => (i === 3 ? { ...r, grade: Infinity } : r))) },
    args: ['eval', 'p.parquet'], expect: { error: 'p.parquet', says: /column 'grade' in row 4/ } },

  // Quoting and huge lines.
  { name: 'unterminated quote', files: { 'q.csv': `${HEADER}q,a,1,1\n"q,b,2,0\n` }, args: ['eval', 'q.csv'], expect: { error: 'q.csv:3', says: /closing quote/ } },
  { name: 'text after a closing quote', files: { 'q.csv': `${HEADER}"q"x,a,1,1\n` }, args: ['eval', 'q.csv'], expect: { error: 'q.csv:2' } },
  { name: 'a 3 MB id on one line', files: { 'w.csv': `${HEADER}${'w'.repeat(3 << 20)},a,1,1\nq,b,2,0\n` }, args: ['eval', 'w.csv'],
    expect: { rows: [{ query: 'w'.repeat(3 << 20), item: 'a', score: 1, grade: 1 }, { query: 'q', item: 'b', score: 2, grade: 0 }] } },
  { name: 'a bad byte after a 3 MB id', files: { 'w.csv': bytes(HEADER, 'q,a,1,1\n', 'w'.repeat(3 << 20), [0xe9], ',b,2,0\n') }, args: ['eval', 'w.csv'],
    expect: { error: 'w.csv:3' } },
  { name: 'a quoted id holding a line break', files: { 'n.csv': `${HEADER}"drill\nbits",a,1,1\n"drill\nbits",b,2,0\nq,c,1,2\n` }, args: ['eval', 'n.csv'],
    expect: { rows: [{ query: 'drill\nbits', item: 'a', score: 1, grade: 1 }, { query: 'drill\nbits', item: 'b', score: 2, grade: 0 }, { query: 'q', item: 'c', score: 1, grade: 2 }] } },
  { name: 'line numbers count the line break inside quotes', files: { 'n.csv': `${HEADER}"drill\nbits",a,1,1\nq,b,2,x\n` }, args: ['eval', 'n.csv'],
    expect: { error: 'n.csv:4', says: /column 'grade'/ } },
  { name: 'repeated (query, item) rows: the first one counts', files: { 'r.csv': `${HEADER}q,a,1,0\nq,b,2,1\nq,a,3,2\nq,c,0.5,1\n` }, args: ['eval', 'r.csv'],
    expect: { rows: [{ query: 'q', item: 'a', score: 1, grade: 0 }, { query: 'q', item: 'b', score: 2, grade: 1 }, { query: 'q', item: 'a', score: 3, grade: 2 }, { query: 'q', item: 'c', score: 0.5, grade: 1 }] } },
  { name: 'run file with unjudged items (grade 0)', files: { 'r.run': 'q Q0 a 1 3 t\nq Q0 b 2 2 t\nq Q0 c 3 1 t\n', 'j.txt': 'q 0 a 0\nq 0 c 2\n' },
    args: ['eval', 'r.run', '--judgments', 'j.txt'],
    expect: { rows: [{ query: 'q', item: 'a', score: 3, grade: 0 }, { query: 'q', item: 'b', score: 2, grade: NaN }, { query: 'q', item: 'c', score: 1, grade: 2 }] } },
  { name: '--columns naming a column the header lacks', files: { 'd.csv': delimited(rows) }, args: ['eval', 'd.csv', '--columns', 'query=sid'],
    expect: { error: 'd.csv:1', says: /sid/ } },
  { name: 'too many fields', files: { 'f.csv': `${HEADER}q,a,1,1\nq,b,2,0,extra\n` }, args: ['eval', 'f.csv'], expect: { error: 'f.csv:3', says: /fields/ } },

  // Bad grades and gains.
  { name: 'grade 2000 under exponential gain', files: { 'g.csv': `${HEADER}q,a,3,2000\nq,b,2,0\n` }, args: ['eval', 'g.csv'],
    expect: { error: 'g.csv:2', says: /--gain linear/ } },
  { name: 'compare: grade 2000 in run B', files: { 'a.csv': `${HEADER}q,a,3,2\nq,b,2,0\n`, 'b.csv': `${HEADER}q,a,3,2\nq,b,2,2000\n` },
    args: ['compare', 'a.csv', 'b.csv'], expect: { error: 'b.csv:3', says: /--gain linear/ } },
  { name: 'grade 1024 under exponential gain (2^1024 is the first infinite power)', files: { 'g.csv': `${HEADER}q,a,3,1\nq,b,2,1024\n` }, args: ['eval', 'g.csv'],
    expect: { error: 'g.csv:3' } },
  { name: 'grade 1000 under exponential gain overflows the sum over 4000 items', files: { 'g.csv': HEADER + 'q,top,9,1000\n' + Array.from({ length: 4000 }, (_, i) => `q,i${i},1,1000\n`).join('') },
    args: ['eval', 'g.csv'], expect: { error: 'g.csv:2', says: /too large to sum/ } },
  // ERR: R(2000) = 1 − 2^−2000 = 1 and R(1) = 2^−2000 ≈ 0 (Chapelle et al. 2009); NDCG@10 linear: q1 ideal, q2 (0 above 1) 0.5/0.7925 → hand-derived.
  { name: 'grade 2000 under linear gain: ERR with 2^gmax normalisation stays finite', files: { 'g.csv': `${HEADER}q1,a,3,2000\nq1,b,2,0\nq2,a,2,0\nq2,b,1,1\n` },
    args: ['eval', 'g.csv', '--gain', 'linear'],
    expect: { means: { 'ndcg@10': (1 + 1 / Math.log2(3)) / 2, 'err@10': 0.5 }, notes: /gain: exponential +n\/a/ } },
  { name: 'huge --max-grade keeps ERR finite', files: { 'd.csv': delimited(rows) }, args: ['eval', 'd.csv', '--max-grade', '5000'],
    expect: { means: { 'err@10': 0 } } },
  { name: 'grade above --max-grade', files: { 'd.csv': `${HEADER}q,a,1,1\nq,b,2,4\n` }, args: ['eval', 'd.csv', '--max-grade', '3'], expect: { error: 'd.csv:3', says: /maximum grade 3/ } },
  { name: 'linear grades near the largest double overflow their sum', files: { 'g.csv': `${HEADER}q,a,1,1e308\nq,b,2,1e308\n` }, args: ['eval', 'g.csv', '--gain', 'linear'],
    expect: { error: 'g.csv:2', says: /too large to sum/ } },
  { name: 'gain map without the grade of a row', files: { 'g.csv': `${HEADER}q,a,1,1\nq,b,2,2\n` }, args: ['eval', 'g.csv', '--gain', 'map:0=0,1=1'],
    expect: { error: 'g.csv:3', says: /grade 2/ } },
  { name: 'gain map without grade 0 for an unjudged run item', files: { 'r.run': 'q Q0 a 1 2 t\nq Q0 b 2 1 t\n', 'j.txt': 'q 0 a 1\n' },
    args: ['eval', 'r.run', '--judgments', 'j.txt', '--gain', 'map:1=1'], expect: { error: 'r.run:2', says: /grade 0/ } },
  { name: 'gain map with a gain beyond a double sum', files: { 'g.csv': `${HEADER}q,a,1,1\nq,b,2,2\n` }, args: ['eval', 'g.csv', '--gain', 'map:0=0,1=1,2=1e308'],
    expect: { error: 'g.csv:3' } },
  { name: 'negative grade under exponential gain', files: { 'g.csv': `${HEADER}q,a,1,1\nq,b,2,-1\n` }, args: ['eval', 'g.csv', '--metrics', 'ndcg@10'],
    expect: { error: 'g.csv:3', says: />= 0/ } },
  { name: 'infinite grade', files: { 'g.csv': `${HEADER}q,a,1,inf\n` }, args: ['eval', 'g.csv'], expect: { error: 'g.csv:2', says: /finite number in column 'grade'/ } },
  { name: 'grade that is not a number', files: { 'g.csv': `${HEADER}q,a,1,two\n` }, args: ['eval', 'g.csv'], expect: { error: 'g.csv:2', says: /two/ } },
  { name: 'gain map giving every relevant grade 0 leaves NDCG undefined, with a note', files: { 'g.csv': `${HEADER}q,a,1,1\nq,b,2,0\nr,a,1,2\nr,b,2,0\n` },
    args: ['eval', 'g.csv', '--gain', 'map:0=0,1=0,2=1'], expect: { means: { 'ndcg@10': 1 / Math.log2(3) }, notes: /ndcg@10 is undefined for 1 query that is not skipped/ } },

  // Broken gzip.
  { name: 'gzip with a wrong checksum', files: { 'c.csv.gz': Buffer.concat([okGzip.subarray(0, -8), Buffer.from([okGzip[okGzip.length - 8]! ^ 1]), okGzip.subarray(-7)]) },
    args: ['eval', 'c.csv.gz'], expect: { error: 'c.csv.gz', says: /corrupt gzip/ } },
  { name: 'gzip magic then random bytes', files: { 'c.csv.gz': Buffer.concat([Buffer.from([0x1f, 0x8b]), Buffer.from(Array.from({ length: 300 }, (_, i) => (i * 73 + 11) & 255))]) },
    args: ['eval', 'c.csv.gz'], expect: { error: 'c.csv.gz', says: /corrupt gzip/ } },
  { name: 'truncated gzip', files: { 't.csv.gz': okGzip.subarray(0, Math.floor(okGzip.length / 2)) }, args: ['eval', 't.csv.gz'],
    expect: { error: 't.csv.gz', says: /truncated or corrupt/ } },

  // Mismatched judgments and missing companions.
  { name: 'judgments sharing no query with the run', files: { 'r.run': run, 'j.txt': 'other 0 a 1\n' }, args: ['eval', 'r.run', '--judgments', 'j.txt'],
    expect: { error: 'j.txt', says: /sharing queries/ } },
  { name: 'judgments line with three fields', files: { 'r.run': run, 'j.txt': 'q 0 a 1\nq 0 b\n' }, args: ['eval', 'r.run', '--judgments', 'j.txt'],
    expect: { error: 'j.txt:2' } },
  { name: 'a judged pair given twice', files: { 'r.run': run, 'j.txt': `${judgmentLines.join('\n')}\n${judgmentLines[0]}\n` },
    args: ['eval', 'r.run', '--judgments', 'j.txt'], expect: { error: `j.txt:${judgmentLines.length + 1}`, says: /judged once/ } },
  { name: 'a judgments table without a grade column', files: { 'd.csv': delimited(rows), 'j.csv': 'query,item\na,b\n' },
    args: ['eval', 'd.csv', '--judgments', 'j.csv'], expect: { error: 'j.csv:1', says: /label/ } },
  { name: '--judgments-columns naming a missing column', files: { 'd.csv': delimited(rows), 'j.csv': 'query,item,grade\na,b,1\n' },
    args: ['eval', 'd.csv', '--judgments', 'j.csv', '--judgments-columns', 'label=stars'], expect: { error: 'j.csv:1', says: /stars/ } },
  { name: 'run file without --judgments', files: { 'r.run': run }, args: ['eval', 'r.run', '--input-format', 'run'], expect: { error: 'r.run', says: /--judgments/ } },

  // Bad options: each names the option.
  ...([
    ['--permutations', '-5'], ['--permutations', '0'], ['--permutations', '1.5'], ['--permutations', 'NaN'], ['--permutations', '1e12'],
    ['--bootstrap', '-1'], ['--seed', '-1'], ['--seed', '4294967296'], ['--tie-tolerance', 'NaN'], ['--tie-tolerance', '-0.1'],
    ['--top', '-2'], ['--fail-if-worse', '0'],
  ] as const).map(([option, value]): HostileCase => ({
    name: `compare ${option} ${value}`, files: { 'd.csv': delimited(rows) }, args: ['compare', 'd.csv', 'd.csv', option, value], expect: { error: option },
  })),
  ...([
    ['--worst', '-1'], ['--worst', '2.5'], ['--max-grade', '-3'], ['--max-grade', 'Infinity'], ['--relevant-from', 'NaN'],
    ['--rbp-persistence', '1'], ['--rbp-persistence', '-0.5'], ['--threads', '0'], ['--threads', '1e9'], ['--metrics', 'ndcg@0'],
    ['--metrics', 'ndcg@-3'], ['--gain', 'map:1=x'], ['--gain', 'map:1=1,1=2'], ['--ties', 'random'], ['--format', 'xml'], ['--input-format', 'xls'],
  ] as const).map(([option, value]): HostileCase => ({
    name: `eval ${option} ${value}`, files: { 'd.csv': delimited(rows) }, args: ['eval', 'd.csv', option, value], expect: { error: option },
  })),
];

export { METRICS };
