/**
 * Entry point of a stream worker thread (bundled to dist/streamWorker.js): reads and scores one block
 * of a grouped dump per message and posts the result back, transferring its columns.
 */
import { parentPort } from 'node:worker_threads';
import { blockTransferList, readBlock, type BlockTask } from './block';

const port = parentPort!;
port.on('message', (task: BlockTask) => {
  readBlock(task).then(
    (result) => port.postMessage({ result }, blockTransferList(result)),
    (err: unknown) => port.postMessage({ failure: err instanceof Error ? err.stack ?? err.message : String(err) }),
  );
});
