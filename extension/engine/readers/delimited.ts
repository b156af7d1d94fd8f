/**
 * CSV / TSV with a header row, parsed byte by byte. Quoted fields may hold delimiters, doubled
 * quotes and newlines (RFC 4180); CRLF line ends are accepted; blank lines are skipped.
 *
 * Each record is first cut into field bounds without side effects, so a record split across two
 * chunks is simply retried with the next chunk; only complete records touch the pools and columns.
 */
import { InputError, UnclosedQuoteError } from '../errors';
import { hashBytes } from '../model/bytePool';
import type { RowTexts } from '../model/rowTexts';
import { indexOfByte } from './byteSearch';
import { RowColumns, type SharedColumns } from './columns';
import { describeNonNumber, parseNumber } from './numbers';
import { resolveRoles, type ColumnRoles } from './roles';
import type { RecordSink } from './source';
import { SimpleRecordsKernel } from './simpleRecordsKernel';
/** Starting room per row for item bytes; the arena grows past it. */
const ITEM_BYTES_GUESS = 16;

import { parseSimpleRecords, ROLE_ITEM, ROLE_LABEL, ROLE_QUERY, ROLE_RANK, ROLE_SCORE, ROLE_SEGMENT, type FastState } from './delimitedFast';

const QUOTE = 34;
const LF = 10;
const CR = 13;


export interface DelimitedSettings {
  readonly file: string;
  readonly delimiter: number;
  readonly columns?: ColumnRoles;
  /** Total decompressed size when known, to size the columns once. */
  readonly expectedBytes?: number;
  /** Shared buffers to write rows into (parse workers); no up-front sizing is done then. */
  readonly shared?: SharedColumns;
  /** A store for the rows' item bytes to reuse (cleared first) instead of allocating one: a stream thread's blocks. */
  readonly itemTexts?: RowTexts;
  /** First line number of the first record (>1 when a worker parses a later byte range). */
  readonly firstLine?: number;
  /**
   * Plain records instead of dump rows: no roles are resolved and no columns are built; each record's
   * fields go to `record` as text (side tables of queries and items use this).
   */
  readonly plain?: PlainRecordSink;
}

/** Receives the header and each record of a delimited file as text (see DelimitedSettings.plain). */
export interface PlainRecordSink {
  header(names: readonly string[], line: number, text: string): void;
  record(fields: readonly string[], line: number): void;
}

export class DelimitedParser implements RecordSink, FastState {
  private fieldStart = new Int32Array(64);
  private fieldEnd = new Int32Array(64);
  /** 1 when the field was quoted and holds doubled quotes to undo. */
  private fieldEscaped = new Uint8Array(64);
  private fieldCount = 0;
  private recordLines = 0;
  private scratch = Buffer.alloc(256);
  line: number;
  private names: string[] | undefined;
  roleOf = new Int32Array(0);
  rows: RowColumns | undefined;
  rankStandsInForScore = false;
  lastQuery = -1;
  lastSegment = new Int32Array(0);
  readonly delimiter: number;
  private bytesSeen = 0;
  private sized = false;
  /** The WebAssembly loop for simple records, when compiled (set with the header). */
  private kernel: SimpleRecordsKernel | undefined;

  constructor(private readonly settings: DelimitedSettings, header?: { names: string[] }) {
    this.line = settings.firstLine ?? 1;
    this.delimiter = settings.delimiter;
    if (header) this.setHeader(header.names, '');
  }

  /** Columns parsed so far; undefined until the header has been read. */
  get columns(): RowColumns | undefined {
    return this.rows;
  }

  get headerNames(): string[] | undefined {
    return this.names;
  }

