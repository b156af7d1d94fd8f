import { describe, expect, it } from 'vitest';
import {
  BAR_ROOM_CH,
  charWidthCh,
  ColumnWidths,
  fittedTemplate,
  gridTemplate,
  LIST_TEXT_MIN_CH,
  minColumnCh,
  SAMPLES,
  TEXT_MAX_CH,
  TEXT_MIN_CH,
  textWidthCh,
} from '../../webview/src/model/columnLayout';
import { formatCount, formatDelta, formatFixed, formatP, formatShare } from '../../webview/src/model/format';
import { seededRandom } from '../reference/random';

describe('textWidthCh', () => {
  it('counts digits as exactly 1ch (tabular figures) and everything else at least as wide as it usually is', () => {
    expect(textWidthCh('0123456789')).toBe(10);
    // "-0.0600": the sign and point are narrower than a digit in every common UI font; counted 0.7ch each.
    expect(textWidthCh('-0.0600')).toBeCloseTo(5 + 0.7 + 0.7, 10);
    // Capitals and "@" are wider than "0" in proportional fonts (e.g. "NDCG@10").
    expect(textWidthCh('NDCG@10')).toBeCloseTo(4 * 1.35 + 1.8 + 2, 10);
    expect(textWidthCh('')).toBe(0);
  });

  it('makes headers wider than the same text in regular weight', () => {
    expect(textWidthCh('Inversions', true)).toBeGreaterThan(textWidthCh('Inversions'));
  });

  it('never counts a character narrower than the narrowest punctuation', () => {
    for (const ch of 'aZ9 .-%—∞τΔ@\u202f漢') expect(charWidthCh(ch)).toBeGreaterThanOrEqual(0.5);
    expect(charWidthCh('漢')).toBeGreaterThanOrEqual(1.8); // unknown scripts: assume wide
  });
});

describe('minColumnCh', () => {
  it('fits a signed four-decimal metric and its full header with the sort arrow', () => {
    const tau = { label: 'Kendall τ', numeric: true, sortable: true, sample: SAMPLES.unitFixed };
    const min = minColumnCh(tau);
    expect(min).toBeGreaterThanOrEqual(textWidthCh('-0.0000'));
    expect(min).toBe(textWidthCh('Kendall τ ▲', true)); // here the header is the wider one
  });

  it('fits the widest value when it is wider than the header', () => {
    const rank = { label: '#', numeric: true, sample: SAMPLES.rank };
    expect(minColumnCh(rank)).toBe(6); // six digits: 100 000 queries
    expect(textWidthCh(String(100000))).toBeLessThanOrEqual(minColumnCh(rank));
  });

  it('gives text columns a floor even under a short header', () => {
    expect(minColumnCh({ label: 'Query', sortable: true })).toBe(TEXT_MIN_CH);
  });

  it('every sample is at least as wide as what its formatter produces at the ends of its range', () => {
    // Hand-picked extremes of each formatter (format.ts).
    const cases: [string, string[]][] = [
      [SAMPLES.unitFixed, [formatFixed(-1), formatFixed(1), formatFixed(-0.00001), formatFixed(-0.0612345)]],
      [SAMPLES.unitDelta, [formatDelta(1), formatDelta(-1), formatDelta(0.00004)]],
      [SAMPLES.share, [formatShare(1), formatShare(0.00001), formatShare(0.5)]],
      [SAMPLES.p, [formatP(1), formatP(0.00001), formatP(0.04999)]],
      [SAMPLES.count, [formatCount(99_999), formatCount(0)]],
    ];
    for (const [sample, texts] of cases) for (const t of texts) expect(textWidthCh(t), `${t} vs ${sample}`).toBeLessThanOrEqual(textWidthCh(sample));
  });
});

