/**
 * The engine's one set of process-wide settings: where the bundled thread scripts live and the
 * tuning knobs tests turn. Everything that used to be a setter, a tuning object or a module-level
 * path is read from here, so a test changes it in one call and restores it with the value returned.
 */

/** Knobs with a measured default; tests shrink them to reach chunk and range boundaries on small files. */
export interface EngineTuning {
  /** Bytes per read of a plain text file (and per chunk a parse range is fed in). */
  readonly plainChunkBytes: number;
  /** Bytes of compressed input per read of a gzip file. */
  readonly gzipChunkBytes: number;
  /** Byte ranges per parsing thread, claimed in turn: enough that a slowed thread leaves little for the others to wait on. */
  readonly parseRangesPerThread: number;
  /** Query chunks per scoring thread: enough that a slowed thread leaves little for the others to wait on. */
  readonly scoreChunksPerThread: number;
  /** Rows per call of the WebAssembly record kernel (read when a kernel is created). */
  readonly kernelRowsPerCall: number;
  /** Input bytes per piece handed to the kernel (a piece of typical rows fills about one call). */
  readonly kernelPieceBytes: number;
  /** Tests switch the record kernel off to get the JavaScript loops' reading to compare with. */
  readonly recordKernel: boolean;
  /** Tests switch the JSON Lines byte loop off (readers/jsonLinesFast.ts) to get JSON.parse's reading to compare with. */
  readonly jsonLinesFastRows: boolean;
  /** Parquet's flat columns read page by page into their rows (readers/parquetPages.ts); off: through the decoder's row reader. */
  readonly parquetPages: boolean;
  /**
   * The page loop decodes id, grade and score columns of the common types and encodings itself into typed
   * arrays (readers/parquetTypedPages.ts); off: every column through the decoder's page functions.
   */
  readonly parquetTypedPages: boolean;
  /** Rows of a Parquet row group stored at once by the page loop (tests make it small, to cross pages). */
  readonly parquetSliceRows: number;
  /**
   * Tests only: this thread claims score chunks, or the ranges of a read, only after every worker has claimed
   * one, so workers surely take part (and take the first ones).
   */
  readonly workersFirst: boolean;
}

export interface EngineSettings {
  /**
   * Folder holding the bundled thread scripts (parseWorker.js, scoreWorker.js) and the compiled
   * record kernel (simpleRecords.wasm); undefined runs everything on the calling thread in JavaScript. Default: the folder of the bundle the engine was built into.
   */
  readonly bundleDir: string | undefined;
  /**
   * Keep the engine's parse and score threads alive between reads (threads/keptPools.ts), for a process
   * that reads dump after dump (the editor's engine thread): a kept thread has started and compiled its
   * code already, so reading and scoring mid-sized dumps on several threads pays. Off for the command
   * line, which reads once and would only wait for threads to start.
   */
  readonly keepThreads: boolean;
  readonly tuning: EngineTuning;
}

export const DEFAULT_TUNING: EngineTuning = {
  plainChunkBytes: 8 << 20,
  gzipChunkBytes: 1 << 20,
  parseRangesPerThread: 4,
  scoreChunksPerThread: 16,
  kernelRowsPerCall: 16384,
  kernelPieceBytes: 1 << 20,
  recordKernel: true,
  jsonLinesFastRows: true,
  parquetPages: true,
  parquetTypedPages: true,
  parquetSliceRows: 65_536,
  workersFirst: false,
};

declare const __dirname: string | undefined;

let current: EngineSettings = {
  // Bundled by esbuild into dist/, __dirname is dist/ where the thread scripts sit; under vitest it is a
  // source folder without them, and everything runs on one thread unless a test bundles the scripts.
  bundleDir: typeof __dirname === 'string' ? __dirname : undefined,
  keepThreads: false,
  tuning: DEFAULT_TUNING,
};

export interface EngineConfiguration {
  readonly bundleDir?: string | undefined;
  readonly keepThreads?: boolean;
  readonly tuning?: Partial<EngineTuning>;
}

/**
 * Changes the given settings (a `bundleDir` key present with undefined switches threads off) and
 * returns the settings as they were, to pass back to configureEngine to restore them.
 */
export function configureEngine(change: EngineConfiguration): EngineSettings {
  const before = current;
  current = {
    bundleDir: 'bundleDir' in change ? change.bundleDir : before.bundleDir,
    keepThreads: change.keepThreads ?? before.keepThreads,
    tuning: { ...before.tuning, ...change.tuning },
  };
  return before;
}

export function engineSettings(): EngineSettings {
  return current;
}

/** What the engine did in this thread, for tests to see that a fast path really ran and nothing was left behind. */
export interface EngineActivity {
  /** Engine threads started from this thread and not yet exited. */
  liveThreads: number;
  /** Rows stored from the record kernel's output in this thread, ever. */
  kernelRows: number;
  /** Bytes of text copied into the record kernel's memory in this thread, ever. */
  kernelBytesCopied: number;
  /** Dumps whose dump-wide item ids were made from item bytes kept per row (model/rowTexts.ts), ever. */
  itemIdsMade: number;
  /** Chunks of report text other threads rendered for this thread (threads/renderInOrder.ts), ever. */
  chunksRenderedElsewhere: number;
  /** Queries a parse worker keyed from the hashes alone, for a read not grouped by query (threads/keyUngrouped.ts), ever. */
  queriesKeyedElsewhere: number;
  /** Parquet pieces read page by page in this thread (readers/parquetPages.ts), ever. */
  parquetPagePieces: number;
  /** Parquet data pages decoded into typed arrays in this thread (readers/parquetTypedPages.ts), ever. */
  parquetTypedPages: number;
  /** Reads in ranges compacted in their shared slices (threads/mergeRanges.ts), ever. */
  rangesCompacted: number;
  /** Reads in ranges merged by copying the ranges' private arrays (a range outgrew its shared slice), ever. */
  rangesMergedByCopying: number;
}

const activity: EngineActivity = {
  liveThreads: 0, kernelRows: 0, kernelBytesCopied: 0, itemIdsMade: 0, chunksRenderedElsewhere: 0, queriesKeyedElsewhere: 0, parquetPagePieces: 0, parquetTypedPages: 0,
  rangesCompacted: 0, rangesMergedByCopying: 0,
};

/** The live counters (the engine's threads and kernel add to them). */
export function engineActivity(): EngineActivity {
  return activity;
}
