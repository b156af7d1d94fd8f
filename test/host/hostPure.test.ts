/** The host's pure pieces: webview page and policy, export formatting, dump sources. */
import { mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { EARLY_MESSAGES, contentSecurityPolicy, makeNonce, webviewHtml } from '../../extension/host/webviewHtml';
import { formatExport, formatHeadline, suggestedFileName } from '../../extension/host/exportTable';
import { findJudgmentCandidates, isTextual, needsJudgments, sourceFor } from '../../extension/host/sources';
import { readConfig } from '../../extension/host/config';

describe('webview page', () => {
  const page = webviewHtml({
    cspSource: 'https://file+.vscode-resource.example',
    scriptUri: 'https://file+.vscode-resource.example/ext/dist/webview.js',
    codiconCssUri: 'https://file+.vscode-resource.example/ext/dist/codicons/codicon.css',
    mode: 'single',
    title: 'run <a>.csv',
    nonce: 'abc123',
  });

  it('allows scripts only with the nonce, and nothing inline without it', () => {
    const policy = /http-equiv="Content-Security-Policy" content="([^"]*)"/.exec(page)![1]!;
    const directives = Object.fromEntries(policy.split('; ').map((d) => [d.split(' ')[0], d.split(' ').slice(1)]));
    expect(directives['default-src']).toEqual(["'none'"]);
    expect(directives['script-src']).toEqual(["'nonce-abc123'"]);
    expect(policy).not.toContain('unsafe-inline');
    expect(policy).not.toContain('unsafe-eval');
    expect(directives['style-src']).toContain("'nonce-abc123'");
    // Every script element carries the nonce.
    const scripts = page.match(/<script[^>]*>/g)!;
    expect(scripts).toHaveLength(2);
    for (const script of scripts) expect(script).toContain('nonce="abc123"');
  });

  it('keeps the messages that arrive before the bundle has run, and only static code is inline', () => {
    const inline = /<script nonce="abc123">([^<]*)<\/script>/.exec(page)![1]!;
    expect(inline).toBe(EARLY_MESSAGES);
    // The inline script comes first, so it listens before the bundle is fetched.
    expect(page.indexOf(EARLY_MESSAGES)).toBeLessThan(page.indexOf('dist/webview.js'));
    // Run it on a stand-in window: messages are kept in order until the app takes them, then ignored.
    const listeners: ((e: { data: unknown }) => void)[] = [];
    const win: Record<string, unknown> = {
      addEventListener: (_: string, f: (e: { data: unknown }) => void) => listeners.push(f),
      removeEventListener: (_: string, f: (e: { data: unknown }) => void) => listeners.splice(listeners.indexOf(f), 1),
      performance: { mark: () => undefined },
    };
    new Function('window', 'addEventListener', 'removeEventListener', 'performance', inline)(win, win.addEventListener, win.removeEventListener, win.performance);
    listeners[0]!({ data: { kind: 'state', n: 1 } });
    listeners[0]!({ data: { kind: 'state', n: 2 } });
    expect(win.gainlineEarly).toEqual([{ kind: 'state', n: 1 }, { kind: 'state', n: 2 }]);
    win.gainlineEarly = undefined;
    listeners[0]!({ data: { kind: 'state', n: 3 } });
    expect(listeners).toHaveLength(0);
  });

  it('links the codicon stylesheet with the id the UI components look for, and escapes the title', () => {
    expect(page).toContain('id="vscode-codicon-stylesheet"');
    expect(page).toContain('<title>run &lt;a&gt;.csv</title>');
    expect(page).toContain('data-mode="single"');
  });

  it('makes a fresh nonce each time, without characters that need escaping', () => {
    const a = makeNonce();
    expect(a).toMatch(/^[A-Za-z0-9]{16,}$/);
    expect(makeNonce()).not.toBe(a);
    expect(contentSecurityPolicy('x', a)).toContain(`'nonce-${a}'`);
  });
});

