/**
 * Runs the WebAssembly record writer (kernel/recordText.ts): the JSON report's per-query records as
 * UTF-8 bytes, the very bytes that stringifying them as objects and encoding the text gives
 * (`record-text.test.ts` compares the two paths on random values, names and metric sets). It turned the
 * records of a 100k-query scoring from 0.30 s of CPU into about 0.11 s (55 ms a thread in a profile); most
 * of the old cost was building the objects, the rest printing the numbers, which the kernel does 3× faster
 * than V8's own printer (51 against 160 ns a number).
 *
 * Only plain fields go through it: names, unsigned integers, numbers (null when not finite) and flags.
 * Names are escaped here: printable ASCII without quote or backslash (the usual case) is copied as it is,
 * anything else goes through JSON.stringify. Without the compiled kernel, `recordBytes` returns undefined
 * and the caller stringifies objects.
 */
import { instantiateKernel, kernelModule, type WasmMemory } from '../wasmKernels';
import { csvField } from './csvField';
import { packNames } from '../model/packedNames';

interface RecordTextExports {
  dataEnd(): number;
  writeRecords(count: number, fields: number, fieldCount: number, names: number, tail: number, tailLength: number, out: number,
    separator: number, separatorLength: number, notFinite: number, notFiniteLength: number): number;
}

/** True when every byte is printable ASCII other than `a` and `b` (a style writes such a name as it is). */
function printableExcept(a: number, b: number): (bytes: Uint8Array) => boolean {
  return (bytes) => {
    for (let i = 0; i < bytes.length; i++) {
      const x = bytes[i]!;
      if (x < 0x20 || x > 0x7e || x === a || x === b) return false;
    }
    return true;
  };
}

/** How records are laid out around their values: the JSON report's objects or the CSV report's rows. */
export interface RecordStyle {
  readonly name: string;
  /** The literal written before each field's value, then the tail written after a record's last value. */
  literals(fields: readonly RecordField[]): string[];
  /** Between two records. */
  readonly separator: string;
  /** A number that is not finite. */
  readonly notFinite: string;
  /** True when a name's UTF-8 bytes are written as they are. */
  plain(bytes: Uint8Array): boolean;
  /** A name as written, when its bytes are not plain. */
  escape(text: string): string;
}

/** `JSON.stringify(document, null, 1)`'s elements of an array two levels deep; NaN and infinities are null. */
export const JSON_RECORDS: RecordStyle = {
  name: 'json',
  // A literal ends where a value starts: a name's opening quote is its literal's, its closing one the next's.
  literals: (fields) => [
    ...fields.map((field, f) => {
      const closeName = f > 0 && fields[f - 1]!.kind === 'name' ? '"' : '';
      return `${closeName}${f === 0 ? '  {\n   ' : ',\n   '}${JSON.stringify(field.key)}: ${field.kind === 'name' ? '"' : ''}`;
    }),
    `${fields.at(-1)?.kind === 'name' ? '"' : ''}\n  }`,
  ],
  separator: ',\n',
  notFinite: 'null',
  // Printable ASCII other than a quote or a backslash: JSON writes it as it is.
  plain: printableExcept(0x22, 0x5c),
  escape: (text) => JSON.stringify(text).slice(1, -1),
};

/** RFC 4180 rows, cells joined by commas (keys are the header's business); a value not finite is an empty cell. */
export const CSV_ROWS: RecordStyle = {
  name: 'csv',
  literals: (fields) => [...fields.map((_, f) => (f === 0 ? '' : ',')), ''],
  separator: '\n',
  notFinite: '',
  // Printable ASCII other than a quote or a comma is written as it is (anything else goes through csvField).
  plain: printableExcept(0x22, 0x2c),
  escape: csvField,
};

