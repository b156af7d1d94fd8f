/**
 * The overview of a dump still streaming in: the means over the queries scored so far, marked as
 * partial, with how much of the file has been read. Shown under the progress message of the loading
 * panel; the full overview replaces the whole panel when the stream ends.
 */
import type { PartialOverview } from '../../../extension/protocol/messages';
import { partialHeadlineText } from '../../../extension/presentation/partialText';
import { exactValue, formatCount, formatFixed, formatShare } from '../model/format';
import { el } from '../ui/dom';

const num = (v: number | null): number => (v === null ? NaN : v);

export function partialOverviewElement(p: PartialOverview): HTMLElement {
  const headline = p.metrics[p.headline];
  const summary = partialHeadlineText({ key: headline?.key ?? '', mean: num(headline?.mean ?? null), queries: p.queries, rows: p.rows,
    bytesRead: p.bytesRead, totalBytes: p.totalBytes });
  const cards = el('div', { className: 'gl-cards', attrs: { role: 'list', 'aria-label': 'Mean of each metric over the queries scored so far' } });
  p.metrics.forEach((m, i) => {
    const value = el('div', { className: 'value', text: formatFixed(num(m.mean), 4) });
    if (i === p.headline) value.id = 'gl-partial-headline-value';
    cards.append(el('div', { className: i === p.headline ? 'gl-card headline' : 'gl-card', attrs: { role: 'listitem' },
      title: `Mean over the ${formatCount(m.counted)} queries scored so far; exact value ${exactValue(num(m.mean))}. It changes as the rest of the file is read.` },
    el('div', { className: 'label', text: `${m.label} so far` }), value, el('div', { className: 'sub', text: `${formatCount(m.counted)} queries` })));
  });
  const share = p.totalBytes > 0 ? formatShare(p.bytesRead / p.totalBytes) : '';
  return el('section', { id: 'gl-partial-overview', attrs: { 'aria-label': 'Partial overview' } },
    el('p', { id: 'gl-partial-summary', text: summary }),
    cards,
    el('p', { className: 'gl-muted', text: `${p.fileName} · ${share} read in ${formatCount(p.elapsedMs)} ms · ${p.conventions}. ` +
      'Partial: the queries cut by a block boundary and the rest of the file come later; the full overview replaces this one.' }));
}
