/**
 * Entry point of a checkpoint worker thread (bundled to dist/checkpointWorker.js): `gainline trend`
 * scores every other checkpoint here while its own thread scores the rest. One task per message; the
 * per-query columns go back as transferred buffers, so no dump ever crosses threads.
 */
import { parentPort } from 'node:worker_threads';
import { InputError } from '../engine/errors';
import { scoreCheckpoint, type CheckpointTask } from '../engine/trend/checkpoint';

const port = parentPort!;
port.on('message', async ({ id, task }: { id: number; task: CheckpointTask }) => {
  try {
    const scored = await scoreCheckpoint(task);
    port.postMessage({ id, scored }, scored.columns.values.map((v) => v.buffer as ArrayBuffer));
  } catch (err) {
    const input = err instanceof InputError ? { expected: err.expected, file: err.file, line: err.line, found: err.found } : undefined;
    port.postMessage({ id, failure: { input, message: err instanceof Error ? err.message : String(err), code: (err as { code?: unknown }).code,
      path: (err as { path?: unknown }).path } });
  }
});