/** A field of a record, in order; `values` is indexed by query id. */
export type RecordField =
  /**
   * `escaped`: the name's bytes as JSON writes them between its quotes (see escapedName). `packed`, when
   * the names are UTF-8 one after another (name q is bytes[ends[q - 1], ends[q])): a range of names none of
   * which needs escaping is copied in one piece.
   */
  | { readonly key: string; readonly kind: 'name'; readonly escaped: (q: number) => Uint8Array; readonly packed?: PackedBytes }
  | { readonly key: string; readonly kind: 'uint'; readonly values: Uint32Array }
  | { readonly key: string; readonly kind: 'number'; readonly values: ArrayLike<number> }
  | { readonly key: string; readonly kind: 'flag'; readonly values: Uint8Array };

export interface PackedBytes {
  readonly bytes: Uint8Array;
  readonly ends: Uint32Array;
}

const KIND = { name: 0, uint: 1, number: 2, flag: 3 } as const;
/**
 * The most bytes a value of each kind prints as (names are measured). A number: "-0.0000012345678901234567"
 * (25: 17 digits after five zeros), longer than "-1.2345678901234567e-308" (24).
 */
const WIDEST = { name: 0, uint: 10, number: 25, flag: 5 } as const;
/** Every piece the kernel copies may be read and written 16 bytes at a time: room after each. */
const ROOM = 16;
const align = (n: number) => (n + 15) & ~15;

const encoder = new TextEncoder();
const decoder = new TextDecoder('utf-8');

/**
 * UTF-8 name bytes as the style writes the name (JSON: between its quotes), the bytes decoded as TextDecoder
 * does (malformed sequences as U+FFFD), escaped, encoded.
 */
export function escapedName(bytes: Uint8Array, style: RecordStyle = JSON_RECORDS): Uint8Array {
  return style.plain(bytes) ? bytes : escapedText(decoder.decode(bytes), style);
}

/**
 * The writer's memory, fixed: growing a WebAssembly memory detaches its old buffer, and the first buffer
 * detached in a thread makes V8 add a detach check to every typed-array access it compiles from then on (the
 * scoring that runs next to the writer went 25–30% slower: 10M rows, 0.3 s). Records go through it in
 * batches that fit. 16 MB holds a chunk of records (threads/renderInOrder.ts: 16k records of a dozen fields,
 * about 0.6 KB each as the writer reserves room) in one batch, so a chunk's bytes are copied out once rather
 * than copied out batch by batch and then joined: with 4 MB, 1M records written as JSON took 0.76–0.88 s
 * (median 0.81) on the command line against 0.69–0.93 s (median 0.73) with 16 MB, five runs interleaved.
 */
export const RECORD_WRITER_BYTES = 16 << 20;

class RecordTextKernel {
  private readonly bytes: Uint8Array;
  private readonly base: number;
  private layoutKey = '';
  private fieldsAt = 0;
  private tailAt = 0;
  private tailLength = 0;
  private separatorAt = 0;
  private notFiniteAt = 0;
  private separator = encoder.encode(JSON_RECORDS.separator);
  private notFinite = encoder.encode(JSON_RECORDS.notFinite);
  /** Per record: literal bytes plus the widest values (names apart) and column bytes. */
  private perRecord = 0;
  private columnsAt = 0;

  constructor(private readonly kernel: RecordTextExports, private readonly memory: WasmMemory) {
    this.bytes = new Uint8Array(memory.buffer);
    this.base = align(kernel.dataEnd());
  }

  /** Records of queries [from, to), as recordBytes describes; undefined when one record alone does not fit. */
  write(fields: readonly RecordField[], from: number, to: number, style: RecordStyle): Uint8Array | undefined {
    if (!this.setLayout(fields, style)) return undefined;
    const nameField = fields.find((f) => f.kind === 'name');
    const names = nameField === undefined ? undefined : namesOf(nameField, from, to, style);
    // Room for the columns' alignment and the pieces' room, whatever the batch.
    const room = this.bytes.length - this.columnsAt - (fields.length + 3) * 2 * ROOM;
    const pieces: Uint8Array[] = [];
    for (let start = from; start < to; ) {
      let end = start;
      let need = 0;
      while (end < to) {
        const name = names === undefined ? 0 : names.ends[end - from]! - (end === from ? 0 : names.ends[end - from - 1]!);
        if (need + this.perRecord + 2 * name > room) break;
        need += this.perRecord + 2 * name;
        end++;
      }
      if (end === start) return undefined;
      if (start > from) pieces.push(this.separator);
      pieces.push(this.writeBatch(fields, names, from, start, end));
      start = end;
    }
    return pieces.length === 1 ? pieces[0]! : joined(pieces);
  }

