/**
 * Whether a dump is scored as it streams in or read into memory first. Streaming serves what only needs
 * the per-query table (the report, the worst queries, the sensitivity rows); it holds no row columns, so
 * the views that read rows (segments of the dump's own columns, diagnostics, a query's detail read from
 * memory) and the joins of side tables take the in-memory path. A judgments file streams: each block is
 * joined to it (sharedJudgments.ts).
 */
import { promises as fsp } from 'node:fs';
import { detectFormat } from '../readers/detect';
import type { ReadOptions } from '../readers/readOptions';

/** `auto`: stream a large plain CSV/TSV file; `stream`: stream whenever the format allows; `memory`: never. */
export type ReadingMode = 'auto' | 'stream' | 'memory';
export const READING_MODES: readonly ReadingMode[] = ['auto', 'stream', 'memory'];

/**
 * From this size `auto` streams. Below it reading into memory is as fast and its peak stays under about
 * 1.5 GB; above it the in-memory peak grows with the rows while the stream's stays flat.
 */
export const STREAM_FROM_BYTES = 1 << 30;

export type StreamChoice = { readonly stream: true; readonly format: 'csv' | 'tsv' } | { readonly stream: false; readonly why: string };

/** `fromBytes` replaces STREAM_FROM_BYTES for `auto` (the editor's setting). */
export async function chooseReading(path: string, options: ReadOptions, mode: ReadingMode, fromBytes = STREAM_FROM_BYTES): Promise<StreamChoice> {
  if (mode === 'memory') return { stream: false, why: 'asked for' };
  // A named judgments file is joined block by block; one found beside the dump is joined only when it names
  // the dump's queries, which is known once the dump is read.
  if (options.judgments !== undefined && options.judgmentsFound === true) return { stream: false, why: 'a judgments file found beside it may belong to other data' };
  if (options.scores !== undefined) return { stream: false, why: 'scores are joined from a scores file' };
  const sniffed = await detectFormat(path, options);
  if (sniffed.format !== 'csv' && sniffed.format !== 'tsv') return { stream: false, why: `only CSV and TSV stream (this is ${sniffed.format})` };
  if (sniffed.gzip) return { stream: false, why: 'a gzip file cannot be cut into blocks' };
  if (mode === 'auto') {
    const { size } = await fsp.stat(path);
    if (size < fromBytes) {
      return { stream: false, why: fromBytes === STREAM_FROM_BYTES ? `smaller than ${STREAM_FROM_BYTES / (1 << 30)} GiB` : `smaller than ${fromBytes / 1e6} MB` };
    }
  }
  return { stream: true, format: sniffed.format };
}
