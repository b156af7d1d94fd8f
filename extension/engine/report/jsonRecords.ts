/**
 * The per-query records of the JSON report, rendered as text a range of queries at a time.
 *
 * Rendering 1M records turns about 15M doubles into text: 0.77 s on one thread. So the command line
 * has them rendered by this thread and a score thread at once, chunk by chunk, and written as they come
 * (queryRecordsWork hands threads/renderInOrder.ts this module's renderer); formatJson renders them here.
 * The text is exactly what `JSON.stringify(document, null, 1)` writes for these records, so the paths
 * agree to the byte (report tests check it against the whole document stringified at once).
 */
import { registerChunkRenderer, type ChunkWork } from '../evaluate/chunkOutput';
import type { MetricSpec } from '../metrics/registry';
import { BytePool } from '../model/bytePool';
import type { StringPool } from '../model/stringPool';
import type { PerQueryColumns } from '../evaluate/types';
import type { QueryFacts } from '../tables/queryFacts';
import { recordColumns } from './reportInput';
import { escapedName, escapedText, JSON_RECORDS, recordBytes, type RecordField, type RecordStyle } from './recordTextKernel';

/**
 * Query names in a form copied to workers cheaply: UTF-8 bytes one after another (name q is
 * bytes[ends[q - 1], ends[q])) when the pool holds bytes, else the strings themselves (a string may
 * hold a lone surrogate, which UTF-8 cannot carry).
 */
export type PackedNames = { readonly bytes: Uint8Array; readonly ends: Uint32Array } | { readonly texts: readonly string[] };

/** What a thread needs to render records: which columns, in which order, under which keys. */
export interface QueryRecordsSpec {
  readonly metrics: readonly MetricSpec[];
  readonly names: PackedNames;
  /** Text and segments from a queries table (rendered on one thread; never sent to score workers). */
  readonly facts?: QueryFacts;
  /** Add each query's count of judged items the run never retrieved (labels from a judgments file). */
  readonly notRetrieved?: boolean;
}

const decoder = new TextDecoder('utf-8');

/** Packed in shared memory: sent with every chunk a score thread renders, they are shared rather than copied. */
export function packNames(pool: StringPool): PackedNames {
  if (!(pool instanceof BytePool)) return { texts: Array.from({ length: pool.size }, (_, q) => pool.get(q)) };
  return pool.packed((bytes) => new SharedArrayBuffer(bytes));
}

function nameBytes(names: { readonly bytes: Uint8Array; readonly ends: Uint32Array }, q: number): Uint8Array {
  return names.bytes.subarray(q === 0 ? 0 : names.ends[q - 1]!, names.ends[q]!);
}

export function nameOf(names: PackedNames, q: number): string {
  return 'texts' in names ? names.texts[q]! : decoder.decode(nameBytes(names, q));
}

/** What `JSON.stringify({ queries: [...] }, null, 1)` writes around the records, cut off so they stay two spaces deep. */
const WRAPPER_HEAD = '{\n "queries": [\n'.length;
const WRAPPER_TAIL = '\n ]\n}'.length;

/**
 * Records of queries [from, to), each as `JSON.stringify(…, null, 1)` writes an element of the
 * document's `queries` array (two spaces deep), separated by ",\n"; "" for an empty range. Written as
 * UTF-8 bytes by the record writer (recordTextKernel.ts) when it can run here and the records carry no
 * query facts; otherwise as text by stringifyQueryRecords. The two agree to the byte.
 */
export function renderQueryRecords(spec: QueryRecordsSpec, perQuery: PerQueryColumns, from: number, to: number): string | Uint8Array {
  if (to <= from) return '';
  if (spec.facts === undefined) {
    const bytes = recordBytes(recordFields(spec, perQuery), from, to);
    if (bytes !== undefined) return bytes;
  }
  return stringifyQueryRecords(spec, perQuery, from, to);
}

/** The query name, as the record writer takes it in the style given (packed names are copied a range at a time). */
export function queryNameField(names: PackedNames, style: RecordStyle = JSON_RECORDS): RecordField {
  return 'texts' in names
    ? { key: 'query', kind: 'name', escaped: (q) => escapedText(names.texts[q]!, style) }
    : { key: 'query', kind: 'name', escaped: (q) => escapedName(nameBytes(names, q), style), packed: names };
}

/** The records' properties in order, for the record writer. */
function recordFields(spec: QueryRecordsSpec, perQuery: PerQueryColumns): RecordField[] {
  const fields: RecordField[] = [
    queryNameField(spec.names),
    { key: 'items', kind: 'uint', values: perQuery.items },
    { key: 'relevant', kind: 'uint', values: perQuery.relevant },
  ];
  if (spec.notRetrieved) fields.push({ key: 'notRetrieved', kind: 'uint', values: perQuery.unretrieved ?? new Uint32Array(perQuery.items.length) });
  for (const column of recordColumns(spec.metrics, perQuery)) fields.push({ key: column.key, kind: 'number', values: column.values });
  fields.push({ key: 'skipped', kind: 'flag', values: perQuery.skipped });
  return fields;
}

/**
 * renderQueryRecords as text, from objects stringified: V8's serializer turns numbers into text without a
 * string per number, which measured 1.5× faster than concatenating the text by hand.
 */
export function stringifyQueryRecords(spec: QueryRecordsSpec, perQuery: PerQueryColumns, from: number, to: number): string {
  if (to <= from) return '';
  const columns = recordColumns(spec.metrics, perQuery);
  const { items, relevant, skipped } = perQuery;
  const records: Record<string, unknown>[] = new Array(to - from);
  for (let q = from; q < to; q++) {
    const record: Record<string, unknown> = { query: nameOf(spec.names, q) };
    if (spec.facts?.text) record.text = spec.facts.text[q];
    record.items = items[q];
    record.relevant = relevant[q];
    if (spec.notRetrieved) record.notRetrieved = perQuery.unretrieved?.[q] ?? 0;
    for (const column of columns) {
      const v = column.values[q]!;
      // NaN and infinities are not JSON: null.
      record[column.key] = Number.isFinite(v) ? v : null;
    }
    if (spec.facts) {
      const segments: Record<string, string> = {};
      for (const segment of spec.facts.segments) segments[segment.name] = segment.values[q]!;
      record.segments = segments;
    }
    record.skipped = skipped[q] === 1;
    records[q - from] = record;
  }
  const text = JSON.stringify({ queries: records }, null, 1);
  return text.slice(WRAPPER_HEAD, text.length - WRAPPER_TAIL);
}

/** The name the renderer is registered under, in every thread that loads this module (score threads do). */
const QUERY_RECORDS = 'json-query-records';
registerChunkRenderer(QUERY_RECORDS, renderQueryRecords);

/**
 * The records of an evaluation's queries as work for renderInOrder. `notRetrieved`: the dump's labels came
 * from a judgments file (records then count judged items never retrieved). Names a pool holds as strings
 * (which may not survive UTF-8) are cloned with each chunk sent to a thread: those are rendered here.
 */
export function queryRecordsWork(metrics: readonly MetricSpec[], names: StringPool, notRetrieved: boolean): ChunkWork {
  const spec: QueryRecordsSpec = { metrics, names: packNames(names), notRetrieved };
  return { renderer: QUERY_RECORDS, params: spec, shared: !('texts' in spec.names) };
}
