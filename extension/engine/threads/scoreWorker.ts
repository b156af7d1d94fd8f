/**
 * Entry point of a score worker thread (bundled to dist/scoreWorker.js). The pool starts the thread
 * before its task is ready, so its start-up overlaps the preparation; it then answers one request
 * holding the task: it scores chunks of queries into the shared per-query columns, reports progress
 * once it has claimed its first chunk, and answers with its counts (and, when asked, the text a
 * reporter wants made from each of those chunks).
 */
import { runScoreRangeTask, type ScoreRequests } from './parallelEvaluate';
import { reportProgress, serveThread, transferring } from './threadServer';
// Registers the JSON report's per-chunk renderer in this thread (see engine/evaluate/chunkOutput.ts).
import '../report/jsonRecords';
// Lets the scoring sort with the WebAssembly kernel.
import '../evaluate/keySortKernel';

serveThread<ScoreRequests>({
  scoreRange: (task, context) => {
    const result = runScoreRangeTask(task, () => reportProgress(context, 0));
    // Each chunk's bytes have a buffer of their own (chunkOutput.ts): handed over, not copied.
    return transferring(result, result.chunkTexts.map(([, bytes]) => bytes.buffer as ArrayBuffer));
  },
});
