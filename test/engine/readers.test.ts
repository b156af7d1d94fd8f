/**
 * CSV / TSV reading: roles, quoting, line ends, offsets, gzip, and every bad-input case.
 * Expected values are derived by hand from the small files written in each test.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { gzipSync } from 'node:zlib';
import { afterAll, describe, expect, it } from 'vitest';
import { CancelledError, InputError } from '../../extension/engine/errors';
import { parseColumnRoles, readDump } from '../../extension/engine/readers/index';
import { configureEngine } from '../../extension/engine/config';
import { textSizeHint } from '../../extension/engine/readers/source';
import { plainRows, TempDir } from './fixtures/readers/tempFiles';

const tmp = new TempDir();
afterAll(() => tmp.remove());

const STORE_CSV = [
  'query_id,item_id,label,score,locale,device',
  'cordless drill 18v,sku-100,2,0.91,en-GB,mobile',
  'cordless drill 18v,sku-101,0,0.35,en-GB,mobile',
  'wood screws 4x40,sku-200,1,-1.5,de-DE,desktop',
  '',
].join('\n');

async function rejection(p: Promise<unknown>): Promise<InputError> {
  const err = await p.then(() => undefined, (e: unknown) => e);
  expect(err).toBeInstanceOf(InputError);
  return err as InputError;
}

describe('CSV with a header row', () => {
  it('finds roles from header names and keeps other columns as segments', async () => {
    const path = tmp.file('store.csv', STORE_CSV);
    const dump = await readDump(path);
    expect(dump.format).toBe('csv');
    expect(dump.rowCount).toBe(3);
    expect(dump.queries.size).toBe(2);
    expect(dump.items.size).toBe(3);
    expect(Array.from(dump.query)).toEqual([0, 0, 1]);
    expect(Array.from(dump.label)).toEqual([2, 0, 1]);
    expect(Array.from(dump.score)).toEqual([0.91, 0.35, -1.5]);
    expect(dump.segments.map((s) => s.name)).toEqual(['locale', 'device']);
    expect(plainRows(dump).map((r) => r.segments)).toEqual([
      { locale: 'en-GB', device: 'mobile' },
      { locale: 'en-GB', device: 'mobile' },
      { locale: 'de-DE', device: 'desktop' },
    ]);
    expect(Array.from(dump.line)).toEqual([2, 3, 4]);
    expect(dump.stamp.size).toBe(Buffer.byteLength(STORE_CSV));
    expect(dump.notes.unjudgedRows).toBe(0);
    expect(dump.notes.missingScoreRows).toBe(0);
  });

  it('byte offsets point at the first byte of each row', async () => {
    const path = tmp.file('offsets.csv', STORE_CSV);
    const dump = await readDump(path);
    const bytes = readFileSync(path);
    for (const row of plainRows(dump)) {
      expect(bytes.toString('utf8', row.offset).startsWith(`${row.query},${row.item},`)).toBe(true);
    }
  });

  it('reads quoted fields with delimiters, doubled quotes and newlines, CRLF and a BOM', async () => {
    const text = '\uFEFFqid,"Doc_ID",Relevance,Prediction,note\r\n'
      + 'q1,"hammer, claw","2","0.5","says ""sturdy"""\r\n'
      + 'q1,"saw\r\nhand",0,0.25,plain\r\n'
      + '"q2",plain,1,1e-3,"multi\nline"\r\n';
    const path = tmp.file('quoted.csv', text);
    const dump = await readDump(path);
    const rows = plainRows(dump);
    expect(rows.map((r) => [r.query, r.item, r.label, r.score, r.segments['note']])).toEqual([
      ['q1', 'hammer, claw', 2, 0.5, 'says "sturdy"'],
      ['q1', 'saw\r\nhand', 0, 0.25, 'plain'],
      ['q2', 'plain', 1, 0.001, 'multi\nline'],
    ]);
    // Line 3 holds row 2, whose quoted item spans lines 3-4; row 3 starts on line 5.
    expect(rows.map((r) => r.line)).toEqual([2, 3, 5]);
    const bytes = readFileSync(path);
    expect(bytes.subarray(rows[0]!.offset, rows[0]!.offset + 4).toString()).toBe('q1,"');
    expect(bytes.subarray(rows[2]!.offset, rows[2]!.offset + 5).toString()).toBe('"q2",');
  });

  it('reads TSV by extension and by content', async () => {
    const tsv = 'query\tdoc_id\tgrade\tpred\nq1\ta,b\t3\t0.1\n';
    for (const name of ['x.tsv', 'x.txt']) {
      const dump = await readDump(tmp.file(name, tsv));
      expect(dump.format).toBe('tsv');
      expect(plainRows(dump).map((r) => [r.query, r.item, r.label, r.score])).toEqual([['q1', 'a,b', 3, 0.1]]);
    }
  });

  it('takes explicit columns over header names', async () => {
    const path = tmp.file('explicit.csv', 'sid,pid,grade_text,grade,p,score\ns1,p1,good,2,0.7,99\n');
    const dump = await readDump(path, { columns: parseColumnRoles('query=sid,item=pid,label=grade,score=p') });
    expect(plainRows(dump).map((r) => [r.query, r.item, r.label, r.score])).toEqual([['s1', 'p1', 2, 0.7]]);
    expect(dump.segments.map((s) => s.name)).toEqual(['grade_text', 'score']);
  });

  it('uses the rank column when there is no score, and notes it', async () => {
    const dump = await readDump(tmp.file('ranked.csv', 'qid,item_id,label,rank\nq,a,1,1\nq,b,0,2\n'));
    expect(Array.from(dump.score)).toEqual([-1, -2]);
    expect(dump.notes.messages.join(' ')).toMatch(/ranked by 'rank'/);
    const both = await readDump(tmp.file('both.csv', 'qid,item_id,label,rank,score\nq,a,1,1,0.2\n'));
    expect(Array.from(both.score)).toEqual([0.2]);
    expect(both.notes.messages.join(' ')).toMatch(/rank column 'rank' is ignored/);
  });

  it('stores NaN for empty labels and for empty, NaN or infinite scores, and counts them', async () => {
    const dump = await readDump(tmp.file('gaps.csv', 'qid,item_id,label,score\nq,a,,1\nq,b,1,\nq,c,2,NaN\nq,d,0,inf\nq,e,1,-Infinity\n'));
    expect(Array.from(dump.label)).toEqual([NaN, 1, 2, 0, 1]);
    expect(Array.from(dump.score)).toEqual([1, NaN, NaN, NaN, NaN]);
    expect(dump.notes.unjudgedRows).toBe(1);
    expect(dump.notes.missingScoreRows).toBe(4);
  });

  it('reads a gzip-compressed file to the same result and detects truncation', async () => {
    const plain = await readDump(tmp.file('plain.csv', STORE_CSV));
    const zipped = gzipSync(Buffer.from(STORE_CSV));
    const gz = await readDump(tmp.file('store.csv.gz', zipped));
    expect(plainRows(gz)).toEqual(plainRows(plain));
    const big = 'query_id,item_id,label,score\n' + Array.from({ length: 20000 }, (_, i) => `q${i >> 6},sku-${i},${i % 3},${i / 7}`).join('\n');
    const bigZip = gzipSync(Buffer.from(big));
    const cut = tmp.file('cut.csv.gz', bigZip.subarray(0, bigZip.length >> 1));
    expect((await rejection(readDump(cut))).message).toMatch(/truncated or corrupt gzip/);
  });

  it("sizes a gzip file's columns by the text size its trailer records (RFC 1952's ISIZE), never above the text", async () => {
    const text = 'query_id,item_id,label,score\n' + Array.from({ length: 70_000 }, (_, i) => `q${i >> 6},sku-${i},${i % 3},${i / 7}`).join('\n') + '\n';
    const zipped = gzipSync(Buffer.from(text));
    expect(await textSizeHint(tmp.file('one-member.csv.gz', zipped))).toBe(Buffer.byteLength(text));
    expect(await textSizeHint(tmp.file('plain-size.csv', text))).toBe(Buffer.byteLength(text));
    // Two members (as concatenated gzip files are): the last member's size only, so the compressed size when larger.
    const tail = gzipSync(Buffer.from('q9,sku-x,1,0.5\n'));
    const twoMembers = Buffer.concat([zipped, tail]);
    expect(await textSizeHint(tmp.file('two-members.csv.gz', twoMembers))).toBe(twoMembers.length);
    // A large read on one thread keeps its columns in shared memory, which scoring threads read without a copy.
    const dump = await readDump(tmp.file('large.csv.gz', zipped));
    expect(dump.rowCount).toBe(70_000);
    expect(dump.label.buffer).toBeInstanceOf(SharedArrayBuffer);
    expect(dump.score.buffer).toBeInstanceOf(SharedArrayBuffer);
    expect(dump.itemKey!.buffer).toBeInstanceOf(SharedArrayBuffer);
  });
});

describe('bad input names the file, the line and what was expected', () => {
  it('missing roles', async () => {
    const path = tmp.file('missing.csv', 'qid,item_id,weight\nq,a,1\n');
    const err = await rejection(readDump(path));
    expect(err.message).toContain(`${path}:1:`);
    expect(err.message).toMatch(/label, score/);
    expect(err.message).toContain('qid,item_id,weight');
  });

  it('ambiguous roles', async () => {
    const err = await rejection(readDump(tmp.file('ambiguous.csv', 'qid,session_id,item_id,label,score\nq,s,a,1,2\n')));
    expect(err.message).toMatch(/'qid' and 'session_id' both fit/);
    expect(err.line).toBe(1);
  });

  it('plain item and doc headers count as the item column, and both at once are ambiguous', async () => {
    const dump = await readDump(tmp.file('plain-item.csv', 'query,item,grade,score\nq1,a,1,0.5\nq1,b,0,0.3\n'));
    expect([dump.items.get(dump.item[0]!), dump.items.get(dump.item[1]!)]).toEqual(['a', 'b']);
    const err = await rejection(readDump(tmp.file('item-and-doc.csv', 'query,item,doc,grade,score\nq,a,b,1,2\n')));
    expect(err.message).toMatch(/'item' and 'doc' both fit/);
  });

  it('an explicit column that does not exist', async () => {
    const err = await rejection(readDump(tmp.file('nocol.csv', STORE_CSV), { columns: { score: 'p' } }));
    expect(err.message).toMatch(/a column named 'p' for the score/);
  });

  it('non-numeric labels and scores', async () => {
    const path = tmp.file('badnum.csv', 'qid,item_id,label,score\nq,a,1,0.5\nq,b,high,0.5\n');
    const err = await rejection(readDump(path));
    expect(err.message).toBe(`${path}:3: expected a finite number in column 'label' (found "high")`);
    const path2 = tmp.file('badscore.csv', 'qid,item_id,label,score\nq,a,1,0x1F\n');
    expect((await rejection(readDump(path2))).message).toBe(`${path2}:2: expected a number in column 'score' (found "0x1F")`);
  });

  it('rows with the wrong number of fields', async () => {
    const path = tmp.file('fields.csv', 'qid,item_id,label,score\nq,a,1,0.5\nq,b,1\n');
    const err = await rejection(readDump(path));
    expect(err.line).toBe(3);
    expect(err.message).toMatch(/4 fields as in the header, not 3/);
  });

  it('an empty file and a header without rows', async () => {
    expect((await rejection(readDump(tmp.file('empty.csv', '')))).message).toMatch(/empty/);
    const err = await rejection(readDump(tmp.file('header.csv', 'qid,item_id,label,score\n')));
    expect(err.message).toMatch(/at least one data row/);
  });

  it('binary junk: NUL bytes or invalid UTF-8', async () => {
    const nul = await rejection(readDump(tmp.file('nul.csv', Buffer.from([0x71, 0x69, 0x64, 0x00, 0x2c, 0x61]))));
    expect(nul.message).toMatch(/NUL bytes: binary data, not a text dump/);
    const latin = await rejection(readDump(tmp.file('bad-utf8.csv', Buffer.from([0x71, 0x2c, 0xff, 0xfe, 0x2c, 0x0a]))));
    // A stray byte in otherwise plain text is named with its line (one text policy for every reader).
    expect(latin.message).toMatch(/bad-utf8\.csv:1: expected UTF-8 text .*byte 0xFF at byte 3 of the line is not UTF-8/);
  });

  it('an unterminated quote', async () => {
    const err = await rejection(readDump(tmp.file('quote.csv', 'qid,item_id,label,score\nq,"open,1,2\n')));
    expect(err.message).toMatch(/closing quote/);
    expect(err.line).toBe(2);
  });

  it('a file that changes while it is read', async () => {
    const rows = Array.from({ length: 5000 }, (_, i) => `q${i >> 4},sku-${i},${i % 4},${i}`).join('\n');
    const path = tmp.file('changing.csv', `query_id,item_id,label,score\n${rows}\n`);
    const saved = configureEngine({ tuning: { plainChunkBytes: 4096 } });
    try {
      let rewritten = false;
      const err = await rejection(readDump(path, {
        threads: 1,
        onProgress: () => {
          if (!rewritten) {
            rewritten = true;
            writeFileSync(path, `query_id,item_id,label,score\n${rows}\nq,x,1,1\n`);
          }
        },
      }));
      expect(rewritten).toBe(true);
      expect(err.message).toMatch(/the file changed while it was read; read again/);
    } finally {
      configureEngine(saved);
    }
  });
});

describe('progress and cancellation', () => {
  it('reports increasing fractions ending at 1, and stops with CancelledError when aborted', async () => {
    const rows = Array.from({ length: 5000 }, (_, i) => `q${i >> 4},sku-${i},${i % 4},${i}`).join('\n');
    const path = tmp.file('progress.csv', `query_id,item_id,label,score\n${rows}\n`);
    const saved = configureEngine({ tuning: { plainChunkBytes: 8192 } });
    try {
      const seen: number[] = [];
      await readDump(path, { onProgress: (f) => seen.push(f) });
      expect(seen.length).toBeGreaterThan(3);
      expect(seen.every((f, i) => f >= 0 && f <= 1 && (i === 0 || f >= seen[i - 1]!))).toBe(true);
      expect(seen.at(-1)).toBe(1);

      const controller = new AbortController();
      const err = await readDump(path, { signal: controller.signal, onProgress: (f) => f > 0.2 && controller.abort() })
        .then(() => undefined, (e: unknown) => e);
      expect(err).toBeInstanceOf(CancelledError);
      const before = new AbortController();
      before.abort();
      await expect(readDump(path, { signal: before.signal })).rejects.toBeInstanceOf(CancelledError);
    } finally {
      configureEngine(saved);
    }
  });
});

describe('parseColumnRoles', () => {
  it('parses role=column pairs', () => {
    expect(parseColumnRoles('query=sid, item=pid,label=grade,score=p,rank=pos')).toEqual({ query: 'sid', item: 'pid', label: 'grade', score: 'p', rank: 'pos' });
  });
  it.each(['', 'query', 'colour=red', 'query=', 'query=a,query=b'])('rejects %j', (text) => {
    expect(() => parseColumnRoles(text)).toThrow(InputError);
  });
});

describe('columns of no role skipped (ColumnRoles.others)', () => {
  // The command line's report reads no segment columns unless it shows them: delimited text then gives the
  // same rows, ids, grades and scores as a full read, without segments.
  it('CSV reads the same but for its segments', async () => {
    const full = await readDump('demo/runs/model-a.csv');
    const lean = await readDump('demo/runs/model-a.csv', { columns: { others: 'skipped' } });
    expect(full.segments.length).toBeGreaterThan(0);
    expect(lean.segments).toHaveLength(0);
    expect(lean.rowCount).toBe(full.rowCount);
    for (const key of ['query', 'label', 'score', 'line', 'offset'] as const) expect(Array.from(lean[key]), key).toEqual(Array.from(full[key]));
    expect(Array.from(lean.itemKey!)).toEqual(Array.from(full.itemKey!));
    expect(lean.notes).toEqual(full.notes);
  });

  // JSON Lines checks the fields it does not keep as it would check a segment's values (the test below), and
  // reads the same but for its segments.
  it('JSON Lines reads the same but for its segments', async () => {
    const full = await readDump('demo/runs/model-a.jsonl.gz');
    const lean = await readDump('demo/runs/model-a.jsonl.gz', { columns: { others: 'skipped' } });
    expect(full.segments.length).toBeGreaterThan(0);
    expect(lean.segments).toHaveLength(0);
    for (const key of ['query', 'label', 'score', 'line', 'offset'] as const) expect(Array.from(lean[key]), key).toEqual(Array.from(full[key]));
    expect(Array.from(lean.itemKey!)).toEqual(Array.from(full.itemKey!));
    expect(lean.notes).toEqual(full.notes);
  });

  // Parquet checks a value as it reads it: skipping a column would let a bad value through (test/hostile has
  // one), so it reads every column either way.
  it.each(['demo/runs/model-b.parquet'])('%s reads every column all the same', async (path) => {
    const full = await readDump(path);
    const asked = await readDump(path, { columns: { others: 'skipped' } });
    expect(full.segments.length).toBeGreaterThan(0);
    expect(asked.segments.map((s) => s.name)).toEqual(full.segments.map((s) => s.name));
    asked.segments.forEach((s, k) => expect(Array.from(s.ofRow)).toEqual(Array.from(full.segments[k]!.ofRow)));
  });

  it('a bad value in a column of no role fails a JSON Lines read whether or not the others are skipped', async () => {
    const path = tmp.file('skip-surrogate.jsonl', '{"query":"q","item":"a","score":1,"grade":1,"locale":"de"}\n{"query":"q","item":"b","score":1,"grade":0,"locale":"\\udc00"}\n');
    await expect(readDump(path)).rejects.toThrow(/'locale'/);
    await expect(readDump(path, { columns: { others: 'skipped' } })).rejects.toThrow(/'locale'/);
  });
});
