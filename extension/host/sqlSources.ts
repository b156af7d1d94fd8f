/**
 * Views computed where the data lives: a ClickHouse table URL, or a file served through DuckDB. The
 * worker gets a DumpSource naming the engine; the password comes from the editor's secret storage (or
 * the environment of the editor's process) and is never written to a log, a message or a setting.
 */
import * as vscode from 'vscode';
import { CLICKHOUSE_PASSWORD_VARIABLE, CLICKHOUSE_USER_VARIABLE, parseClickHouseUrl } from '../engine/sql/clickhouseRunner';
import type { DumpSource } from '../protocol/worker';
import type { GainlineConfig } from './config';

export type SqlEngineName = 'duckdb' | 'clickhouse';

/** Where the ClickHouse password is kept (the editor's secret storage, never settings.json). */
export const CLICKHOUSE_SECRET_KEY = 'gainline.clickhouse.password';

/** The column roles configured for a file (gainline.columnsByPattern) apply to a DuckDB-served file too. */
export async function engineSource(engine: SqlEngineName, uri: vscode.Uri, config: GainlineConfig, columns: Readonly<Record<string, string>> | undefined,
  secrets: vscode.SecretStorage | undefined): Promise<DumpSource> {
  if (engine === 'duckdb') {
    return {
      path: uri.fsPath,
      sqlEngine: 'duckdb',
      ...(columns ? { columns } : {}),
      ...(config.sql.duckdbMemoryLimit ? { memoryLimit: config.sql.duckdbMemoryLimit } : {}),
      ...(config.sql.duckdbPackageFolder ? { duckdbModule: config.sql.duckdbPackageFolder } : {}),
    };
  }
  const url = uri.toString(true);
  const user = config.sql.clickhouseUser ?? process.env[CLICKHOUSE_USER_VARIABLE];
  const password = (await secrets?.get(CLICKHOUSE_SECRET_KEY)) ?? process.env[CLICKHOUSE_PASSWORD_VARIABLE];
  return {
    path: url,
    sqlEngine: 'clickhouse',
    ...(config.sql.clickhouseColumns ? { columns: config.sql.clickhouseColumns } : {}),
    ...(config.sql.clickhouseOrderColumn ? { orderColumn: config.sql.clickhouseOrderColumn } : {}),
    ...(user !== undefined || password !== undefined ? { credentials: { ...(user !== undefined ? { user } : {}), ...(password !== undefined ? { password } : {}) } } : {}),
  };
}

/** Asks for a table URL, checked as the command line checks it; undefined when dismissed. */
export async function askTableUrl(last: string | undefined): Promise<vscode.Uri | undefined> {
  const text = await vscode.window.showInputBox({
    title: 'Open a ClickHouse table',
    prompt: 'clickhouse://HOST:PORT/DATABASE.TABLE (the HTTP interface; the password is set with "Gainline: Set ClickHouse Password")',
    placeHolder: 'clickhouse://127.0.0.1:8123/shop.search_rows',
    ...(last ? { value: last } : {}),
    ignoreFocusOut: true,
    validateInput: (value) => {
      try {
        parseClickHouseUrl(value.trim());
        return undefined;
      } catch (e) {
        return e instanceof Error ? e.message : String(e);
      }
    },
  });
  return text ? vscode.Uri.parse(text.trim(), true) : undefined;
}

/** Stores (or, given an empty answer, removes) the ClickHouse password in the secret storage. */
export async function askClickHousePassword(secrets: vscode.SecretStorage): Promise<void> {
  const password = await vscode.window.showInputBox({
    title: 'ClickHouse password',
    prompt: 'Kept in the editor\'s secret storage; leave empty to remove it',
    password: true,
    ignoreFocusOut: true,
  });
  if (password === undefined) return;
  if (password === '') await secrets.delete(CLICKHOUSE_SECRET_KEY);
  else await secrets.store(CLICKHOUSE_SECRET_KEY, password);
  void vscode.window.showInformationMessage(password === '' ? 'Gainline: the ClickHouse password was removed.' : 'Gainline: the ClickHouse password was stored.');
}