  feed(buf: Buffer, start: number, end: number, base: number, final: boolean): number {
    let pos = start;
    // Records before `lineLimit` are complete; before `quoteLine` they hold no quote byte (looked for without the kernel).
    const lineLimit = final ? end : Math.max(start, buf.lastIndexOf(LF, end - 1) + 1);
    let quoteAt = -1;
    let quoteLine = start;
    while (pos < end) {
      if (this.rows !== undefined && pos < lineLimit) {
        // The kernel takes simply quoted ids itself and leaves other quoted records to the loop below; the
        // JavaScript loop stops at every quoted record, so it is not called on lines holding a quote.
        let limit = lineLimit;
        if (this.kernel === undefined) {
          if (quoteAt < pos) {
            quoteAt = indexOfByte(buf, QUOTE, pos, end);
            if (quoteAt < 0) quoteAt = end;
            quoteLine = quoteAt === end ? end : buf.lastIndexOf(LF, quoteAt) + 1;
          }
          limit = Math.min(lineLimit, quoteLine);
        }
        if (pos < limit) {
          pos = this.kernel ? this.kernel.parse(this, buf, pos, limit, base) : parseSimpleRecords(this, buf, pos, limit, base);
          if (pos >= end) break;
        }
      }
      const c = buf[pos]!;
      if (c === LF) {
        pos++;
        this.line++;
        continue;
      }
      if (c === CR && (pos + 1 < end ? buf[pos + 1] === LF : final)) {
        pos += pos + 1 < end ? 2 : 1;
        this.line++;
        continue;
      }
      const next = this.cutRecord(buf, pos, end, final);
      if (next < 0) break;
      if (this.names === undefined) this.readHeader(buf, pos, next);
      else this.storeRecord(buf, pos, next, base);
      this.line += this.recordLines;
      pos = next;
    }
    this.bytesSeen += pos - start;
    if (!this.sized && this.rows && this.settings.expectedBytes && !this.settings.shared && this.rows.count > 1000) {
      // Size the columns once from the bytes per row seen so far, instead of growing repeatedly.
      this.sized = true;
      this.rows.reserve((this.rows.count / this.bytesSeen) * this.settings.expectedBytes * 1.05 + 1024);
    }
    if (final) {
      if (this.names === undefined) throw new InputError('a header row naming the columns (the file is empty)', this.settings.file);
    }
    return pos;
  }

  /**
   * Finds the fields of the record starting at `pos`; returns the position after its line end, or
   * -1 when the record is not complete in this buffer.
   */
  private cutRecord(buf: Buffer, pos: number, end: number, final: boolean): number {
    const delimiter = this.settings.delimiter;
    let field = 0;
    let lines = 0;
    for (;;) {
      if (field === this.fieldStart.length) this.growFields();
      if (pos < end && buf[pos] === QUOTE) {
        let escaped = 0;
        let q = pos + 1;
        for (;;) {
          while (q < end && buf[q] !== QUOTE) {
            if (buf[q] === LF) lines++;
            q++;
          }
          if (q >= end) {
            if (!final) return -1;
            throw new UnclosedQuoteError('a closing quote before the end of the file', this.settings.file, this.line, latin1Head(buf, pos, end));
          }
          if (q + 1 < end && buf[q + 1] === QUOTE) {
            escaped = 1;
            q += 2;
            continue;
          }
          if (q + 1 >= end && !final) return -1;
          break;
        }
        this.fieldStart[field] = pos + 1;
        this.fieldEnd[field] = q;
        this.fieldEscaped[field] = escaped;
        pos = q + 1;
        // Text after the closing quote up to the delimiter is not valid CSV; tolerate a CR only.
        if (pos < end && buf[pos] === CR) pos++;
        if (pos < end && buf[pos] !== delimiter && buf[pos] !== LF) {
          throw new InputError('a delimiter or line end right after a closing quote', this.settings.file, this.line + lines, latin1Head(buf, pos, end));
        }
      } else {
        const fieldStart = pos;
        let c = 0;
        while (pos < end) {
          c = buf[pos]!;
          if (c === delimiter || c === LF) break;
          pos++;
        }
        if (pos >= end && !final) return -1;
        this.fieldStart[field] = fieldStart;
        this.fieldEnd[field] = pos > fieldStart && buf[pos - 1] === CR && (pos >= end || c === LF) ? pos - 1 : pos;
        this.fieldEscaped[field] = 0;
      }
      field++;
      if (pos >= end) break;
      if (buf[pos] === LF) {
        pos++;
        lines++;
        break;
      }
      pos++; // delimiter
      if (pos >= end) {
        if (!final) return -1;
        if (field === this.fieldStart.length) this.growFields();
        this.fieldStart[field] = pos;
        this.fieldEnd[field] = pos;
        this.fieldEscaped[field] = 0;
        field++;
        break;
      }
    }
    this.fieldCount = field;
    this.recordLines = lines;
    return pos;
  }

