/**
 * Entry point of a parse worker thread (bundled to dist/parseWorker.js): parses the byte range in
 * workerData and posts the columns back, transferring their buffers.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { parseRange, transferList, type RangeTask } from '../readers/rangeParse';

const port = parentPort!;
parseRange(workerData as RangeTask, (done) => port.postMessage({ progress: done })).then(
  (result) => port.postMessage({ result }, transferList(result)),
  (err: unknown) => port.postMessage({ failure: err instanceof Error ? err.stack ?? err.message : String(err) }),
);
