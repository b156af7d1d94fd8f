/**
 * The sources a view reads: a file through an SQL engine, or each dump with its judgments file (asked
 * for once when several could hold the grades, then remembered per run).
 */
import * as path from 'node:path';
import * as vscode from 'vscode';
import type { GainlineConfig } from './config';
import { sourceFor } from './sources';
import { engineSource } from './sqlSources';
import type { SqlEngineName } from './sqlSources';
import type { DumpSource } from '../protocol/worker';

export type SessionTarget =
  /** `engine`: computed where the data lives (a file through DuckDB; `uri` a clickhouse:// table URL). */
  | { readonly mode: 'single'; readonly uri: vscode.Uri; readonly engine?: SqlEngineName }
  | { readonly mode: 'compare'; readonly a: vscode.Uri; readonly b: vscode.Uri };

export async function resolveViewSources(target: SessionTarget, files: readonly vscode.Uri[], config: GainlineConfig,
deps: { readonly memory: vscode.Memento; readonly secrets?: vscode.SecretStorage }): Promise<DumpSource[]> {
  if (target.mode === 'single' && target.engine) {
    const { uri, engine } = target;
    const columns = engine === 'duckdb' ? (await sourceFor(uri.fsPath, vscode.workspace.asRelativePath(uri, false), config)).source.columns : undefined;
    return [await engineSource(engine, uri, config, columns, deps.secrets)];
  }
  const out: DumpSource[] = [];
  for (const uri of files) {
    const relative = vscode.workspace.asRelativePath(uri, false);
    const memoryKey = `gainline.judgments:${uri.fsPath}`;
    const remembered = deps.memory.get<string>(memoryKey);
    const choice = await sourceFor(uri.fsPath, relative, config, remembered);
    if (!choice.judgmentChoices) {
      out.push(choice.source);
      continue;
    }
    const judgments = await pickJudgments(uri, choice.judgmentChoices);
    if (!judgments && !choice.judgmentsRequired) {
      // Not a run file: with none of the judgments files picked, the dump's own labels are used.
      out.push(choice.source);
      continue;
    }
    if (!judgments) {
      throw new Error(`${path.basename(uri.fsPath)} is a run file: it needs a judgments (qrels) file with the grades, and none was chosen.`);
    }
    await deps.memory.update(memoryKey, judgments);
    out.push({ ...choice.source, judgments });
  }
  return out;
}

async function pickJudgments(run: vscode.Uri, candidates: readonly string[]): Promise<string | undefined> {
  const name = path.basename(run.fsPath);
  if (candidates.length > 1) {
    const picked = await vscode.window.showQuickPick(
      candidates.map((c) => ({ label: path.basename(c), description: vscode.workspace.asRelativePath(c), path: c })),
      { title: `Judgments (qrels) for ${name}`, placeHolder: 'Which file holds the grades for this run?' },
    );
    return picked?.path;
  }
  const chosen = await vscode.window.showOpenDialog({
    title: `Judgments (qrels) for ${name}`,
    openLabel: 'Use these judgments',
    canSelectMany: false,
    defaultUri: vscode.Uri.file(path.dirname(run.fsPath)),
  });
  return chosen?.[0]?.fsPath;
}
