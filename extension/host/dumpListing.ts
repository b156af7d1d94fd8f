/**
 * How many of the workspace's dumps the views take, and how what is left out is said. No `vscode`
 * import, so it is tested in plain Node.
 *
 * - The workspace search asks for one more than MAX_LISTED_DUMPS, so "more than that" is known rather
 *   than guessed; the Runs view groups every dump found up to that (a training job can write thousands
 *   of checkpoints), and says when the search stopped there.
 * - The Ranked Lists view shows the first RANKED_LISTS_SHOWN (each row reads its file for a headline)
 *   and ends with a row counting the rest. Nothing found is dropped without a row saying so.
 */
import { formatCountInText } from '../presentation/numbers';

/** The most dumps the workspace search returns (and the Runs view groups into series). */
export const MAX_LISTED_DUMPS = 20_000;
/** The most rows of dumps the Ranked Lists view shows. */
export const RANKED_LISTS_SHOWN = 500;

export interface DumpListing<T> {
  /** Dumps found, in listing order, at most MAX_LISTED_DUMPS. */
  readonly files: readonly T[];
  /** True when the search found more than MAX_LISTED_DUMPS (the rest are not listed anywhere). */
  readonly searchStopped: boolean;
}

/** The workspace search's answer (asked for `searchLimit()` results) as a listing. */
export function listingOf<T>(found: readonly T[]): DumpListing<T> {
  return { files: found.slice(0, MAX_LISTED_DUMPS), searchStopped: found.length > MAX_LISTED_DUMPS };
}

/** What to ask the workspace search for: one more than is listed, to know whether there were more. */
export function searchLimit(): number {
  return MAX_LISTED_DUMPS + 1;
}

export interface ShownDumps<T> {
  readonly shown: readonly T[];
  /** The "N more" row's text, or undefined when every dump found is shown. */
  readonly more: string | undefined;
}

/** The Ranked Lists view's rows: the first `limit` dumps, and a row saying how many more there are. */
export function shownInRankedLists<T>(listing: DumpListing<T>, limit = RANKED_LISTS_SHOWN): ShownDumps<T> {
  const hidden = Math.max(0, listing.files.length - limit);
  const shown = hidden > 0 ? listing.files.slice(0, limit) : listing.files;
  if (hidden === 0 && !listing.searchStopped) return { shown, more: undefined };
  const count = `${formatCountInText(hidden)}${listing.searchStopped ? '+' : ''}`;
  return { shown, more: `${count} more dump${hidden === 1 && !listing.searchStopped ? '' : 's'} not listed` };
}

/** The tooltip of the "N more" row: where the rest can be reached. */
export function moreTooltip(listing: DumpListing<unknown>, limit = RANKED_LISTS_SHOWN): string {
  const shown = Math.min(limit, listing.files.length);
  const found = listing.searchStopped
    ? `The workspace holds more than ${formatCountInText(MAX_LISTED_DUMPS)} dumps; the first ${formatCountInText(MAX_LISTED_DUMPS)} are grouped in the Runs view.`
    : `${formatCountInText(listing.files.length)} dumps found; all of them are grouped in the Runs view.`;
  return `This view shows the first ${formatCountInText(shown)}. ${found} Narrow gainline.dumpGlob or open a dump from the Explorer.`;
}
