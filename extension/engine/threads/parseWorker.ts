/**
 * Entry point of a parse worker thread (bundled to dist/parseWorker.js): answers the pool's requests
 * to parse byte ranges claimed one at a time from a shared counter, reporting the bytes done as
 * progress and transferring the columns' buffers back, to move a share of the columns when the ranges
 * are put together, and to group and key a share of rows not grouped by query.
 */
import { CancelledError } from '../errors';
import { parseClaimedRanges, transferList } from '../readers/rangeParse';
import { compactColumns } from './compactRanges';
import { runGroupTask } from './keyUngrouped';
import type { ParseRequests } from './parallel';
import { reportProgress, serveThread, transferring } from './threadServer';

serveThread<ParseRequests>({
  parseRanges: async ({ tasks, next }, context) => {
    const parsed = await parseClaimedRanges(tasks, next, (done) => {
      if (context.signal.aborted) throw new CancelledError();
      reportProgress(context, done);
    });
    return transferring(parsed, parsed.flatMap(([, result]) => transferList(result)));
  },
  compactColumns: (task) => {
    compactColumns(task);
    return true as const;
  },
  groupRows: (task) => runGroupTask(task),
});
