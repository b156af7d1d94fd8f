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
  return patternTester(pattern)(file);
}

/** `patternTakes` for one pattern, compiled once (a series can have 20,000 files to test). */
function patternTester(pattern: string): (file: DumpFile) => boolean {
  const glob = globToRegExp(pattern);
  const onPath = pattern.includes('/');
  return (file) => glob.test(onPath ? file.relative : file.relative.slice(file.relative.lastIndexOf('/') + 1));
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

/** Listing order of a series' files: by checkpoint number (2 before 10), then by name; each name's number is found once. */
function byCheckpointNumber(files: DumpFile[]): DumpFile[] {
  const keyed = files.map((file) => ({ file, n: checkpointNumber(file.relative) ?? Number.MAX_VALUE }));
  keyed.sort((a, b) => (a.n !== b.n ? (a.n < b.n ? -1 : 1) : a.file.relative.localeCompare(b.file.relative)));
  return keyed.map((k) => k.file);
}

export function groupSeries(files: readonly DumpFile[], patterns: readonly string[], order: 'number' | 'time'): SeriesGroup[] {
  const taken = new Set<string>();
  const groups: SeriesGroup[] = patterns.map((pattern) => {
    const takes = patternTester(pattern);
    const members = files.filter(takes);
    for (const f of members) taken.add(f.path);
    return { key: `pattern:${pattern}`, label: pattern, files: byCheckpointNumber(members), pattern };
  });
  const byFolder = new Map<string, DumpFile[]>();
  for (const f of files) {
    if (taken.has(f.path)) continue;
    const folder = folderOf(f.relative);
    const members = byFolder.get(folder);
    if (members) members.push(f);
    else byFolder.set(folder, [f]);
  }
  const folders = [...byFolder.keys()].sort((a, b) => a.localeCompare(b));
  for (const folder of folders) {
    const members = folderMembers(byFolder.get(folder)!, order);
    if (members.length >= 2) groups.push({ key: `folder:${folder}`, label: folder === '' ? '(workspace folder)' : `${folder}/`, files: byCheckpointNumber(members), folder });
  }
  return groups;
}