describe('gridTemplate', () => {
  const columns = [
    { label: '#', numeric: true, sample: SAMPLES.rank, width: 0, sticky: true },
    { label: 'Query', sortable: true, width: 3, sticky: true },
    { label: 'NDCG@10', numeric: true, sortable: true, sample: SAMPLES.unitFixed },
    { label: 'Share of loss', numeric: true, sortable: true, sample: SAMPLES.share, sticky: true },
  ];

  it('fixed tracks for width 0, minmax(min, fr) for the others; the row minimum is the sum of minimums', () => {
    const mins = columns.map(minColumnCh);
    const t = gridTemplate(columns, mins);
    expect(t.columns).toBe(
      `calc(6ch + 16px) minmax(calc(${mins[1]}ch + 16px), 3fr) minmax(calc(${mins[2]}ch + 16px), 1fr) minmax(calc(${mins[3]}ch + 16px), 1fr)`,
    );
    const sum = Math.round(mins.reduce((a, b) => a + b, 0) * 10) / 10;
    expect(t.minWidth).toBe(`calc(${sum}ch + 64px)`);
  });

  it('sticks only leading columns, each offset by the fixed widths before it', () => {
    const t = gridTemplate(columns, columns.map(minColumnCh));
    expect(t.stickyLeft).toEqual(['0px', 'calc(6ch + 16px)', undefined, undefined]); // "Share of loss" is not leading
  });

  it('does not stick a column after a flexible sticky one (its offset would be unknown)', () => {
    const t = gridTemplate(
      [
        { label: 'Query', width: 3, sticky: true },
        { label: 'Segment', width: 1, sticky: true },
      ],
      [20, 16],
    );
    expect(t.stickyLeft).toEqual(['0px', undefined]);
  });
});

describe('ColumnWidths', () => {
  it('grows a numeric column for a wider value, never shrinks; a text column grows up to TEXT_MAX_CH', () => {
    const w = new ColumnWidths([
      { label: 'Query' },
      { label: 'Items', numeric: true, sample: SAMPLES.count },
    ]);
    const start = w.minCh(1);
    expect(w.observe(1, formatCount(12))).toBe(false);
    expect(w.observe(1, formatCount(12_345_678))).toBe(true);
    expect(w.minCh(1)).toBe(textWidthCh(formatCount(12_345_678)));
    expect(w.observe(1, formatCount(3))).toBe(false);
    expect(w.minCh(1)).toBeGreaterThan(start);
    expect(w.observe(0, 'drill')).toBe(false);
    expect(w.minCh(0)).toBe(TEXT_MIN_CH);
    expect(w.observe(0, 'sandpaper orbital discs 125mm')).toBe(true);
    expect(w.minCh(0)).toBe(textWidthCh('sandpaper orbital discs 125mm'));
    expect(w.observe(0, 'x'.repeat(200))).toBe(true);
    expect(w.minCh(0)).toBe(TEXT_MAX_CH);
  });

  it('ends at the widest value seen, whatever the order (seeded comparison with a plain maximum)', () => {
    const random = seededRandom(7);
    for (let round = 0; round < 50; round++) {
      const w = new ColumnWidths([{ label: 'Δ', numeric: true }]);
      const texts = Array.from({ length: 40 }, () => formatDelta((random() - 0.5) * 10 ** Math.floor(random() * 6)));
      for (const t of texts) w.observe(0, t);
      const slow = Math.max(textWidthCh('Δ', true), ...texts.map((t) => textWidthCh(t)));
      expect(w.minCh(0)).toBe(slow);
    }
  });
});

describe('fittedTemplate', () => {
  it('sizes number columns to the widest text or header, bars with room, text columns with a floor', () => {
    const t = fittedTemplate(
      [
        { header: 'Pos', texts: ['1', '10', '1500'], kind: 'number' },
        { header: 'Item', texts: ['sku-1'], kind: 'text' },
        { header: 'Score', texts: ['0.9453', '-12.3456'], kind: 'number' },
        { header: 'Contribution', texts: ['0.0000'], kind: 'bar' },
      ],
      8,
    );
    const pos = Math.max(textWidthCh('Pos', true), 4);
    const score = textWidthCh('-12.3456');
    const contribution = Math.max(textWidthCh('Contribution', true), 6 + BAR_ROOM_CH);
    expect(t.columns).toBe(
      `calc(${pos}ch + 8px) minmax(calc(${LIST_TEXT_MIN_CH}ch + 8px), 3fr) calc(${score}ch + 8px) minmax(calc(${contribution}ch + 8px), 2fr)`,
    );
    expect(t.minWidth).toBe(`calc(${Math.round((pos + LIST_TEXT_MIN_CH + score + contribution) * 10) / 10}ch + 32px)`);
  });
});
