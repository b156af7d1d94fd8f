/**
 * Entry point of a score worker thread (bundled to dist/scoreWorker.js). The pool starts the thread
 * before its task is ready, so its start-up overlaps the preparation; it then answers one request
 * holding the task: it scores chunks of queries into the shared per-query columns, reports progress
 * once it has claimed its first chunk, and answers with its counts. After a scoring it also renders
 * chunks of a report's text (renderInOrder.ts), one request per chunk.
 */
import { renderChunk } from '../evaluate/chunkOutput';
import { runScoreRangeTask, type ScoreRequests } from './parallelEvaluate';
import type { RenderRequests } from './renderInOrder';
import { reportProgress, serveThread, transferring } from './threadServer';
// Registers the JSON and CSV reports' chunk renderers in this thread (see engine/evaluate/chunkOutput.ts).
import '../report/jsonRecords';
import '../report/csv';
// Lets the scoring sort with the WebAssembly kernel.
import '../evaluate/keySortKernel';

serveThread<ScoreRequests & RenderRequests>({
  scoreRange: (task, context) => runScoreRangeTask(task, () => reportProgress(context, 0)),
  renderChunk: (task) => {
    const utf8 = renderChunk(task.work, task.perQuery, task.from, task.to);
    // The bytes have a buffer of their own (chunkOutput.ts): handed over, not copied.
    return transferring({ utf8 }, [utf8.buffer as ArrayBuffer]);
  },
});
