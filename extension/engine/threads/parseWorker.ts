/**
 * Entry point of a parse worker thread (bundled to dist/parseWorker.js): answers the pool's requests
 * to parse one byte range, reporting the bytes done as progress and transferring the columns' buffers back.
 */
import { CancelledError } from '../errors';
import { parseRange, transferList } from '../readers/rangeParse';
import type { ParseRequests } from './parallel';
import { reportProgress, serveThread, transferring } from './threadServer';

serveThread<ParseRequests>({
  parseRange: async (task, context) => {
    const result = await parseRange(task, (done) => {
      if (context.signal.aborted) throw new CancelledError();
      reportProgress(context, done);
    });
    return transferring(result, transferList(result));
  },
});