  private growFields(): void {
    const n = this.fieldStart.length * 2;
    const s = new Int32Array(n);
    s.set(this.fieldStart);
    this.fieldStart = s;
    const e = new Int32Array(n);
    e.set(this.fieldEnd);
    this.fieldEnd = e;
    const x = new Uint8Array(n);
    x.set(this.fieldEscaped);
    this.fieldEscaped = x;
  }

  private readHeader(buf: Buffer, recordStart: number, recordEnd: number): void {
    const names: string[] = [];
    for (let f = 0; f < this.fieldCount; f++) names.push(this.fieldText(buf, f));
    this.setHeader(names, buf.toString('utf8', recordStart, recordEnd).replace(/\r?\n$/, ''));
  }

  private setHeader(names: string[], headerText: string): void {
    if (this.settings.plain) {
      this.names = names;
      this.settings.plain.header(names, this.line, headerText);
      return;
    }
    const roles = resolveRoles(names, this.settings.columns, { file: this.settings.file, line: this.line, text: headerText });
    this.names = names;
    this.roleOf = new Int32Array(names.length).fill(-1);
    this.roleOf[roles.query] = ROLE_QUERY;
    this.roleOf[roles.item] = ROLE_ITEM;
    this.roleOf[roles.label] = ROLE_LABEL;
    if (roles.score >= 0) this.roleOf[roles.score] = ROLE_SCORE;
    this.rankStandsInForScore = roles.score < 0;
    if (roles.rank >= 0) this.roleOf[roles.rank] = ROLE_RANK;
    roles.segments.forEach((column, k) => {
      this.roleOf[column] = ROLE_SEGMENT + k;
    });
    // Item bytes stay per row (see model/rowTexts.ts): scoring needs no dump-wide item ids.
    this.rows = new RowColumns(roles.segments.map((i) => names[i]!), 1024, this.settings.shared, ITEM_BYTES_GUESS, this.settings.itemTexts);
    this.lastSegment = new Int32Array(roles.segments.length).fill(-1);
    this.kernel = SimpleRecordsKernel.create(this.roleOf, this.rows.itemTexts !== undefined);
    if (roles.rank >= 0) {
      this.rows.notes.messages.push(this.rankStandsInForScore
        ? `no score column: ranked by '${names[roles.rank]}' (score = -rank)`
        : `ranked by score; the rank column '${names[roles.rank]}' is ignored`);
    }
  }

