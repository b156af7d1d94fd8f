/**
 * What to read for a dump the user opened: the file itself, its column mapping, its judgments file (any
 * format; required for run files), a scores file for sparse feature lines, and the queries and items
 * tables. No `vscode` import.
 */
import { promises as fsp, type Dirent } from 'node:fs';
import * as path from 'node:path';
import type { DumpSource } from '../protocol/worker';
import { columnsFor, sideFilesFor, type GainlineConfig, type SideFiles } from './config';

/** Run files carry no grades: they need a judgments (qrels) file. */
export function needsJudgments(file: string): boolean {
  return /\.run(\.gz)?$/i.test(file);
}

const JUDGMENT_FILE = /\.(qrels|judgments)(\.txt)?(\.gz)?$/i;

/**
 * The naming rule for side tables found without a setting: `queries.*` and `items.*` with a table
 * extension (tsv, csv, jsonl, parquet, optionally .gz), looked for like judgments files.
 */
const QUERIES_FILE = /^queries\.(tsv|csv|jsonl|parquet)(\.gz)?$/i;
const ITEMS_FILE = /^items\.(tsv|csv|jsonl|parquet)(\.gz)?$/i;

/** True for a file the naming rule takes as a queries or items table (the Ranked Lists view leaves them out). */
export function isSideTableName(file: string): boolean {
  const name = path.basename(file);
  return QUERIES_FILE.test(name) || ITEMS_FILE.test(name);
}

/**
 * Judgments files near a dump, nearest first: its own folder, then sibling folders of it, then
 * the parent's folder. Stops at the first level that has any.
 */
export async function findJudgmentCandidates(dumpFile: string, listing: Listing = folderListing()): Promise<string[]> {
  return findNear(dumpFile, JUDGMENT_FILE, listing);
}

/** A folder's entries (none when it cannot be read), each folder read once per listing. */
type Listing = (folder: string) => Promise<readonly Dirent[]>;

/**
 * One per opened dump: the judgments, queries and items searches look at the same folders, and on
 * a busy extension host each read waits its turn, before the first screen's read can even start.
 */
function folderListing(): Listing {
  const read = new Map<string, Promise<readonly Dirent[]>>();
  return (folder) => {
    let entries = read.get(folder);
    if (!entries) {
      entries = fsp.readdir(folder, { withFileTypes: true }).catch(() => []);
      read.set(folder, entries);
    }
    return entries;
  };
}

/** Files matching `pattern` near `file`, nearest level first (own folder, sibling folders, parent). */
async function findNear(file: string, pattern: RegExp, listing: Listing): Promise<string[]> {
  const dir = path.dirname(file);
  const parent = path.dirname(dir);
  const levels: string[][] = [[dir], await subfolders(parent, dir, listing), [parent]];
  for (const folders of levels) {
    const found = (await Promise.all(folders.map((folder) => filesMatching(folder, pattern, listing)))).flat();
    if (found.length > 0) return found.sort();
  }
  return [];
}

/** `model.sparse` → `model.sparse.scores` when that file exists. */
export async function findScoresFile(file: string): Promise<string | undefined> {
  const candidate = `${file}.scores`;
  try {
    return (await fsp.stat(candidate)).isFile() ? candidate : undefined;
  } catch {
    return undefined;
  }
}

export interface SourceChoice {
  readonly source: DumpSource;
  /** Several judgments files were found and none was remembered: the caller should ask. */
  readonly judgmentChoices?: readonly string[];
  /**
   * Run files carry no grades: without a judgments file they cannot be scored. Other formats keep
   * their own labels when the user picks none of several judgments files.
   */
  readonly judgmentsRequired: boolean;
}

/**
 * Builds the read request for `file`. `remembered` is a judgments file the user picked earlier for it
 * (kept by the host per file). `relative` is the path relative to its workspace folder, for patterns.
 */
export async function sourceFor(file: string, relative: string, config: GainlineConfig, remembered?: string): Promise<SourceChoice> {
  const columns = columnsFor(config, relative);
  const configured = sideFilesFor(config, relative);
  const listing = folderListing();
  // Started together: the searches share the folder listings.
  const judgmentsNearby = configured?.judgments === undefined && !remembered ? findJudgmentCandidates(file, listing) : undefined;
  judgmentsNearby?.catch(() => undefined);
  const tables = configured ? configuredTables(file, relative, configured) : await foundTables(file, listing);
  let base: DumpSource = { path: file, ...(columns ? { columns } : {}), ...tables };
  if (/\.(sparse|svm(light)?)$/i.test(file)) {
    const scores = await findScoresFile(file);
    if (scores) base = { ...base, scores };
  }
  // Labels from a judgments file, for every format (the readers join them to any dump): the setting's
  // file first, then one the user picked for this dump, then the naming rule (*.qrels, *.judgments nearby).
  const required = needsJudgments(file);
  const judged = (judgments: string): DumpSource => ({ ...base, judgments, missingQueries: config.missingQueries });
  if (configured?.judgments !== undefined) return { source: judged(resolveIn(file, relative, configured.judgments)), judgmentsRequired: required };
  if (remembered) return { source: judged(remembered), judgmentsRequired: required };
  const candidates = await (judgmentsNearby ?? findJudgmentCandidates(file, listing));
  // Found for a dump with labels of its own: the worker leaves it out when it shares no query with the dump.
  if (candidates.length === 1) return { source: { ...judged(candidates[0]!), ...(required ? {} : { judgmentsFound: true }) }, judgmentsRequired: required };
  if (candidates.length === 0) return { source: base, judgmentsRequired: required };
  return { source: base, judgmentChoices: candidates, judgmentsRequired: required };
}

/** Side files named in gainline.sideFilesByPattern, relative to the dump's workspace folder. */
function configuredTables(file: string, relative: string, files: SideFiles): Pick<DumpSource, 'queries' | 'items'> {
  return {
    ...(files.queries !== undefined ? { queries: resolveIn(file, relative, files.queries) } : {}),
    ...(files.items !== undefined ? { items: resolveIn(file, relative, files.items) } : {}),
  };
}

/** Side tables found by the naming rule; the worker joins them only when they share ids with the dump. */
async function foundTables(file: string, listing: Listing): Promise<Pick<DumpSource, 'queries' | 'items' | 'tablesFound'>> {
  const [[queries], [items]] = await Promise.all([findNear(file, QUERIES_FILE, listing), findNear(file, ITEMS_FILE, listing)]);
  if (queries === undefined && items === undefined) return {};
  return { ...(queries ? { queries } : {}), ...(items ? { items } : {}), tablesFound: true };
}

/** A setting's path: absolute as it is, else relative to the workspace folder holding the dump. */
function resolveIn(file: string, relative: string, target: string): string {
  if (path.isAbsolute(target)) return target;
  const depth = relative.split(/[\\/]/).length;
  let root = file;
  for (let i = 0; i < depth; i++) root = path.dirname(root);
  return path.join(root, target);
}

/** Formats whose rows cannot be shown as lines of text in an editor. */
export function isTextual(file: string): boolean {
  return !/\.(parquet|gz)$/i.test(file);
}

async function subfolders(parent: string, except: string, listing: Listing): Promise<string[]> {
  return (await listing(parent))
    .filter((e) => e.isDirectory() && e.name !== 'node_modules' && !e.name.startsWith('.'))
    .map((e) => path.join(parent, e.name))
    .filter((p) => p !== except);
}

async function filesMatching(folder: string, pattern: RegExp, listing: Listing): Promise<string[]> {
  return (await listing(folder)).filter((e) => e.isFile() && pattern.test(e.name)).map((e) => path.join(folder, e.name));
}
