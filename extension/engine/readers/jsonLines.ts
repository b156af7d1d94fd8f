/**
 * JSON Lines, in one of two shapes learnt from the first lines (up to SHAPE_LINES lines with a value, within
 * the first HEAD_BYTES bytes, and at least LONG_SHAPE_LINES of long lines: see shapesFrom; every key any of
 * them writes, so a grade written only on judged rows is a column as long as one of them is judged):
 * - one row per line: `{"query_id": "q1", "item_id": "sku-1", "label": 2, "score": 0.4, "locale": "en"}`
 * - one list per line: `{"query": "q1", "items": [...], "labels": [...], "scores": [...]}` (equal lengths)
 * Every row of a list shares the list's line number and byte offset. A line whose roles read as one row,
 * with an item that is not an array, is a row even when other fields hold arrays or objects (a feature
 * vector, an embedding, request details): those fields are not segments, and are read past.
 */
import { engineSettings } from '../config';
import { isWellFormedText } from './textCheck';
import { InputError } from '../errors';
import type { RankedDump } from '../model/dump';
import { RowColumns, type SharedColumns } from './columns';
import type { ReadOptions } from './readOptions';
import { describeNonNumberText, parseNumberText } from './numbers';
import { everyColumn, LIST_ROLE_NAMES, resolveRoles, ROLES, type ResolvedRoles } from './roles';
import { LineSink, pumpText, textSizeHint } from './source';
import { FlatRowScanner } from './jsonLinesFast';
import { unreadFieldsMessage, UnreadFieldsTally, type UnreadFields } from './unreadFields';

type Json = Record<string, unknown>;

/** What a range of a file read in ranges is told of the file's lines (learnt from its head). */
export interface JsonShape {
  readonly keys: readonly string[];
  readonly list: boolean;
  readonly nested: readonly string[];
}

/** Bytes per item id, a first guess for the row texts' store. */
const ITEM_BYTES_GUESS = 16;
/** Lines read before the columns are sized for the whole file. */
const SIZE_AFTER_LINES = 4096;
/** Lines with a value whose keys make the shape (fewer when they end past HEAD_BYTES: see shapesFrom). */
export const SHAPE_LINES = 256;

interface Shape {
  readonly list: boolean;
  readonly keys: readonly string[];
  /** Rows only: the keys whose first-line value is an array or object, read past rather than kept as segments. */
  readonly nested: readonly string[];
  /** Rows whose other fields are skipped: the key indices that would be segments, checked as segments are but not kept. */
  readonly checkedOnly: readonly number[];
  readonly roles: ResolvedRoles;
  readonly rankStandsInForScore: boolean;
}

/** Reads JSON Lines on this thread (a large plain file may be read in ranges first: see readers/index.ts). */
export async function readJsonLines(path: string, options: ReadOptions): Promise<RankedDump> {
  const parser = new JsonLinesParser(path, options.columns, await textSizeHint(path));
  const lines = new LineSink((buf, start, end, line, offset) => parser.acceptLine(buf, start, end, line, offset));
  const stamp = await pumpText(path, lines, { signal: options.signal, onProgress: options.onProgress });
  parser.end();
  const rows = parser.rows;
  if (rows === undefined || rows.count === 0) throw emptyJsonLines(path);
  rows.countGaps();
  parser.noteUnreadFields();
  return rows.finish(path, 'jsonl', stamp);
}

/** The error of a JSON Lines file with no row. */
export function emptyJsonLines(path: string): InputError {
  return new InputError('at least one row in the JSON Lines file (the file is empty)', path);
}

/**
 * The lines the shape is learnt from: up to SHAPE_LINES lines ending within the first HEAD_BYTES, and at
 * least the first LONG_SHAPE_LINES wherever they end within LONG_LINES_BYTES (a file of one query per line,
 * each holding thousands of items and their features, writes lines of a megabyte and more: learnt from its
 * first line alone, a grade that line lacks was refused). `lineEnd`: where the line ends, with room for a
 * carriage return and a newline; `held`: the lines taken before it. A read in ranges learns from a head that
 * holds the same lines (jsonLinesHead.ts), so both read the same shape.
 */
export function shapesFrom(held: number, lineEnd: number): boolean {
  return (held < SHAPE_LINES && lineEnd <= HEAD_BYTES) || (held < LONG_SHAPE_LINES && lineEnd <= LONG_LINES_BYTES);
}

