/**
 * Which column plays which part: found from common header names, or named by the user.
 */
import { InputError } from '../errors';

export interface ColumnRoles {
  query?: string;
  item?: string;
  label?: string;
  score?: string;
  rank?: string;
  /**
   * Roles the file may lack: the label when labels come from a judgments file, the score (and rank) when
   * the file read is itself a judgments table. Travels with the names to every reader and parse thread.
   */
  optional?: readonly ('label' | 'score')[];
  /**
   * What becomes of the columns without a role: kept as segment columns (default), or skipped unread by a
   * caller no view of which asks for segments (the command line's report without --segment or a queries
   * table): on 10M rows of two segment columns, 80 MB never written and their values never interned.
   * Delimited text skips them, since its every byte is checked whatever its column (source.ts). JSON Lines
   * of rows keeps none but still checks each value as a segment's (a lone surrogate; jsonLines.ts). Parquet
   * checks a value as it reads it (bytes that are not UTF-8), so it reads every text column either way (see
   * everyColumn), and skips only columns that hold no text (numbers, dates: parquet.ts, partsColumns). Every
   * reader accepts or refuses the same files with or without it (but for a damaged page in a skipped column).
   */
  others?: 'segments' | 'skipped';
}

/** The roles with every column read (`others` dropped): for the readers that check a value as they read it. */
export function everyColumn(columns: ColumnRoles | undefined): ColumnRoles | undefined {
  if (columns?.others === undefined) return columns;
  const { others: _others, ...rest } = columns;
  return rest;
}

export type Role = Exclude<keyof ColumnRoles, 'optional' | 'others'>;
export const ROLES: readonly Role[] = ['query', 'item', 'label', 'score', 'rank'];

/** Header names recognised per role, compared after `normaliseName`. Common practice in exported dumps. */
export const ROLE_NAMES: Readonly<Record<Role, readonly string[]>> = {
  query: ['query_id', 'qid', 'query', 'session_id', 'user_id'],
  item: ['item_id', 'doc_id', 'docno', 'product_id', 'item', 'doc', 'document_id'],
  label: ['label', 'relevance', 'rel', 'grade', 'rating'],
  score: ['score', 'prediction', 'pred'],
  rank: ['rank'],
};

/** Plural spellings used by list-per-line JSON (`{"query":…, "items":[…], …}`). */
export const LIST_ROLE_NAMES: Readonly<Record<Role, readonly string[]>> = {
  query: ROLE_NAMES.query,
  item: ['items', 'item_ids', 'doc_ids', 'docs', 'product_ids'],
  label: ['labels', 'relevances', 'rels', 'grades', 'ratings'],
  score: ['scores', 'predictions', 'preds'],
  rank: ['ranks'],
};

/** Column index per role (-1 when absent) and the columns left over as segments. */
export interface ResolvedRoles {
  readonly query: number;
  readonly item: number;
  readonly label: number;
  readonly score: number;
  readonly rank: number;
  readonly segments: readonly number[];
}

/** Where the header came from, for error messages. */
export interface HeaderPlace {
  readonly file: string;
  readonly line: number;
  readonly text: string;
}

export function normaliseName(name: string): string {
  return name.trim().toLowerCase().replace(/[\s_-]+/g, '');
}

/**
 * Assigns roles to header columns. Explicit names win; the other roles are found by name among the
 * columns not yet taken. query, item and label are required, and score unless a rank column stands in.
 */
export function resolveRoles(
  names: readonly string[],
  explicit: ColumnRoles | undefined,
  place: HeaderPlace,
  candidates: Readonly<Record<Role, readonly string[]>> = ROLE_NAMES,
): ResolvedRoles {
  const taken = new Map<number, Role>();
  const index: Record<Role, number> = { query: -1, item: -1, label: -1, score: -1, rank: -1 };
  for (const role of ROLES) {
    const wanted = explicit?.[role];
    if (wanted === undefined) continue;
    const at = names.findIndex((n) => n === wanted);
    const loose = at >= 0 ? at : names.findIndex((n) => normaliseName(n) === normaliseName(wanted));
    if (loose < 0) {
      throw new InputError(`a column named '${wanted}' for the ${role} (columns are: ${names.join(', ')})`, place.file, place.line, place.text);
    }
    if (taken.has(loose)) {
      throw new InputError(`different columns for ${taken.get(loose)} and ${role}, not both '${wanted}'`, place.file, place.line, place.text);
    }
    taken.set(loose, role);
    index[role] = loose;
  }
  for (const role of ROLES) {
    if (index[role] >= 0) continue;
    const accepted = new Set(candidates[role].map(normaliseName));
    const fits: number[] = [];
    names.forEach((n, i) => {
      if (!taken.has(i) && accepted.has(normaliseName(n))) fits.push(i);
    });
    if (fits.length > 1) {
      throw new InputError(
        `one ${role} column, but ${fits.map((i) => `'${names[i]}'`).join(' and ')} both fit; name it with columns ${role}=NAME`,
        place.file, place.line, place.text,
      );
    }
    if (fits.length === 1) {
      index[role] = fits[0]!;
      taken.set(fits[0]!, role);
    }
  }
  const optional = explicit?.optional ?? [];
  const missing = (['query', 'item', 'label'] as const).filter((r) => index[r] < 0 && !(r === 'label' && optional.includes('label')));
  if (index.score < 0 && index.rank < 0 && !optional.includes('score')) missing.push('score' as never);
  if (missing.length > 0) {
    const hints = missing.map((r) => `${r} (one of ${candidates[r].join(', ')})`).join('; ');
    throw new InputError(`a header naming the ${missing.join(', ')} column${missing.length > 1 ? 's' : ''}: ${hints}; or name them with --columns query=…,item=…,label=…,score=… (in the editor, the gainline.columnsByPattern setting)`,
      place.file, place.line, place.text);
  }
  const segments: number[] = [];
  names.forEach((_, i) => {
    if (!taken.has(i) && explicit?.others !== 'skipped') segments.push(i);
  });
  return { ...index, segments };
}

/** "query=sid,item=pid,label=grade,score=p" → roles. */
export function parseColumnRoles(text: string): ColumnRoles {
  const roles: ColumnRoles = {};
  const expected = `role=column pairs separated by commas, roles being ${ROLES.join(', ')} (e.g. query=sid,item=pid)`;
  const parts = text.split(',').map((p) => p.trim()).filter((p) => p.length > 0);
  if (parts.length === 0) throw new InputError(expected, undefined, undefined, text);
  for (const part of parts) {
    const eq = part.indexOf('=');
    const role = (eq > 0 ? part.slice(0, eq).trim().toLowerCase() : '') as Role;
    const column = eq > 0 ? part.slice(eq + 1).trim() : '';
    if (!ROLES.includes(role) || column.length === 0) throw new InputError(expected, undefined, undefined, part);
    if (roles[role] !== undefined) throw new InputError(`${role} named only once`, undefined, undefined, text);
    roles[role] = column;
  }
  return roles;
}
