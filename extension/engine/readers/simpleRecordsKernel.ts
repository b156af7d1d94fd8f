/**
 * Runs the WebAssembly record kernel (kernel/simpleRecords.ts) over delimited text and interns what
 * it found: the same contract as parseSimpleRecords in delimitedFast.ts, and the same rows, ids,
 * lines and offsets to the bit. Text is copied into the kernel's memory a piece at a time (each piece
 * ends at a line start); a record the kernel is unsure about (a number that is not a plain decimal,
 * a wrong field count) is handed to parseSimpleRecords, and anything that one refuses goes back to
 * the careful parser, as before. Without the compiled kernel (a test that did not build it) callers
 * fall back to parseSimpleRecords alone.
 */
import { engineActivity, engineSettings } from '../config';
import type { BytePool } from '../model/bytePool';
import { instantiateKernel, kernelModule, type WasmModule } from '../wasmKernels';
import type { RowColumns } from './columns';
import { parseSimpleRecords, POW10, ROLE_ITEM, ROLE_QUERY, ROLE_SEGMENT, type FastState } from './delimitedFast';

interface KernelExports {
  layout(roles: number, pow10: number, previous: number, fields: number, idSlot: number, idStart: number, idEnd: number,
    idHash: number, label: number, score: number, line: number, start: number, rows: number, itemBytes: number, itemEnd: number,
    changes: number, changeCount: number, summary: number): void;
  parse(pos: number, limit: number, delimiter: number, line: number, rankIsScore: number): number;
  stoppedAt(): number;
  lineAfter(): number;
  /** Where the kernel's static data ends. */
  dataEnd(): number;
}

/** Bytes at the start of the kernel's memory kept for its static data. */
const STATIC_ROOM = 32 * 1024;

let lastMade: { readonly module: WasmModule; readonly key: string; readonly kernel: SimpleRecordsKernel } | undefined;

/** After the kernel stops early this often in a row, the JavaScript loop takes longer runs (e.g. every score has an exponent). */
const JS_RUN_AFTER_SHORT_CALL = 256;
/** The least text copied in for a call after one that stopped early. */
const SMALL_PIECE = 4096;

const align = (n: number) => (n + 7) & ~7;

export class SimpleRecordsKernel {
  private readonly kernel: KernelExports;
  private readonly input: number;
  private readonly bytes: Uint8Array;
  private readonly idStart: Int32Array;
  private readonly idEnd: Int32Array;
  private readonly idHash: Int32Array;
  private readonly label: Float64Array;
  private readonly score: Float64Array;
  private readonly line: Uint32Array;
  private readonly start: Uint32Array;
  /** The item fields of a call's rows, one after another, and where each row's ends (when asked for). */
  private readonly itemBytesAt: number;
  private readonly itemEnd: Uint32Array;
  /** Per id slot: the rows of a call whose query or segment bytes differ from the row before, and how many. */
  private readonly changes: Int32Array;
  private readonly changeCount: Int32Array;
  /** The last call's rows without a grade, rows without a score, lowest and highest grade. */
  private readonly summary: Float64Array;
  /** Per field: the role and, for id fields, the output slot. */
  private readonly fields: { role: number; slot: number }[];
  private readonly records = new Int32Array(64);
  /** The hashes of a batch of listed rows (internRuns). */
  private readonly batchHashes = new Int32Array(64);
  private readonly rowsPerCall = engineSettings().tuning.kernelRowsPerCall;
  private readonly pieceBytes = engineSettings().tuning.kernelPieceBytes;
  /** The next piece's size: the whole room, or less after calls that stopped early. */
  private piece = this.pieceBytes;

  /**
   * Undefined when no compiled kernel is available. `itemBytes`: the kernel also copies the item fields
   * out one after another, for readers that keep item bytes per row (RowColumns.itemTexts).
   */
  static create(roleOf: Int32Array, itemBytes = false): SimpleRecordsKernel | undefined {
    if (!engineSettings().tuning.recordKernel) return undefined;
    const module = kernelModule('simpleRecords.wasm');
    if (module === undefined) return undefined;
    // The last kernel made on this thread serves again for the same fields and sizes (a parse thread reads
    // range after range of one file): its memory is already faulted in. Sharing one is safe, since a call
    // to parse() keeps nothing in the kernel between calls and runs to its end without yielding.
    const { kernelRowsPerCall, kernelPieceBytes } = engineSettings().tuning;
    const key = `${roleOf.join(',')}|${itemBytes}|${kernelRowsPerCall}|${kernelPieceBytes}`;
    if (lastMade?.module !== module || lastMade.key !== key) lastMade = { module, key, kernel: new SimpleRecordsKernel(module, roleOf, itemBytes) };
    return lastMade.kernel;
  }

