// Two runs compared through the palette; wins, ties and losses against the CLI.
import { waitUntil } from '../harness.mjs';
import { compareRunsAB, integerText } from '../views.mjs';

function assert(condition, message) {
  if (!condition) throw new Error(message);
}

export const compareWinsLosses = {
  name: 'comparing the two demo runs shows the CLI\'s wins, ties and losses',
  async run(ctx) {
    const { expected, frame } = await compareRunsAB(ctx);
    const shown = await waitUntil(async () => {
      const wins = await integerText(frame, '#gl-compare-wins').catch(() => NaN);
      const losses = await integerText(frame, '#gl-compare-losses').catch(() => NaN);
      const ties = await integerText(frame, '#gl-compare-ties').catch(() => NaN);
      return Number.isInteger(wins) && Number.isInteger(losses) ? { wins, ties, losses } : null;
    }, { timeoutMs: 90_000, what: 'integer wins and losses' });
    assert(shown.wins === expected.wins && shown.losses === expected.losses,
      `UI shows wins ${shown.wins} / losses ${shown.losses}, CLI says ${expected.wins} / ${expected.losses}`);
    if (expected.ties !== undefined) assert(shown.ties === expected.ties, `UI shows ${shown.ties} ties, CLI says ${expected.ties}`);
    assert(await frame.locator('#gl-compare-table').count() > 0, '#gl-compare-table is missing');
    await ctx.shot('compare', { readme: true });
  },
};
