/**
 * Entry point of a checkpoint worker thread (bundled to dist/checkpointWorker.js): a lane of a training
 * series (trend/lanes.ts) asks it for one checkpoint at a time; it reads and scores the dump and answers
 * with the per-query columns and intervals only, so no dump crosses threads. They are copied, not
 * transferred: transferring detaches buffers, after which V8 compiles a detach check into every
 * typed-array access of this thread, and the checkpoints after the first would be read and scored slower.
 */
import { scoreCheckpoint, type CheckpointRequests } from '../trend/checkpoint';
import { serveThread } from './threadServer';
// Lets the scoring sort with the WebAssembly kernel.
import '../evaluate/keySortKernel';

serveThread<CheckpointRequests>({
  scoreCheckpoint: (task, context) => scoreCheckpoint(task, context.signal),
});
