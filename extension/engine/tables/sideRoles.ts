/**
 * Which column of a side table is the key, the text or title, and the weight. Found from header names
 * (case, spaces, `_` and `-` ignored, as for dumps) in the order listed: the first name that fits wins.
 */
import { InputError } from '../errors';
import { normaliseName } from '../readers/roles';
import type { TextTable } from './readTable';

export type SideKind = 'queries' | 'items';

/** Header names per side-table role, most specific first. Common practice in exported tables. */
export const SIDE_ROLE_NAMES = {
  queries: {
    key: ['query_id', 'qid', 'id'],
    text: ['text', 'query_text', 'query', 'question', 'search_term'],
  },
  items: {
    key: ['item_id', 'product_id', 'doc_id', 'docno', 'document_id', 'sku', 'id', 'item', 'doc'],
    text: ['title', 'name', 'item_title', 'product_title', 'product_name', 'text'],
  },
} as const;

/** A query weight column, in a queries table or in the dump. */
export const WEIGHT_NAMES = ['weight', 'query_weight'] as const;

export interface SideColumns {
  readonly key: number;
  /** Query text or item title; -1 when absent. */
  readonly text: number;
  /** Weight column (queries only); -1 when absent. */
  readonly weight: number;
  /** Every other column, in file order. */
  readonly attributes: readonly number[];
}

export function isWeightName(name: string): boolean {
  return WEIGHT_NAMES.some((w) => normaliseName(w) === normaliseName(name));
}

export function resolveSideColumns(table: TextTable, kind: SideKind): SideColumns {
  const names = table.names.map(normaliseName);
  const find = (candidates: readonly string[], not: number[]): number => {
    for (const c of candidates) {
      const at = names.findIndex((n, i) => n === normaliseName(c) && !not.includes(i));
      if (at >= 0) return at;
    }
    return -1;
  };
  const roles = SIDE_ROLE_NAMES[kind];
  let key = find(roles.key, []);
  // A queries table without an id column keyed by the query itself: `query` then is the key, not the text.
  if (key < 0 && kind === 'queries') key = find(['query'], []);
  if (key < 0) {
    const what = kind === 'queries' ? 'query id' : 'item id';
    throw new InputError(`a column naming the ${what} (one of ${roles.key.join(', ')}; columns are: ${table.names.join(', ')})`, table.file, table.headerLine || undefined);
  }
  const text = find(roles.text, [key]);
  const weight = kind === 'queries' ? table.names.findIndex((n, i) => i !== key && i !== text && isWeightName(n)) : -1;
  const attributes: number[] = [];
  table.names.forEach((_, i) => {
    if (i !== key && i !== text && i !== weight) attributes.push(i);
  });
  return { key, text, weight, attributes };
}
