/**
 * Work a caller (a reporter) wants done on each chunk of queries right after the chunk is scored,
 * on whichever thread scored it, while the chunk's values are still in cache. The engine knows
 * nothing of what is made: the caller names a renderer that every thread has registered, gives it
 * plain data (copied to the score threads), and receives each chunk's text through `onChunk`, as
 * UTF-8 bytes encoded on the thread that made it. Bytes cross from a score thread without a copy
 * (strings were copied, by the worker after its last chunk and again here: 0.02 s of waiting at the
 * end of a 10M-row scoring), and they are what the writer writes.
 *
 * A function cannot cross to another thread, so the renderer is found by name: the module that
 * defines one registers it when loaded, and the score thread's entry point loads that module.
 */
import type { PerQueryColumns } from './types';

/** Text for queries [from, to) of filled per-query columns, or its UTF-8 bytes. */
export type ChunkRenderer<P> = (params: P, perQuery: PerQueryColumns, from: number, to: number) => string | Uint8Array;

/** What a thread needs to run the renderer: the name and the data (structured-cloneable). */
export interface ChunkWork {
  readonly renderer: string;
  readonly params: unknown;
}

export interface ChunkOutput extends ChunkWork {
  /**
   * Called on the calling thread once per chunk, chunks in any order; together the chunks cover
   * every query exactly once (on one thread: a single chunk of all queries).
   */
  readonly onChunk: (from: number, to: number, utf8: Uint8Array) => void;
}

const renderers = new Map<string, ChunkRenderer<never>>();

export function registerChunkRenderer<P>(name: string, render: ChunkRenderer<P>): void {
  renderers.set(name, render as ChunkRenderer<never>);
}

const utf8 = new TextEncoder();

/**
 * Runs the named renderer over one chunk and encodes its text (unless it made bytes), in a buffer of its own (transferable);
 * a name no module registered in this thread is a programming error.
 */
export function renderChunk(work: ChunkWork, perQuery: PerQueryColumns, from: number, to: number): Uint8Array {
  const render = renderers.get(work.renderer) as ChunkRenderer<unknown> | undefined;
  if (render === undefined) throw new Error(`no chunk renderer '${work.renderer}' is registered in this thread`);
  const made = render(work.params, perQuery, from, to);
  return typeof made === 'string' ? utf8.encode(made) : made;
}