  private storeRecord(buf: Buffer, recordStart: number, recordEnd: number, base: number): void {
    if (this.settings.plain) {
      this.storePlain(buf, recordStart, recordEnd);
      return;
    }
    const rows = this.rows!;
    const n = this.fieldCount;
    if (n !== this.roleOf.length) {
      throw new InputError(`${this.roleOf.length} fields as in the header, not ${n}`, this.settings.file, this.line,
        buf.toString('utf8', recordStart, Math.min(recordEnd, recordStart + 200)).replace(/\r?\n$/, ''));
    }
    const row = rows.next();
    let label = NaN;
    let score = NaN;
    for (let f = 0; f < n; f++) {
      const role = this.roleOf[f]!;
      let bytes: Uint8Array = buf;
      let s = this.fieldStart[f]!;
      let e = this.fieldEnd[f]!;
      if (this.fieldEscaped[f] === 1) {
        bytes = this.unescape(buf, s, e);
        s = 0;
        e = this.scratchLength;
      }
      if (role === ROLE_QUERY) {
        const last = this.lastQuery;
        rows.query[row] = last >= 0 && rows.queries.matches(last, bytes, s, e) ? last : (this.lastQuery = rows.queries.intern(bytes, s, e));
      } else if (role === ROLE_ITEM) {
        if (rows.itemTexts !== undefined) {
          rows.item[row] = hashBytes(bytes, s, e);
          rows.itemTexts.add(bytes, s, e);
        } else rows.item[row] = rows.items.intern(bytes, s, e);
      } else if (role === ROLE_LABEL) {
        label = this.number(bytes, s, e, f, false);
      } else if (role === ROLE_SCORE) {
        score = this.number(bytes, s, e, f, true);
      } else if (role === ROLE_RANK) {
        if (this.rankStandsInForScore) score = -this.number(bytes, s, e, f, true);
      } else if (role >= ROLE_SEGMENT) {
        // Segment values repeat in runs (one locale per query), so try the previous value first.
        const k = role - ROLE_SEGMENT;
        const pool = rows.segmentPools[k]!;
        const last = this.lastSegment[k]!;
        rows.segmentIds[k]![row] = last >= 0 && pool.matches(last, bytes, s, e) ? last : (this.lastSegment[k] = pool.intern(bytes, s, e));
      }
    }
    rows.label[row] = label;
    rows.score[row] = score;
    rows.line[row] = this.line;
    rows.offset[row] = base + recordStart;
  }

  private storePlain(buf: Buffer, recordStart: number, recordEnd: number): void {
    const expected = this.names!.length;
    if (this.fieldCount !== expected) {
      throw new InputError(`${expected} fields as in the header, not ${this.fieldCount}`, this.settings.file, this.line,
        buf.toString('utf8', recordStart, Math.min(recordEnd, recordStart + 200)).replace(/\r?\n$/, ''));
    }
    const fields: string[] = [];
    for (let f = 0; f < this.fieldCount; f++) fields.push(this.fieldText(buf, f));
    this.settings.plain!.record(fields, this.line);
  }

  private number(bytes: Uint8Array, s: number, e: number, field: number, isScore: boolean): number {
    const v = parseNumber(bytes, s, e);
    if (v - v === 0) return v;
    const kind = v !== v ? describeNonNumber(bytes, s, e) : 'infinite';
    if (kind === 'missing' || (kind === 'infinite' && isScore)) return NaN;
    throw new InputError(`a ${isScore ? '' : 'finite '}number in column '${this.names![field]}'`, this.settings.file, this.line,
      Buffer.from(bytes.buffer, bytes.byteOffset + s, e - s).toString('utf8'));
  }

  private scratchLength = 0;

  /** Copies a quoted field with doubled quotes undone into the scratch buffer. */
  private unescape(buf: Buffer, s: number, e: number): Buffer {
    if (this.scratch.length < e - s) this.scratch = Buffer.alloc((e - s) * 2);
    let o = 0;
    for (let i = s; i < e; i++) {
      const c = buf[i]!;
      this.scratch[o++] = c;
      if (c === QUOTE) i++;
    }
    this.scratchLength = o;
    return this.scratch;
  }

  private fieldText(buf: Buffer, f: number): string {
    const s = this.fieldStart[f]!;
    const e = this.fieldEnd[f]!;
    if (this.fieldEscaped[f] === 1) return this.unescape(buf, s, e).toString('utf8', 0, this.scratchLength);
    return buf.toString('utf8', s, e);
  }
}

function latin1Head(buf: Buffer, s: number, e: number): string {
  return buf.toString('utf8', s, Math.min(e, s + 60));
}