  private constructor(module: WasmModule, roleOf: Int32Array, itemBytes: boolean) {
    const fieldCount = roleOf.length;
    let slots = 0;
    this.fields = Array.from(roleOf, (role) => ({ role, slot: isId(role) ? slots++ : -1 }));
    // Settings, input and outputs, one after another, after the kernel's own static data (its table of powers
    // of five, about 10 KB), which the memory's first STATIC_ROOM bytes hold.
    const layout = (base: number) => {
      const rolesAt = base;
      const pow10At = align(rolesAt + 4 * fieldCount);
      const previousAt = align(pow10At + 8 * POW10.length);
      const idSlotAt = align(previousAt + 8 * fieldCount);
      const changeCountAt = align(idSlotAt + 4 * fieldCount);
      const summaryAt = align(changeCountAt + 4 * fieldCount);
      const inputAt = align(summaryAt + 8 * 4);
      // Room after the input: the kernel finds field ends 16 bytes at a time, reading up to 15 bytes past its limit.
      const idStartAt = align(inputAt + this.pieceBytes + 16);
      const idEndAt = idStartAt + 4 * slots * this.rowsPerCall;
      const idHashAt = idEndAt + 4 * slots * this.rowsPerCall;
      const labelAt = align(idHashAt + 4 * slots * this.rowsPerCall);
      const scoreAt = labelAt + 8 * this.rowsPerCall;
      const lineAt = scoreAt + 8 * this.rowsPerCall;
      const startAt = lineAt + 4 * this.rowsPerCall;
      const itemEndAt = startAt + 4 * this.rowsPerCall;
      const itemBytesAt = itemEndAt + 4 * this.rowsPerCall;
      // The kernel copies item bytes 16 at a time: up to 15 bytes past the last item's end.
      const changesAt = align(itemBytesAt + (itemBytes ? this.pieceBytes + 16 : 0));
      const end = changesAt + 4 * slots * this.rowsPerCall;
      return { rolesAt, pow10At, previousAt, idSlotAt, changeCountAt, summaryAt, inputAt, idStartAt, idEndAt, idHashAt, labelAt, scoreAt,
        lineAt, startAt, itemEndAt, itemBytesAt, changesAt, end };
    };
    const { exports, memory } = instantiateKernel<KernelExports>(module, layout(STATIC_ROOM).end, kernelAbort);
    if (exports.dataEnd() > STATIC_ROOM) throw new Error(`the record kernel's static data (${exports.dataEnd()} bytes) outgrew its room (${STATIC_ROOM})`);
    const { rolesAt, pow10At, previousAt, idSlotAt, changeCountAt, summaryAt, inputAt, idStartAt, idEndAt, idHashAt, labelAt, scoreAt,
      lineAt, startAt, itemEndAt, itemBytesAt, changesAt } = layout(STATIC_ROOM);
    this.kernel = exports;
    const buffer = memory.buffer;
    new Int32Array(buffer, rolesAt, fieldCount).set(roleOf);
    new Float64Array(buffer, pow10At, POW10.length).set(POW10);
    new Int32Array(buffer, idSlotAt, fieldCount).set(this.fields.map((f) => f.slot));
    this.kernel.layout(rolesAt, pow10At, previousAt, fieldCount, idSlotAt, idStartAt, idEndAt, idHashAt, labelAt, scoreAt, lineAt, startAt,
      this.rowsPerCall, itemBytes ? itemBytesAt : 0, itemEndAt, changesAt, changeCountAt, summaryAt);
    this.summary = new Float64Array(buffer, summaryAt, 4);
    this.changes = new Int32Array(buffer, changesAt, slots * this.rowsPerCall);
    this.changeCount = new Int32Array(buffer, changeCountAt, fieldCount);
    this.itemBytesAt = itemBytes ? itemBytesAt : 0;
    this.itemEnd = new Uint32Array(buffer, itemEndAt, this.rowsPerCall);
    this.input = inputAt;
    this.bytes = new Uint8Array(buffer);
    this.idStart = new Int32Array(buffer, idStartAt, slots * this.rowsPerCall);
    this.idEnd = new Int32Array(buffer, idEndAt, slots * this.rowsPerCall);
    this.idHash = new Int32Array(buffer, idHashAt, slots * this.rowsPerCall);
    this.label = new Float64Array(buffer, labelAt, this.rowsPerCall);
    this.score = new Float64Array(buffer, scoreAt, this.rowsPerCall);
    this.line = new Uint32Array(buffer, lineAt, this.rowsPerCall);
    this.start = new Uint32Array(buffer, startAt, this.rowsPerCall);
  }

