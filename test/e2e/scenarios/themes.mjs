// The overview under light, dark and both high-contrast themes: screenshots,
// and a WCAG 2.x contrast check on text elements inside the webview frame.
import { findWebviewFrame, runCommand, typeInQuickInput, waitUntil } from '../harness.mjs';
import { contrastRatio, sampleColoursInFrame, selfCheckContrast } from '../contrast.mjs';
import { inspectRunA, showTab } from '../views.mjs';

const THEMES = [
  { label: 'Light Modern', bodyClass: 'vscode-light' },
  { label: 'Dark Modern', bodyClass: 'vscode-dark' },
  { label: 'Dark High Contrast', bodyClass: 'vscode-high-contrast' },
  { label: 'Light High Contrast', bodyClass: 'vscode-high-contrast-light' },
];

const TEXT_SELECTORS = ['#gl-headline-label', '#gl-headline-value', '#gl-conventions', '#gl-tab-overview', '#gl-tab-worst',
  '#gl-worst-table [data-query] .gl-vt-text', '#gl-worst-filter',
  '#gl-degenerate', '#gl-sensitivity', '#gl-overview .gl-muted'];

// WCAG 2.x AA: 4.5:1 for body text, 3:1 for large text (≥ 24 px, or ≥ 18.66 px bold).
function requiredRatio(sample) {
  const large = sample.fontSizePx >= 24 || (sample.fontSizePx >= 18.66 && sample.fontWeight >= 700);
  return large ? 3 : 4.5;
}

async function applyTheme(page, label) {
  // The picker can close when the webview takes focus back; try again then.
  for (let attempt = 1; ; attempt += 1) {
    try {
      await runCommand(page, 'Preferences: Color Theme');
      await typeInQuickInput(page, label, { pickText: label, timeoutMs: 5_000 });
      return;
    } catch (error) {
      if (attempt >= 3) throw error;
    }
  }
}

export const themesReadable = {
  name: 'light, dark and high-contrast themes render readable text',
  async run(ctx) {
    selfCheckContrast();
    const { frame } = await inspectRunA(ctx);
    await showTab(frame, 'gl-tab-overview');
    const problems = [];
    try {
      for (const theme of THEMES) {
        await applyTheme(ctx.page, theme.label);
        const current = await waitUntil(async () => {
          const f = await findWebviewFrame(ctx.page, '#gl-headline-value', { timeoutMs: 2_000 });
          const result = await f.evaluate(sampleColoursInFrame, TEXT_SELECTORS);
          return result.bodyClass.split(/\s+/).includes(theme.bodyClass) ? result : null;
        }, { timeoutMs: 20_000, what: `webview body class ${theme.bodyClass}` });
        await ctx.shot(`theme-${theme.label.toLowerCase().replace(/\s+/g, '-')}`);
        let lowest = Infinity;
        for (const sample of current.samples) {
          if (sample.missing || !sample.colour || sample.text === '') continue;
          const ratio = contrastRatio(sample.colour, sample.background);
          lowest = Math.min(lowest, ratio);
          if (ratio < requiredRatio(sample)) {
            problems.push(`${theme.label}: ${sample.selector} "${sample.text}" contrast ${ratio.toFixed(2)}:1 < ${requiredRatio(sample)}:1`);
          }
        }
        const checked = current.samples.filter((s) => !s.missing && s.colour && s.text !== '').length;
        ctx.log(`  ${theme.label}: ${checked} text elements, lowest contrast ${lowest.toFixed(2)}:1`);
        if (checked < 3) problems.push(`${theme.label}: only ${checked} text element(s) could be checked`);
      }
    } finally {
      await applyTheme(ctx.page, 'Dark Modern').catch(() => {});
    }
    if (problems.length > 0) throw new Error(problems.join('; '));
  },
};
