/**
 * Every delimited-text row of the hostile corpus read twice by the engine: with the WebAssembly record
 * kernel (the one `npm run build` puts in dist/, as the command line uses it) and without it (the
 * JavaScript loops alone). The outcomes must be identical: the same error message, or the same rows,
 * lines and byte offsets bit for bit.
 */
import { existsSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { RankedDump } from '../../extension/engine/model/dump';
import { readDump } from '../../extension/engine/readers/index';
import { setRecordKernel } from '../../extension/engine/readers/simpleRecordsKernel';
import { REPO } from '../cli/support/runCli';
import { CASES } from './cases';

const KERNEL = join(REPO, 'dist/simpleRecords.wasm');
afterAll(() => setRecordKernel(undefined));

function outcome(d: RankedDump | Error) {
  if (d instanceof Error) return { error: d.message };
  return {
    query: Array.from(d.query, (q) => d.queries.get(q)),
    item: Array.from(d.item, (i) => d.items.get(i)),
    label: Array.from(d.label),
    score: Array.from(d.score),
    line: Array.from(d.line),
    offset: Array.from(d.offset),
  };
}

async function read(path: string, kernel: string | undefined) {
  setRecordKernel(kernel);
  return outcome(await readDump(path).catch((e: Error) => e));
}

const delimitedCases = CASES.filter((c) => c.args.length === 2 && c.args[0] === 'eval' && /\.(csv|tsv)(\.gz)?$/.test(c.args[1]!));

describe('hostile delimited text: WebAssembly kernel and JavaScript loops agree', () => {
  it('finds the built kernel and enough cases to matter', () => {
    expect(existsSync(KERNEL), `${KERNEL}: run "npm run build" first`).toBe(true);
    expect(delimitedCases.length).toBeGreaterThan(20);
  });

  it.each(delimitedCases.map((c) => [c.name, c] as const))('%s', async (_name, c) => {
    const dir = mkdtempSync(join(tmpdir(), 'gainline-hostile-kernel-'));
    for (const [name, content] of Object.entries(c.files)) writeFileSync(join(dir, name), content);
    const path = join(dir, c.args[1]!);
    expect(await read(path, KERNEL)).toEqual(await read(path, undefined));
  });
});
