/**
 * "Gainline: Go to Query…": a keyboard picker over the queries of the Gainline view in front (or the
 * one last in front), worst first with the headline value beside each; the pick opens the query there.
 */
import * as vscode from 'vscode';
import type { SessionRegistry } from './panels';

/** More than this many queries are not listed: the picker filters by typing, and these are the worst. */
export const GO_TO_QUERY_LIMIT = 20_000;

export async function goToQuery(registry: SessionRegistry): Promise<void> {
  const current = registry.current();
  if (!current) {
    void vscode.window.showInformationMessage('Gainline: open a dump or a comparison first; Go to Query lists its queries.');
    return;
  }
  const { session, panel } = current;
  const picker = vscode.window.createQuickPick<vscode.QuickPickItem>();
  picker.title = `Go to query in ${session.label}`;
  picker.placeholder = 'Type part of a query; worst first';
  picker.matchOnDescription = false;
  picker.busy = true;
  picker.show();
  try {
    const listed = await session.listQueries(GO_TO_QUERY_LIMIT);
    picker.items = listed.rows.map((r) => ({ label: r.query, description: r.description }));
    if (listed.total > listed.rows.length) picker.title += ` (the ${listed.rows.length} worst of ${listed.total})`;
  } catch (error) {
    picker.hide();
    void vscode.window.showErrorMessage(`Gainline: could not list the queries: ${error instanceof Error ? error.message : String(error)}`);
    return;
  } finally {
    picker.busy = false;
  }
  const picked = await new Promise<string | undefined>((resolve) => {
    picker.onDidAccept(() => resolve(picker.selectedItems[0]?.label));
    picker.onDidHide(() => resolve(undefined));
  });
  picker.dispose();
  if (picked === undefined) return;
  panel.reveal(undefined, false);
  session.showQuery(picked);
}
