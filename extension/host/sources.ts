/**
 * What to read for a dump the user opened: the file itself, its column mapping, and for formats that
 * keep grades or scores apart (run files, sparse feature lines), the side file. No `vscode` import.
 */
import { promises as fsp } from 'node:fs';
import * as path from 'node:path';
import type { DumpSource } from '../protocol/worker';
import { columnsFor, type GainlineConfig } from './config';

/** Run files carry no grades: they need a judgments (qrels) file. */
export function needsJudgments(file: string): boolean {
  return /\.run(\.gz)?$/i.test(file);
}

const JUDGMENT_FILE = /\.(qrels|judgments)(\.txt)?(\.gz)?$/i;

/**
 * Judgments files near a run file, nearest first: its own folder, then sibling folders of it, then
 * the parent's folder. Stops at the first level that has any.
 */
export async function findJudgmentCandidates(runFile: string): Promise<string[]> {
  const dir = path.dirname(runFile);
  const parent = path.dirname(dir);
  const levels: string[][] = [[dir], await subfolders(parent, dir), [parent]];
  for (const folders of levels) {
    const found: string[] = [];
    for (const folder of folders) found.push(...(await filesMatching(folder, JUDGMENT_FILE)));
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
}

/**
 * Builds the read request for `file`. `remembered` is a judgments file the user picked earlier for it
 * (kept by the host per file). `relative` is the path relative to its workspace folder, for patterns.
 */
export async function sourceFor(file: string, relative: string, config: GainlineConfig, remembered?: string): Promise<SourceChoice> {
  const columns = columnsFor(config, relative);
  const base: DumpSource = { path: file, ...(columns ? { columns } : {}) };
  if (/\.(sparse|svm(light)?)$/i.test(file)) {
    const scores = await findScoresFile(file);
    return { source: scores ? { ...base, scores } : base };
  }
  if (!needsJudgments(file)) return { source: base };
  const judged = (judgments: string): DumpSource => ({ ...base, judgments, missingQueries: config.missingQueries });
  if (remembered) return { source: judged(remembered) };
  const candidates = await findJudgmentCandidates(file);
  if (candidates.length === 1) return { source: judged(candidates[0]!) };
  return { source: base, judgmentChoices: candidates };
}

/** Formats whose rows cannot be shown as lines of text in an editor. */
export function isTextual(file: string): boolean {
  return !/\.(parquet|gz)$/i.test(file);
}

async function subfolders(parent: string, except: string): Promise<string[]> {
  try {
    const entries = await fsp.readdir(parent, { withFileTypes: true });
    return entries
      .filter((e) => e.isDirectory() && e.name !== 'node_modules' && !e.name.startsWith('.'))
      .map((e) => path.join(parent, e.name))
      .filter((p) => p !== except);
  } catch {
    return [];
  }
}

async function filesMatching(folder: string, pattern: RegExp): Promise<string[]> {
  try {
    const entries = await fsp.readdir(folder, { withFileTypes: true });
    return entries.filter((e) => e.isFile() && pattern.test(e.name)).map((e) => path.join(folder, e.name));
  } catch {
    return [];
  }
}
