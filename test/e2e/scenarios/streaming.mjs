// A dump streamed in the editor: with gainline.reading.streamFromMegabytes lowered to 1, a generated
// 1.5M-row dump (about 70 MB, rows grouped by query; large enough that the page is up before the stream
// ends) is scored as it streams in. The page must show a
// partial overview (means so far, marked partial) before the full one, and the full one must give the
// command line's numbers for the same file.
import { existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { closeAllEditors, frameText, inspectFromPalette, waitUntil } from '../harness.mjs';
import { evalExpectations, fourDecimals } from '../oracle.mjs';
import { readHeadline } from '../views.mjs';
import { writeLargeDump } from '../../support/demo-large.mjs';

function assert(condition, message) {
  if (!condition) throw new Error(message);
}

/**
 * Sets (or with undefined removes) one setting of the workspace folder (.vscode/settings.json), which the
 * editor watches as it watches every file of the folder.
 */
function setWorkspaceSetting(root, key, value) {
  const file = join(root, '.vscode', 'settings.json');
  const settings = existsSync(file) ? JSON.parse(readFileSync(file, 'utf8')) : {};
  if (value === undefined) delete settings[key];
  else settings[key] = value;
  mkdirSync(dirname(file), { recursive: true });
  if (Object.keys(settings).length === 0) rmSync(file, { force: true });
  else writeFileSync(file, JSON.stringify(settings, null, 2));
}

/** The page's first marks of a partial overview and of the full result (epoch ms), once the result is in. */
async function pageMarks(frame) {
  return frame.evaluate(() => {
    const first = (name) => {
      const mark = performance.getEntriesByName(name)[0];
      return mark ? performance.timeOrigin + mark.startTime : null;
    };
    return { partial: first('gainline-partial'), result: first('gainline-result') };
  });
}

export const streamedOverview = {
  name: 'streaming: a dump above gainline.reading.streamFromMegabytes shows a partial overview, then the CLI\'s numbers',
  async run(ctx) {
    // Two folders down, where no judgments file or queries/items table is near enough to be joined
    // (host/sources.ts looks in the file's folder, its sibling folders and its parent).
    const folder = join(ctx.files.root, 'e2e', 'streaming', 'nightly');
    mkdirSync(folder, { recursive: true });
    const file = join(folder, 'streamed-1500k.csv');
    writeLargeDump(file, 1_500_000, 60_000, 'kettlewood-e2e-stream');
    const expected = evalExpectations(file);
    await closeAllEditors(ctx.page);
    setWorkspaceSetting(ctx.files.root, 'gainline.reading.streamFromMegabytes', 1);
    try {
      // The editor picks the settings file up within moments; until it has, the dump is read into memory
      // (its overview then has no "Streamed:" note), so open it again until the note is there.
      const { frame, marks } = await waitUntil(async () => {
        await closeAllEditors(ctx.page);
        await inspectFromPalette(ctx.page, ctx.rel(file));
        const { frame: shown } = await readHeadline(ctx.page, undefined, { timeoutMs: 120_000 });
        const notes = await shown.locator('.gl-warnings li').allTextContents();
        if (!notes.some((n) => n.startsWith('Streamed:'))) return null;
        return { frame: shown, marks: await pageMarks(shown) };
      }, { timeoutMs: 200_000, intervalMs: 500, what: 'an overview with the "Streamed:" note' });
      assert(marks.partial !== null, 'no partial overview was shown before the full one');
      assert(marks.result !== null && marks.partial < marks.result, `partial overview at ${marks.partial}, full one at ${marks.result}`);
      const value = await frameText(frame, '#gl-headline-value');
      assert(value === expected.meanText, `streamed headline ${value}, CLI says ${expected.meanText}`);
      const cards = await frame.locator('#gl-overview .gl-card .value').allTextContents();
      const cli = Object.values(expected.json.summary).map((m) => fourDecimals(typeof m === 'number' ? m : m.mean));
      assert(cards.length > 1, `only ${cards.length} metric cards`);
      for (const card of cards) assert(cli.includes(card.trim()), `metric card ${card} is none of the CLI's means ${cli.join(', ')}`);
      const meta = await frameText(frame, '#gl-overview > p.gl-muted');
      const queries = /([\d\s\u2009\u202f,]+) queries/.exec(meta);
      assert(queries && Number(queries[1].replace(/[^\d]/g, '')) === expected.queryCount, `overview says "${meta}", the CLI counts ${expected.queryCount} queries`);
      await ctx.shot('streamed-overview');
    } finally {
      setWorkspaceSetting(ctx.files.root, 'gainline.reading.streamFromMegabytes', undefined);
      await closeAllEditors(ctx.page);
      rmSync(join(ctx.files.root, 'e2e', 'streaming'), { recursive: true, force: true });
    }
  },
};
