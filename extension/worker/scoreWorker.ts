/**
 * Entry point of a score worker thread (bundled to dist/scoreWorker.js): scores chunks of queries
 * into the shared per-query columns in workerData and posts back its counts (and, when asked, the
 * JSON report's records of those chunks).
 */
import { parentPort, workerData } from 'node:worker_threads';
import { runScoreRangeTask, type ScoreRangeTask } from '../engine/evaluate/parallelEvaluate';

const port = parentPort!;
try {
  port.postMessage({ result: runScoreRangeTask(workerData as ScoreRangeTask, () => port.postMessage({ claimed: true })) });
} catch (err) {
  port.postMessage({ failure: err instanceof Error ? err.stack ?? err.message : String(err) });
}