  /** parseSimpleRecords' contract: stores records from buf[pos, limit); returns the start of the first one not stored. */
  parse(state: FastState, buf: Buffer, pos: number, limit: number, base: number): number {
    let shortCalls = 0;
    while (pos < limit) {
      let pieceEnd = Math.min(limit, pos + this.piece);
      if (pieceEnd < limit) {
        // Pieces end at a line start, as the kernel expects of its limit.
        const lf = buf.lastIndexOf(10, pieceEnd - 1);
        if (lf < pos && this.piece < this.pieceBytes) {
          // A line longer than a small piece: the whole room, before handing the rest to JavaScript.
          this.piece = this.pieceBytes;
          continue;
        }
        pieceEnd = lf >= pos ? lf + 1 : pos;
      }
      if (pieceEnd === pos) return parseSimpleRecords(state, buf, pos, limit, base);
      this.bytes.set(buf.subarray(pos, pieceEnd), this.input);
      engineActivity().kernelBytesCopied += pieceEnd - pos;
      // The kernel's field scans stop at this byte at the latest (kernel/simpleRecords.ts).
      this.bytes[this.input + (pieceEnd - pos)] = 0;
      const rows = this.kernel.parse(this.input, this.input + (pieceEnd - pos), state.delimiter, state.line, state.rankStandsInForScore ? 1 : 0);
      this.store(state, rows, pos - this.input, base);
      state.line = this.kernel.lineAfter();
      const next = pos + (this.kernel.stoppedAt() - this.input);
      if (next === pieceEnd || rows === this.rowsPerCall) {
        this.piece = Math.min(this.pieceBytes, this.piece * 2);
        pos = next;
        continue;
      }
      // Copying a whole piece for a call that stops after a few records cost more than the records (a record
      // the kernel leaves every other line made a 10M-row read take a minute): the next pieces are about
      // twice what this call read, growing back as calls read them whole.
      this.piece = Math.min(this.pieceBytes, Math.max(SMALL_PIECE, 2 * (next - pos)));
      // The kernel stopped early at a record it is unsure about: the JavaScript loop takes it (and a longer
      // run when this keeps happening), or returns it to the careful parser.
      shortCalls = rows < 16 ? shortCalls + 1 : 0;
      const after = parseSimpleRecords(state, buf, next, limit, base, shortCalls > 2 ? JS_RUN_AFTER_SHORT_CALL : 1);
      if (after === next) return next;
      pos = after;
    }
    return pos;
  }

