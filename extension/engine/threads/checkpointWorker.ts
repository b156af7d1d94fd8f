/**
 * Entry point of a checkpoint worker thread (bundled to dist/checkpointWorker.js): a lane of a training
 * series (trend/lanes.ts) asks it for one checkpoint at a time; it reads and scores the dump and answers
 * with the per-query columns and intervals only, their buffers transferred, so no dump crosses threads.
 */
import { scoreCheckpoint, type CheckpointRequests } from '../trend/checkpoint';
import { serveThread, transferring } from './threadServer';

serveThread<CheckpointRequests>({
  scoreCheckpoint: async (task, context) => {
    const scored = await scoreCheckpoint(task, context.signal);
    return transferring(scored, scored.columns.values.map((v) => v.buffer as ArrayBuffer));
  },
});
