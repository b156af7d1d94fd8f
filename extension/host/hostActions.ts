/**
 * The few webview requests the host answers itself because they touch the editor: saving or copying
 * an exported table, copying a query as JSON, and revealing a row of the dump in a text editor.
 */
import * as os from 'node:os';
import * as path from 'node:path';
import * as vscode from 'vscode';
import type { ExportResult, ExportViewParams, RevealResult } from '../protocol/messages';
import { formatExport, suggestedFileName } from './exportTable';
import { isTextual } from './sources';

export async function exportView(params: ExportViewParams, nearFile: string, conventions: string | undefined): Promise<ExportResult> {
  const text = formatExport(params, conventions);
  if (params.destination === 'clipboard') {
    await vscode.env.clipboard.writeText(text);
    void vscode.window.setStatusBarMessage('Gainline: table copied', 3000);
    return { done: true, target: 'clipboard' };
  }
  // Offer the workspace folder, not the folder of the runs: exports are reports, and a training job
  // or a glob over the runs folder should not pick them up as dumps.
  const folder = vscode.workspace.getWorkspaceFolder(vscode.Uri.file(nearFile))?.uri.fsPath ?? vscode.workspace.workspaceFolders?.[0]?.uri.fsPath ?? os.homedir();
  const defaultUri = vscode.Uri.file(path.join(folder, suggestedFileName(params.title, params.format)));
  const target = await vscode.window.showSaveDialog({
    defaultUri,
    saveLabel: 'Export',
    filters: params.format === 'csv' ? { CSV: ['csv'] } : { Markdown: ['md'] },
  });
  if (!target) return { done: false };
  await vscode.workspace.fs.writeFile(target, new TextEncoder().encode(text));
  return { done: true, target: target.fsPath };
}

export async function copyText(text: string, what: string): Promise<{ copied: boolean }> {
  await vscode.env.clipboard.writeText(text);
  void vscode.window.setStatusBarMessage(`Gainline: ${what} copied`, 3000);
  return { copied: true };
}

/**
 * Opens the dump as text below the viewer with the row's line selected: beside it, the viewer lost
 * half its width and clipped the ideal list, while below it keeps its width and the lines stay
 * readable. A text editor of the file already open in another group is reused. Parquet and
 * compressed files are not text: the row number is shown instead.
 */
export async function revealRow(file: string, row: number, line: number): Promise<RevealResult> {
  const name = path.basename(file);
  if (!isTextual(file) || line <= 0) {
    const message = `${name} is not a text file: the item is data row ${row + 1} (line numbers do not apply).`;
    void vscode.window.showInformationMessage(message);
    return { revealed: false, line: 0, message };
  }
  const document = await vscode.workspace.openTextDocument(vscode.Uri.file(file));
  const lineIndex = Math.min(line - 1, document.lineCount - 1);
  const range = document.lineAt(lineIndex).range;
  const viewer = vscode.window.tabGroups.activeTabGroup.viewColumn;
  const open = vscode.window.visibleTextEditors.find((e) => e.document.uri.fsPath === document.uri.fsPath && e.viewColumn !== viewer);
  let viewColumn = open?.viewColumn;
  if (viewColumn === undefined) {
    // A new group under the viewer's, which becomes the active one.
    await vscode.commands.executeCommand('workbench.action.newGroupBelow');
    viewColumn = vscode.ViewColumn.Active;
  }
  await vscode.window.showTextDocument(document, {
    viewColumn,
    preserveFocus: false,
    selection: new vscode.Selection(range.start, range.end),
  });
  return { revealed: true, line };
}