/** The bytes of a file the first SHAPE_LINES lines must end within. */
export const HEAD_BYTES = 1 << 20;
/** Lines the shape is learnt from at least, however long (within LONG_LINES_BYTES): lines of lists run to megabytes. */
export const LONG_SHAPE_LINES = 16;
/** How far into a file the shape's lines may reach (the head a read in ranges reads first grows to this at most). */
export const LONG_LINES_BYTES = 16 << 20;

/** A line held, parsed, until the shape is learnt. */
interface HeldLine {
  readonly obj: Json;
  readonly text: string;
  readonly line: number;
  readonly offset: number;
}

/**
 * Parses JSON Lines line by line (acceptLine, then end). The first lines with a value set the shape (they
 * are held until then); a range of a file read in ranges (rangeParse.ts) is given the file's shape instead,
 * and writes to its shared slice.
 */
export class JsonLinesParser {
  rows: RowColumns | undefined;
  private shape: Shape | undefined;
  /** Line being parsed, for error messages and each row's line. */
  private line = 0;
  /** The byte loop for plain lines of one row each (jsonLinesFast.ts), once the first lines set the keys. */
  private fast: FlatRowScanner | undefined;
  /** Lines read before the shape is learnt from them. */
  private held: HeldLine[] = [];
  /** The shape's keys, to find the fields a later line holds that the shape lacks. */
  private keySet = new Set<string>();
  /** Lines holding keys the shape lacks (unreadFields.ts). */
  private readonly unread = new UnreadFieldsTally();

  constructor(
    private readonly file: string,
    private readonly columns: ReadOptions['columns'],
    private readonly fileBytes: number,
    /** A range's: the shape of the file (its first line's keys, whether lines hold lists, which keys are nested), and the shared slice its rows go to. */
    range?: JsonShape & { readonly shared?: SharedColumns },
  ) {
    if (range !== undefined) this.adoptShape(range.keys, range.list, range.nested, { file, line: 0, text: '' }, range.shared);
  }

  /** The shape the first line set (or the range was given). */
  get learnedShape(): JsonShape | undefined {
    return this.shape;
  }

  acceptLine(buf: Buffer, start: number, end: number, line: number, offset: number): void {
    this.line = line;
    // Sized once from the bytes per row so far (a compressed file's size only makes the guess short), not
    // grown by half again and copied time after time: 0.8 s of 8 on 10M rows. A range's shared slice is sized already.
    if (line === SIZE_AFTER_LINES && this.rows !== undefined && this.rows.count > 0 && this.rows.shared === undefined) {
      this.rows.reserve((this.fileBytes / offset) * this.rows.count * 1.05);
    }
    const fast = this.fast;
    if (fast !== undefined && fast.store(buf, start, end, this.rows!, line, offset)) {
      if (fast.extraFields > 0) fast.tallyExtraKeys(this.unread, line, buf);
      return;
    }
    const text = buf.toString('utf8', start, end).trim();
    if (text.length === 0) return;
    if (this.shape !== undefined) {
      this.storeObject(this.parseObject(text), offset, text);
      return;
    }
    // The first lines are held for the shape (shapesFrom).
    const obj = this.parseObject(text);
    const inHead = shapesFrom(this.held.length, offset + (end - start) + 2);
    if (!inHead && this.held.length > 0) {
      this.end();
      this.storeObject(obj, offset, text);
      return;
    }
    this.held.push({ obj, text, line, offset });
    if (!inHead || this.held.length === SHAPE_LINES) this.end();
  }

  /** Learns the shape from the lines held, if it is not learnt yet, and stores them. Called after the last line. */
  end(): void {
    if (this.shape !== undefined || this.held.length === 0) return;
    const held = this.held;
    const current = this.line;
    this.held = [];
    this.line = held[0]!.line;
    this.learnShape(held.map((h) => h.obj), held[0]!.text);
    for (const h of held) {
      this.line = h.line;
      this.storeObject(h.obj, h.offset, h.text);
    }
    this.line = current;
  }

  /** Lines holding keys the shape lacks: how many, the first, the first few keys (undefined when none). */
  get unreadFields(): UnreadFields | undefined {
    return this.unread.counted;
  }

  /** Adds the note on fields the shape lacks to the rows' notes (a range's count is merged by its caller instead). */
  noteUnreadFields(): void {
    const counted = this.unreadFields;
    if (counted !== undefined) this.rows!.notes.messages.push(unreadFieldsMessage(counted, SHAPE_LINES));
  }

  private parseObject(text: string): Json {
    let value: unknown;
    try {
      value = JSON.parse(text);
    } catch (err) {
      throw new InputError(`a JSON object on each line (${(err as Error).message})`, this.file, this.line, text);
    }
    if (value === null || typeof value !== 'object' || Array.isArray(value)) {
      throw new InputError('a JSON object on each line', this.file, this.line, text);
    }
    return value as Json;
  }

