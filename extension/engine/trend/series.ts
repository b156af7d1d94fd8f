/**
 * Puts the dumps of a training series in order. Checkpoint files carry their epoch or step in their
 * names (`epoch-2.csv`, `ckpt_step10000.parquet`), and name order would put 10 before 2, so the
 * default order is by number:
 *
 * - the number is the LAST run of digits in the file name once the dump extensions are removed
 *   (`run3-epoch-12.csv.gz` → 12: the last number is the finest-grained counter by common practice);
 * - a name without any digits, or two files with the same number, is an error naming them: guessing an
 *   order there would draw a trend through the wrong points. Ordering by modification time avoids both.
 *
 * Ordering by modification time sorts oldest first; equal times fall back to the file name.
 */
import { InputError } from '../errors';

export type SeriesOrder = 'number' | 'time';

export interface SeriesFile {
  readonly path: string;
  /** As the user or the folder listing named it (shown in reports). */
  readonly name: string;
  readonly modifiedMs: number;
}

export interface OrderedCheckpoint extends SeriesFile {
  /** The number the order came from, or the modification time in ms. */
  readonly position: number;
}

/** Extensions of dump files, peeled off the end of a name before looking for its number. */
const DUMP_EXTENSIONS = /(\.(csv|tsv|tab|jsonl|ndjson|json|run|svm|svmlight|letor|parquet|txt))?(\.gz)?$/i;

/** True for names a folder listing should take as dumps. */
export function looksLikeDump(name: string): boolean {
  return /\.(csv|tsv|tab|jsonl|ndjson|json|run|parquet)(\.gz)?$/i.test(name);
}

/** The checkpoint number of a file name, or undefined when the name holds no digits. */
export function checkpointNumber(name: string): number | undefined {
  const base = name.replace(/^.*[\\/]/, '').replace(DUMP_EXTENSIONS, '');
  const runs = base.match(/\d+/g);
  return runs ? Number(runs[runs.length - 1]) : undefined;
}

export function orderSeries(files: readonly SeriesFile[], order: SeriesOrder): OrderedCheckpoint[] {
  if (order === 'time') {
    return files
      .map((f) => ({ ...f, position: f.modifiedMs }))
      .sort((x, y) => x.position - y.position || (x.name < y.name ? -1 : x.name > y.name ? 1 : 0));
  }
  const numbered = files.map((f) => ({ ...f, position: checkpointNumber(f.name) ?? Number.NaN }));
  const unnumbered = numbered.filter((f) => Number.isNaN(f.position));
  if (unnumbered.length > 0) {
    throw new InputError(
      `a checkpoint number (epoch or step) in every file name, or --order time (${unnumbered.length} without one, e.g. ${unnumbered
        .slice(0, 3)
        .map((f) => JSON.stringify(f.name))
        .join(', ')})`,
      unnumbered[0]!.name,
    );
  }
  numbered.sort((x, y) => x.position - y.position);
  for (let i = 1; i < numbered.length; i++) {
    if (numbered[i]!.position === numbered[i - 1]!.position) {
      throw new InputError(
        `one file per checkpoint number, or --order time (${JSON.stringify(numbered[i - 1]!.name)} and ${JSON.stringify(numbered[i]!.name)} both end in ${numbered[i]!.position})`,
        numbered[i]!.name,
      );
    }
  }
  return numbered;
}

/**
 * Matches a file name against a pattern whose `*` stands for any run of characters and `?` for one
 * (no other special characters: shells expand richer patterns before we see them).
 */
export function nameMatches(pattern: string, name: string): boolean {
  const source = [...pattern].map((ch) => (ch === '*' ? '.*' : ch === '?' ? '.' : ch.replace(/[.+^${}()|[\]\\]/g, '\\$&'))).join('');
  return new RegExp(`^${source}$`, 's').test(name);
}
