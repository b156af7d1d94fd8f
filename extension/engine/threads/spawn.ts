/**
 * Starting the engine's own threads: the scripts are found in the configured bundle folder, and every
 * thread started and not yet exited is counted (tests check that none is left behind after a failure).
 */
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { Worker } from 'node:worker_threads';
import { engineActivity, engineSettings } from '../config';

/** The bundled thread entry points (see build.mjs). */
export type ThreadScript = 'parseWorker' | 'scoreWorker' | 'streamWorker' | 'checkpointWorker';

/** The script's path, or undefined when threads are off or the script is not there (work then stays on this thread). */
export function threadScript(name: ThreadScript): string | undefined {
  const dir = engineSettings().bundleDir;
  if (dir === undefined) return undefined;
  const path = join(dir, `${name}.js`);
  return existsSync(path) ? path : undefined;
}

export function startThread(script: string, workerData?: unknown): Worker {
  const worker = new Worker(script, workerData === undefined ? {} : { workerData });
  const activity = engineActivity();
  activity.liveThreads++;
  worker.once('exit', () => activity.liveThreads--);
  return worker;
}
