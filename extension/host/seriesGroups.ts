/**
 * How the Runs view groups dumps into training series. No `vscode` import, so it is tested in plain Node.
 *
 * - Each pattern of `gainline.series.patterns` (a glob on the workspace-relative path, or on the file
 *   name for a pattern without `/`) is one series of the files it matches, even while it holds one.
 * - Files no pattern takes are grouped by folder: a folder with two or more dumps that carry a checkpoint
 *   number in their names (all its dumps when the series are ordered by time) is a series.
 * The order inside a series is the command line's (engine/trend/series.ts), applied by the worker.
 */
import { checkpointNumber } from '../engine/trend/series';
import { globToRegExp } from './glob';

export interface DumpFile {
  readonly path: string;
  /** Relative to the workspace folder, with `/` separators. */
  readonly relative: string;
}

export interface SeriesGroup {
  /** Stable id: "folder:<relative folder>" or "pattern:<glob>". */
  readonly key: string;
  readonly label: string;
  readonly files: readonly DumpFile[];
  /** The folder whose files a folder series takes (relative; '' for the workspace root). */
  readonly folder?: string;
  readonly pattern?: string;
}

/** True when `pattern` takes the file: on its relative path, or on its name for a pattern without `/`. */
export function patternTakes(pattern: string, file: DumpFile): boolean {
  const target = pattern.includes('/') ? file.relative : file.relative.slice(file.relative.lastIndexOf('/') + 1);
  return globToRegExp(pattern).test(target);
}

/** The folder of a relative path ('' at the root). */
export function folderOf(relative: string): string {
  const slash = relative.lastIndexOf('/');
  return slash < 0 ? '' : relative.slice(0, slash);
}

/** Folder series of `files`: the numbered dumps of one folder (every dump when ordering by time), two or more. */
export function folderMembers(files: readonly DumpFile[], order: 'number' | 'time'): DumpFile[] {
  return files.filter((f) => order === 'time' || checkpointNumber(f.relative) !== undefined);
}

/** Listing order of a series' files: by checkpoint number (2 before 10), then by name. */
function byCheckpointNumber(a: DumpFile, b: DumpFile): number {
  const x = checkpointNumber(a.relative) ?? Number.MAX_VALUE;
  const y = checkpointNumber(b.relative) ?? Number.MAX_VALUE;
  return x !== y ? (x < y ? -1 : 1) : a.relative.localeCompare(b.relative);
}

export function groupSeries(files: readonly DumpFile[], patterns: readonly string[], order: 'number' | 'time'): SeriesGroup[] {
  const taken = new Set<string>();
  const groups: SeriesGroup[] = patterns.map((pattern) => {
    const members = files.filter((f) => patternTakes(pattern, f));
    for (const f of members) taken.add(f.path);
    return { key: `pattern:${pattern}`, label: pattern, files: members.sort(byCheckpointNumber), pattern };
  });
  const byFolder = new Map<string, DumpFile[]>();
  for (const f of files) {
    if (taken.has(f.path)) continue;
    const folder = folderOf(f.relative);
    byFolder.set(folder, [...(byFolder.get(folder) ?? []), f]);
  }
  const folders = [...byFolder.keys()].sort((a, b) => a.localeCompare(b));
  for (const folder of folders) {
    const members = folderMembers(byFolder.get(folder)!, order);
    if (members.length >= 2) groups.push({ key: `folder:${folder}`, label: folder === '' ? '(workspace folder)' : `${folder}/`, files: members.sort(byCheckpointNumber), folder });
  }
  return groups;
}
