/** What every screen may ask of the app shell. */
import type { ExportViewParams, ViewRequests } from '../../../extension/protocol/messages';

export interface AppContext {
  request<K extends keyof ViewRequests>(method: K, params: ViewRequests[K]['params']): Promise<ViewRequests[K]['result']>;
  /** Select a query and show it (detail in single mode, movement in compare mode). */
  openQuery(query: string, tab?: 'detail' | 'movement'): void;
  selectedQuery(): string | null;
  /** Ask the host to save or copy a table; reports the outcome in the status line. */
  exportTable(params: ExportViewParams): void;
  copyQuery(query: string, run?: 'a' | 'b'): void;
  notify(text: string, isError?: boolean): void;
}