  /** Records [start, end) (names indexed from `from`), written in one call of the kernel. */
  private writeBatch(fields: readonly RecordField[], names: PackedBytes | undefined, from: number, start: number, end: number): Uint8Array {
    const count = end - start;
    const buffer = this.memory.buffer;
    const bytes = this.bytes;
    // Columns, then names, then the output, each aligned and with room after it.
    let at = this.columnsAt;
    const fieldWords = new Uint32Array(buffer, this.fieldsAt, fields.length * 4);
    const nameStart = names === undefined || start === from ? 0 : names.ends[start - from - 1]!;
    const nameEnd = names === undefined ? 0 : names.ends[end - from - 1]!;
    for (const [f, field] of fields.entries()) {
      fieldWords[f * 4 + 3] = at;
      // A name's column holds where each name ends, counted from the batch's first name.
      if (field.kind === 'name') {
        const column = new Uint32Array(buffer, at, count);
        for (let i = 0; i < count; i++) column[i] = names!.ends[start - from + i]! - nameStart;
      } else if (field.kind === 'number') {
        const column = new Float64Array(buffer, at, count);
        const values = field.values;
        if (values instanceof Float64Array) column.set(values.subarray(start, end));
        else for (let i = 0; i < count; i++) column[i] = values[start + i]!;
      } else if (field.kind === 'uint') new Uint32Array(buffer, at, count).set(field.values.subarray(start, end));
      else bytes.set(field.values.subarray(start, end), at);
      at = align(at + count * (field.kind === 'number' ? 8 : field.kind === 'flag' ? 1 : 4) + ROOM);
    }
    const namesAt = at;
    if (names !== undefined) bytes.set(names.bytes.subarray(nameStart, nameEnd), namesAt);
    const outAt = align(namesAt + (nameEnd - nameStart) + ROOM);
    const written = this.kernel.writeRecords(count, this.fieldsAt, fields.length, namesAt, this.tailAt, this.tailLength, outAt,
      this.separatorAt, this.separator.length, this.notFiniteAt, this.notFinite.length);
    return bytes.slice(outAt, written);
  }

  /** The fields' kinds and the style's literals, written once per set of keys; false when they leave no room for records. */
  private setLayout(fields: readonly RecordField[], style: RecordStyle): boolean {
    const key = `${style.name}\n${fields.map((f) => `${f.kind}:${f.key}`).join('\n')}`;
    if (key === this.layoutKey) return true;
    this.separator = encoder.encode(style.separator);
    this.notFinite = encoder.encode(style.notFinite);
    // The literals, the tail, then the separator and the text of a number not finite.
    const encoded = [...style.literals(fields), style.separator, style.notFinite].map((text) => encoder.encode(text));
    this.layoutKey = '';
    this.fieldsAt = this.base;
    let at = align(this.fieldsAt + fields.length * 16);
    const starts: number[] = [];
    for (const literal of encoded) {
      starts.push(at);
      at = align(at + literal.length + ROOM);
    }
    if (at > this.bytes.length / 2) return false;
    const words = new Uint32Array(this.memory.buffer, this.fieldsAt, fields.length * 4);
    fields.forEach((field, f) => {
      words[f * 4] = KIND[field.kind];
      words[f * 4 + 1] = starts[f]!;
      words[f * 4 + 2] = encoded[f]!.length;
    });
    encoded.forEach((literal, i) => this.bytes.set(literal, starts[i]!));
    this.tailAt = starts[fields.length]!;
    this.tailLength = encoded[fields.length]!.length;
    this.separatorAt = starts[fields.length + 1]!;
    this.notFiniteAt = starts[fields.length + 2]!;
    const literalBytes = encoded.slice(0, fields.length + 2).reduce((sum, literal) => sum + literal.length, 0);
    // Output: literals, the separator, the widest values; columns: 8 bytes a number, 4 a count or a name's end, 1 a flag.
    const widest = (f: RecordField) => (f.kind === 'number' ? Math.max(WIDEST.number, this.notFinite.length) : WIDEST[f.kind]);
    this.perRecord = literalBytes + fields.reduce((sum, f) => sum + widest(f) + (f.kind === 'number' ? 8 : f.kind === 'flag' ? 1 : 4), 0);
    this.columnsAt = at;
    this.layoutKey = key;
    return true;
  }
}

