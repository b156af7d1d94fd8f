/**
 * Entry point of a score worker thread (bundled to dist/scoreWorker.js). The thread is started before
 * its task is ready, so its start-up overlaps the preparation: it waits for one message holding the
 * task, scores chunks of queries into the shared per-query columns and posts back its counts (and,
 * when asked, the text a reporter wants made from each of those chunks).
 */
import { parentPort } from 'node:worker_threads';
import { runScoreRangeTask, type ScoreRangeTask } from './parallelEvaluate';
// Registers the JSON report's per-chunk renderer in this thread (see engine/evaluate/chunkOutput.ts).
import '../report/jsonRecords';

const port = parentPort!;
port.once('message', (task: ScoreRangeTask) => {
  try {
    port.postMessage({ result: runScoreRangeTask(task, () => port.postMessage({ claimed: true })) });
  } catch (err) {
    port.postMessage({ failure: err instanceof Error ? err.stack ?? err.message : String(err) });
  }
});