  private storeObject(obj: Json, offset: number, text: string): void {
    const shape = this.shape!;
    let extra: string[] | undefined;
    for (const key in obj) if (!this.keySet.has(key)) (extra ??= []).push(key);
    if (extra !== undefined) {
      this.unread.addLine(this.line);
      for (const key of extra) this.unread.addKey(key);
    }
    if (shape.list) this.storeList(obj, shape, offset, text);
    else this.storeRow(obj, shape, offset, text);
  }

  /**
   * Rows unless a field of the first line holds an array and the roles do not read as one row whose item is
   * a plain value (then lists, under the list names: items, labels, scores). The keys are every key of
   * `objs`, each new one placed after the key written before it on its line, so that lines with and
   * without it (a grade on judged rows only) both follow the order (the byte loop reads keys in order).
   */
  private learnShape(objs: readonly Json[], text: string): Shape {
    const obj = objs[0]!;
    const present: string[] = [];
    for (const o of objs) {
      let after = -1;
      for (const key of Object.keys(o)) {
        let at = present.indexOf(key);
        if (at < 0) present.splice((at = after + 1), 0, key);
        after = at;
      }
    }
    // A key named for a role in --columns but absent from the first line (a grade written only on judged
    // rows): rows read it where a line has it, and as missing where not.
    const named = ROLES.map((role) => this.columns?.[role]).filter((k): k is string => k !== undefined && !present.includes(k));
    const keys = [...present, ...new Set(named)];
    const at = { file: this.file, line: this.line, text };
    const nested = present.filter((k) => objs.some((o) => o[k] !== null && typeof o[k] === 'object'));
    const list = nested.some((k) => Array.isArray(obj[k])) && !this.readsAsRow(keys, obj, at);
    return this.adoptShape(list ? present : keys, list, list ? [] : nested, at);
  }

  private readsAsRow(keys: readonly string[], obj: Json, at: { file: string; line: number; text: string }): boolean {
    let roles: ResolvedRoles;
    try {
      roles = resolveRoles(keys, everyColumn(this.columns), at);
    } catch {
      return false;
    }
    return [roles.query, roles.item, roles.label, roles.score, roles.rank].every((i) => i < 0 || !Array.isArray(obj[keys[i]!]));
  }

  private adoptShape(keys: readonly string[], list: boolean, nested: readonly string[], at: { file: string; line: number; text: string },
    shared?: SharedColumns): Shape {
    const resolved = resolveRoles(keys, everyColumn(this.columns), at, list ? LIST_ROLE_NAMES : undefined);
    const segments = resolved.segments.filter((i) => !nested.includes(keys[i]!));
    // Rows whose other fields are not kept (the command line's report without segments): their values are still
    // checked as a segment's are (checkedOnly), so the same files are accepted or refused either way.
    const skipped = !list && this.columns?.others === 'skipped';
    const roles = { ...resolved, segments: skipped ? [] : segments };
    // Item bytes kept per row, not interned dump-wide (model/rowTexts.ts): millions of distinct ids cost a
    // table lookup per row that misses the caches; scoring needs only keys within each query.
    const rows = new RowColumns(roles.segments.map((i) => keys[i]!), 1024, shared, ITEM_BYTES_GUESS);
    if (roles.rank >= 0) {
      rows.notes.messages.push(roles.score < 0
        ? `no score field: ranked by '${keys[roles.rank]}' (score = -rank)`
        : `ranked by score; the rank field '${keys[roles.rank]}' is ignored`);
    }
    this.rows = rows;
    const checkedOnly = skipped ? segments : [];
    this.keySet = new Set(keys);
    this.shape = { list, keys, nested, roles, checkedOnly, rankStandsInForScore: roles.score < 0 };
    if (!list && engineSettings().tuning.jsonLinesFastRows) this.fast = new FlatRowScanner(keys, roles, roles.score < 0, checkedOnly);
    return this.shape;
  }

  private storeRow(obj: Json, shape: Shape, offset: number, text: string): void {
    const rows = this.rows!;
    const { keys, roles } = shape;
    const row = rows.next();
    rows.query[row] = rows.queries.internString(this.id(obj[keys[roles.query]!], keys[roles.query]!, text));
    rows.setItemText(row, this.id(obj[keys[roles.item]!], keys[roles.item]!, text));
    rows.label[row] = roles.label >= 0 ? this.number(obj[keys[roles.label]!], keys[roles.label]!, false, text) : NaN;
    rows.score[row] = roles.score < 0 && roles.rank < 0 ? NaN : this.scoreOf(obj, shape, text);
    rows.line[row] = this.line;
    rows.offset[row] = offset;
    roles.segments.forEach((column, k) => {
      rows.segmentIds[k]![row] = rows.segmentPools[k]!.internString(this.segment(obj[keys[column]!], keys[column]!, text));
    });
    for (const column of shape.checkedOnly) this.segment(obj[keys[column]!], keys[column]!, text);
  }