  /** Interns the ids of `count` kernel rows and appends the rows; `shift` maps kernel positions to `buf` positions. */
  private store(state: FastState, count: number, shift: number, base: number): void {
    if (count === 0) return;
    const rows = state.rows!;
    if (rows.count + count > rows.capacity) rows.reserve(Math.max(rows.count + count, rows.capacity * 1.5 + 1024));
    const first = rows.count;
    for (let f = 0; f < this.fields.length; f++) {
      const { role, slot } = this.fields[f]!;
      if (slot < 0) continue;
      const at = slot * this.rowsPerCall;
      if (role === ROLE_ITEM) {
        this.internItems(rows, first, at, count);
      } else if (role === ROLE_QUERY) {
        state.lastQuery = this.internRuns(rows.queries, rows.query, first, slot, count, state.lastQuery);
      } else {
        const k = role - ROLE_SEGMENT;
        state.lastSegment[k] = this.internRuns(rows.segmentPools[k]!, rows.segmentIds[k]!, first, slot, count, state.lastSegment[k]!);
      }
    }
    const summary = this.summary;
    rows.appendSummary({ unjudged: summary[0]!, missing: summary[1]!, lowest: summary[2]!, highest: summary[3]! }, count);
    rows.label.set(this.label.subarray(0, count), first);
    rows.score.set(this.score.subarray(0, count), first);
    rows.line.set(this.line.subarray(0, count), first);
    const offset = rows.offset;
    const start = this.start;
    const add = base + shift;
    if (rows.keepsOffsets) for (let r = 0; r < count; r++) offset[first + r] = start[r]! + add;
    rows.count = first + count;
    engineActivity().kernelRows += count;
  }

  /**
   * Query and segment ids of the `count` rows from `first`, from the rows the kernel listed as changing
   * (every other row repeats the row before: one fill per run). Only a call's first row can repeat the
   * last id (the kernel compares it with nothing); every other listed row differs from the row before.
   * Listed rows are interned in batches of 64 whose table slots are warmed first, so their cache misses
   * overlap: in a file not grouped by query every row is listed (10M rows of 100k queries in random order:
   * 0.10 against 0.13 µs a row).
   */
  private internRuns(pool: BytePool, out: Uint32Array<ArrayBufferLike>, first: number, slot: number, count: number, last: number): number {
    const at = slot * this.rowsPerCall;
    const { bytes, idStart, idEnd, idHash, changes, records, batchHashes } = this;
    // A record the kernel gave back after reading its ids may be listed last: it is not among the rows.
    let listed = this.changeCount[slot]!;
    while (listed > 0 && changes[at + listed - 1]! >= count) listed--;
    let row = 0;
    for (let from = 0; from < listed; from += 64) {
      const n = Math.min(64, listed - from);
      for (let b = 0; b < n; b++) batchHashes[b] = idHash[at + changes[at + from + b]!]!;
      pool.warm(batchHashes, n, records);
      for (let b = 0; b < n; b++) {
        const changed = changes[at + from + b]!;
        if (changed > row) out.fill(last, first + row, first + changed);
        const i = at + changed;
        if (changed !== 0 || last < 0 || !pool.matches(last, bytes, idStart[i]!, idEnd[i]!)) last = pool.internHashed(bytes, idStart[i]!, idEnd[i]!, idHash[i]!);
        out[first + changed] = last;
        row = changed + 1;
      }
    }
    if (count > row) out.fill(last, first + row, first + count);
    return last;
  }

  /** Item ids in batches of 64: warm the table slots of a batch first, so their cache misses overlap. */
  private internItems(rows: RowColumns, first: number, at: number, count: number): void {
    const { bytes, idStart, idEnd, idHash, records } = this;
    const out = rows.item;
    const texts = rows.itemTexts;
    if (texts !== undefined) {
      // Item bytes kept per row (model/rowTexts.ts): the hash now, keys when the read is done; the kernel
      // copied the bytes out one after another when asked to.
      for (let r = 0; r < count; r++) out[first + r] = idHash[at + r]!;
      if (this.itemBytesAt !== 0) texts.addBlock(bytes, this.itemBytesAt, this.itemEnd, count);
      else for (let r = 0; r < count; r++) texts.add(bytes, idStart[at + r]!, idEnd[at + r]!);
      return;
    }
    const pool = rows.items;
    for (let from = 0; from < count; from += 64) {
      const n = Math.min(64, count - from);
      pool.warm(idHash, n, records, at + from);
      for (let b = 0; b < n; b++) {
        const i = at + from + b;
        out[first + from + b] = pool.internHashed(bytes, idStart[i]!, idEnd[i]!, idHash[i]!);
      }
    }
  }
}

function isId(role: number): boolean {
  return role === ROLE_QUERY || role === ROLE_ITEM || role >= ROLE_SEGMENT;
}

function kernelAbort(): never {
  throw new Error('the record kernel aborted');
}