describe('export formatting', () => {
  const table = {
    title: 'Worst queries — run-a.csv',
    columns: ['query', 'NDCG@10', 'items'],
    rows: [
      ['wood screws 4x40', 0.6309297535714575, 2],
      ['tile cutter, manual | 600mm', null, 12],
      ['saw "japanese"', 0.5, 3],
    ] as (string | number | null)[][],
  };

  it('writes CSV with RFC 4180 quoting and full precision', () => {
    const csv = formatExport({ ...table, format: 'csv' });
    expect(csv.split('\n')).toEqual([
      'query,NDCG@10,items',
      'wood screws 4x40,0.6309297535714575,2',
      '"tile cutter, manual | 600mm",,12',
      '"saw ""japanese""",0.5,3',
      '',
    ]);
  });

  it('writes a Markdown table with 4 decimals, escaped pipes, numbers right-aligned, conventions below', () => {
    const md = formatExport({ ...table, format: 'markdown' }, 'gain exponential (2^g - 1) · ties average');
    const lines = md.split('\n');
    expect(lines[0]).toBe('## Worst queries — run-a.csv');
    expect(lines[2]).toBe('| query | NDCG@10 | items |');
    expect(lines[3]).toBe('| --- | ---: | ---: |');
    expect(lines[4]).toBe('| wood screws 4x40 | 0.6309 | 2 |');
    expect(lines[5]).toBe('| tile cutter, manual \\| 600mm |  | 12 |');
    expect(md).toContain('_Conventions: gain exponential (2^g - 1) · ties average_');
  });

  it('suggests a safe file name', () => {
    expect(suggestedFileName('Worst queries — run-a.csv', 'markdown')).toBe('worst-queries-run-a.md');
    expect(suggestedFileName('../../etc', 'csv')).toBe('etc.csv');
    expect(suggestedFileName('☃', 'csv')).toBe('gainline-export.csv');
  });

  it('formats the headline like the overview (4 decimals)', () => {
    expect(formatHeadline('NDCG@10', 0.61234)).toBe('NDCG@10 0.6123');
    expect(formatHeadline('Δ NDCG@10', 0.01, true)).toBe('Δ NDCG@10 +0.0100');
    expect(formatHeadline('Δ NDCG@10', -0.01, true)).toBe('Δ NDCG@10 -0.0100');
    expect(formatHeadline('NDCG@10', null)).toBe('NDCG@10 —');
  });
});

describe('dump sources', () => {
  const root = mkdtempSync(join(tmpdir(), 'gainline-sources-'));
  mkdirSync(join(root, 'runs'));
  mkdirSync(join(root, 'judgments'));
  mkdirSync(join(root, 'other'));
  writeFileSync(join(root, 'runs', 'model-a.run'), 'q1 Q0 SKU-1 1 2.0 a\n');
  writeFileSync(join(root, 'judgments', 'grades.qrels'), 'q1 0 SKU-1 1\n');
  writeFileSync(join(root, 'runs', 'model.svm'), '1 qid:1 1:0.5\n');
  writeFileSync(join(root, 'runs', 'model.svm.scores'), '0.3\n');

  it('knows which files need judgments and which are text', () => {
    expect(needsJudgments('a/model.run')).toBe(true);
    expect(needsJudgments('a/model.run.gz')).toBe(true);
    expect(needsJudgments('a/model.csv')).toBe(false);
    expect(isTextual('a.csv')).toBe(true);
    expect(isTextual('a.jsonl.gz')).toBe(false);
    expect(isTextual('b.parquet')).toBe(false);
  });

  it('finds the judgments file in a sibling folder', async () => {
    expect(await findJudgmentCandidates(join(root, 'runs', 'model-a.run'))).toEqual([join(root, 'judgments', 'grades.qrels')]);
  });

  it('uses the only candidate, asks when there are several, and prefers what was remembered', async () => {
    const config = readConfig(() => undefined);
    const run = join(root, 'runs', 'model-a.run');
    expect((await sourceFor(run, 'runs/model-a.run', config)).source.judgments).toBe(join(root, 'judgments', 'grades.qrels'));
    writeFileSync(join(root, 'other', 'more.qrels'), 'q1 0 SKU-1 2\n');
    const ambiguous = await sourceFor(run, 'runs/model-a.run', config);
    expect(ambiguous.judgmentChoices).toHaveLength(2);
    const remembered = await sourceFor(run, 'runs/model-a.run', config, '/x/picked.qrels');
    expect(remembered.source.judgments).toBe('/x/picked.qrels');
    expect(remembered.judgmentChoices).toBeUndefined();
    expect(remembered.source.missingQueries).toBe('skip');
    const zero = await sourceFor(run, 'runs/model-a.run', readConfig((key) => (key === 'missingQueries' ? 'zero' : undefined)), '/x/picked.qrels');
    expect(zero.source.missingQueries).toBe('zero');
    expect(readConfig((key) => (key === 'missingQueries' ? 'none' : undefined)).problems.join(' ')).toMatch(/gainline\.missingQueries: expected one of skip, zero/);
  });

  it('pairs a sparse feature file with its scores file and applies column mappings by pattern', async () => {
    const config = readConfig((key) => (key === 'columnsByPattern' ? { 'exports/*.csv': { query: 'search_id' } } : undefined));
    expect((await sourceFor(join(root, 'runs', 'model.svm'), 'runs/model.svm', config)).source.scores).toBe(join(root, 'runs', 'model.svm.scores'));
    expect((await sourceFor('/w/exports/a.csv', 'exports/a.csv', config)).source.columns).toEqual({ query: 'search_id' });
    expect((await sourceFor('/w/a.csv', 'a.csv', config)).source.columns).toBeUndefined();
  });
});
