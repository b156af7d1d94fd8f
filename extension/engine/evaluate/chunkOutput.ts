/**
 * Text a reporter makes from a range of scored queries (the JSON report's records), on whichever thread
 * is free: the engine knows nothing of what is made. The caller names a renderer that every thread has
 * registered and gives it plain data; threads/renderInOrder.ts hands out the chunks and returns their
 * text in query order, as UTF-8 bytes encoded on the thread that made them (bytes cross from a thread
 * without a copy, and they are what the writer writes).
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
  /**
   * The params keep their bulk in shared memory (typed arrays on SharedArrayBuffers), so sending them
   * with every chunk costs next to nothing; otherwise every chunk is rendered on the calling thread.
   */
  readonly shared?: boolean;
}

/** Queries per chunk: 16,384 JSON records are about 6 MB of text (the records of a million pass V8's longest string). */
export const QUERIES_PER_CHUNK = 16_384;

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