  private storeList(obj: Json, shape: Shape, offset: number, text: string): void {
    const rows = this.rows!;
    const { keys, roles } = shape;
    const query = rows.queries.internString(this.id(obj[keys[roles.query]!], keys[roles.query]!, text));
    const items = this.array(obj, keys[roles.item]!, text);
    // A missing label (labels from a judgments file) or score (a judgments table) reads as NaN per item.
    const labels = roles.label >= 0 ? this.array(obj, keys[roles.label]!, text) : new Array<undefined>(items.length);
    const numberKey = roles.score >= 0 ? keys[roles.score]! : roles.rank >= 0 ? keys[roles.rank]! : undefined;
    const scores = numberKey !== undefined ? this.array(obj, numberKey, text) : new Array<undefined>(items.length);
    if (labels.length !== items.length || scores.length !== items.length) {
      throw new InputError(`arrays of equal length (${keys[roles.item]}: ${items.length}, ${keys[roles.label]}: ${labels.length}, ${numberKey}: ${scores.length})`,
        this.file, this.line, text);
    }
    for (let i = 0; i < items.length; i++) {
      const row = rows.next();
      rows.query[row] = query;
      rows.setItemText(row, this.id(items[i], keys[roles.item]!, text));
      rows.label[row] = roles.label >= 0 ? this.number(labels[i], keys[roles.label]!, false, text) : NaN;
      const score = numberKey !== undefined ? this.number(scores[i], numberKey, true, text) : NaN;
      rows.score[row] = shape.rankStandsInForScore ? -score : score;
      rows.line[row] = this.line;
      rows.offset[row] = offset;
      roles.segments.forEach((column, k) => {
        const v = obj[keys[column]!];
        rows.segmentIds[k]![row] = rows.segmentPools[k]!.internString(this.segment(Array.isArray(v) ? v[i] : v, keys[column]!, text));
      });
    }
  }

  private scoreOf(obj: Json, shape: Shape, text: string): number {
    const { keys, roles } = shape;
    if (!shape.rankStandsInForScore) return this.number(obj[keys[roles.score]!], keys[roles.score]!, true, text);
    return -this.number(obj[keys[roles.rank]!], keys[roles.rank]!, true, text);
  }

  private array(obj: Json, key: string, text: string): unknown[] {
    const v = obj[key];
    if (!Array.isArray(v)) throw new InputError(`an array in field '${key}'`, this.file, this.line, text);
    return v;
  }

  private id(v: unknown, key: string, text: string): string {
    if (typeof v === 'string') return this.wellFormed(v, key, text);
    if (typeof v === 'number' || typeof v === 'bigint') return String(v);
    throw new InputError(`a string or number in field '${key}'`, this.file, this.line, text);
  }

  /** Segment values are compared as UTF-8 like ids, so they obey the same rule. */
  private segment(v: unknown, key: string, text: string): string {
    return this.wellFormed(segmentText(v), key, text);
  }

  private wellFormed(v: string, key: string, text: string): string {
    if (isWellFormedText(v)) return v;
    throw new InputError(`text without lone UTF-16 surrogates in field '${key}' (an escape such as \\ud800 has no UTF-8 form; values are compared as UTF-8)`,
      this.file, this.line, text);
  }

  private number(v: unknown, key: string, isScore: boolean, _text: string): number {
    if (v === null || v === undefined) return NaN;
    if (typeof v === 'number') {
      if (Number.isFinite(v)) return v;
      if (isScore) return NaN;
    } else if (typeof v === 'string') {
      const parsed = parseNumberText(v);
      if (Number.isFinite(parsed)) return parsed;
      const kind = Number.isNaN(parsed) ? describeNonNumberText(v) : 'infinite';
      if (kind === 'missing' || (kind === 'infinite' && isScore)) return NaN;
    }
    throw new InputError(`a ${isScore ? '' : 'finite '}number in field '${key}'`, this.file, this.line, JSON.stringify(v) ?? String(v));
  }
}

function segmentText(v: unknown): string {
  if (v === null || v === undefined) return '';
  return typeof v === 'string' ? v : JSON.stringify(v);
}
