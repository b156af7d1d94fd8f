/** A single self-overwriting progress line on standard error, for long reads in a terminal. */
import type { CliIO } from './io';

const REDRAW_EVERY_MS = 200;

export interface ProgressLine {
  readonly reading: (fraction: number) => void;
  readonly scoring: (fraction: number) => void;
  /** While a dump streams in: the headline so far, in words (presentation/partialText.ts). */
  readonly partial: (fraction: number, text: string) => void;
  /** Clears the line; safe to call more than once. */
  readonly done: () => void;
}

export function progressLine(io: CliIO, label: string): ProgressLine {
  let lastDraw = 0;
  let shown = false;
  let finished = false;
  const draw = (stage: string, fraction: number, extra = '') => {
    const now = Date.now();
    if (finished || now - lastDraw < REDRAW_EVERY_MS) return;
    lastDraw = now;
    shown = true;
    const percent = Math.max(0, Math.min(100, Math.floor(fraction * 100)));
    io.err(`\r\x1b[K${stage} ${label} ${percent}%${extra === '' ? '' : ` · ${extra}`}`);
  };
  return {
    reading: (f) => draw('reading', f),
    scoring: (f) => draw('scoring', f),
    partial: (f, text) => draw('streaming', f, text),
    done: () => {
      if (shown && !finished) io.err('\r\x1b[K');
      finished = true;
    },
  };
}