/** The pieces one after another, in a buffer of its own (a Buffer may share its pool's, which must not be transferred). */
function joined(pieces: readonly Uint8Array[]): Uint8Array {
  const out = new Uint8Array(pieces.reduce((sum, piece) => sum + piece.length, 0));
  let at = 0;
  for (const piece of pieces) {
    out.set(piece, at);
    at += piece.length;
  }
  return out;
}

/** The escaped names of queries [from, to) one after another, and where each ends (from the first's start). */
function namesOf(field: Extract<RecordField, { kind: 'name' }>, from: number, to: number, style: RecordStyle): PackedBytes {
  const packed = field.packed;
  if (packed !== undefined) {
    const start = from === 0 ? 0 : packed.ends[from - 1]!;
    const bytes = packed.bytes.subarray(start, packed.ends[to - 1]!);
    if (style.plain(bytes)) {
      const ends = packed.ends.slice(from, to);
      for (let i = 0; i < ends.length; i++) ends[i]! -= start;
      return { bytes, ends };
    }
  }
  return packNames(Array.from({ length: to - from }, (_, i) => field.escaped(from + i)));
}

/** This thread's writer, made on first use, for the module it was made from. */
let writer: { readonly module: object; readonly kernel: RecordTextKernel } | undefined;

function recordTextKernel(): RecordTextKernel | undefined {
  const module = kernelModule('recordText.wasm');
  if (module === undefined) return undefined;
  if (writer?.module !== module) {
    const { exports, memory } = instantiateKernel<RecordTextExports>(module, RECORD_WRITER_BYTES, kernelAbort);
    writer = { module, kernel: new RecordTextKernel(exports, memory) };
  }
  return writer.kernel;
}

/**
 * Records of queries [from, to) as `JSON.stringify` writes elements of an array two levels deep
 * (`JSON.stringify(document, null, 1)`), one object per query with `fields` as its properties in order,
 * separated by ",\n", UTF-8 encoded; or, in the CSV style, as rows of the CSV report. Undefined when the
 * kernel cannot run here, for keys an object would not keep in order (repeated, or array indices, which
 * objects put first), or for more than one name.
 */
export function recordBytes(fields: readonly RecordField[], from: number, to: number, style: RecordStyle = JSON_RECORDS): Uint8Array | undefined {
  const keys = new Set(fields.map((f) => f.key));
  if (keys.size !== fields.length || fields.some((f) => /^(0|[1-9]\d*)$/.test(f.key))) return undefined;
  if (fields.filter((f) => f.kind === 'name').length > 1) return undefined;
  if (fields.length === 0 || to <= from) return undefined;
  return recordTextKernel()?.write(fields, from, to, style);
}

/** A name held as a string, as the style writes it (it may hold a lone surrogate, which JSON escapes). */
export function escapedText(text: string, style: RecordStyle = JSON_RECORDS): Uint8Array {
  return encoder.encode(style.escape(text));
}

function kernelAbort(): never {
  throw new Error('the record writer aborted');
}
