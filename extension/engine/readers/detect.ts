/**
 * Which format a dump is in, from its name and its first bytes. Unambiguous content (Parquet magic,
 * a JSON object, `qid:` tokens) wins over the name; otherwise the extension decides; otherwise the
 * first line's separators do.
 */
import { promises as fsp } from 'node:fs';
import { constants as zc, gunzipSync } from 'node:zlib';
import { InputError } from '../errors';
import type { DumpFormat } from '../model/dump';
import { assertTextHead } from './source';

const HEAD_BYTES = 64 * 1024;

const BY_EXTENSION: Readonly<Record<string, DumpFormat>> = {
  csv: 'csv',
  tsv: 'tsv',
  tab: 'tsv',
  jsonl: 'jsonl',
  ndjson: 'jsonl',
  json: 'jsonl',
  run: 'run',
  sparse: 'sparse',
  // File name endings in use for the same lines.
  svm: 'sparse',
  svmlight: 'sparse',
  letor: 'sparse',
  parquet: 'parquet',
};

export interface Sniffed {
  readonly format: DumpFormat;
  readonly gzip: boolean;
  readonly directory: boolean;
}

export interface DetectHints {
  readonly format?: DumpFormat;
  readonly judgments?: string;
  readonly scores?: string;
}

export async function detectFormat(path: string, hints: DetectHints = {}): Promise<Sniffed> {
  let info;
  try {
    info = await fsp.stat(path);
  } catch (err) {
    throw new InputError('a readable file or folder', path, undefined, (err as Error).message);
  }
  if (info.isDirectory()) {
    if (hints.format !== undefined && hints.format !== 'parquet') {
      throw new InputError(`a file for format '${hints.format}', not a folder (folders are read as Parquet part files)`, path);
    }
    return { format: 'parquet', gzip: false, directory: true };
  }
  const raw = await readStart(path);
  const gzip = raw.length >= 2 && raw[0] === 0x1f && raw[1] === 0x8b;
  if (hints.format !== undefined) return { format: hints.format, gzip, directory: false };
  if (raw.length >= 4 && raw.toString('latin1', 0, 4) === 'PAR1') return { format: 'parquet', gzip: false, directory: false };
  const head = gzip ? gunzipHead(raw, path) : raw;
  if (head.length === 0) throw new InputError('a dump with a header and rows (the file is empty)', path);
  assertTextHead(head, path);
  const fromContent = strongContentFormat(head);
  if (fromContent !== undefined) return { format: fromContent, gzip, directory: false };
  const ext = extensionOf(path);
  const byName = BY_EXTENSION[ext];
  if (byName !== undefined && byName !== 'parquet') return { format: byName, gzip, directory: false };
  // Any format may take a judgments file now; without a telling name, a judgments file still suggests a run file.
  if (hints.judgments !== undefined) return { format: 'run', gzip, directory: false };
  if (hints.scores !== undefined) return { format: 'sparse', gzip, directory: false };
  return { format: weakContentFormat(head, path), gzip, directory: false };
}

/** Lower-case extension with any trailing `.gz` removed. */
export function extensionOf(path: string): string {
  const name = path.toLowerCase().replace(/\.gz$/, '');
  const dot = name.lastIndexOf('.');
  const slash = Math.max(name.lastIndexOf('/'), name.lastIndexOf('\\'));
  return dot > slash ? name.slice(dot + 1) : '';
}

/** The first bytes of a file as text: decompressed when gzip, empty when a folder or unreadable as gzip. */
export async function textHead(path: string): Promise<Buffer> {
  const info = await fsp.stat(path);
  if (info.isDirectory()) return Buffer.alloc(0);
  const raw = await readStart(path);
  return raw.length >= 2 && raw[0] === 0x1f && raw[1] === 0x8b ? gunzipHead(raw, path) : raw;
}

async function readStart(path: string): Promise<Buffer> {
  const fh = await fsp.open(path, 'r');
  try {
    const buf = Buffer.alloc(HEAD_BYTES);
    const { bytesRead } = await fh.read(buf, 0, HEAD_BYTES, 0);
    return buf.subarray(0, bytesRead);
  } finally {
    await fh.close();
  }
}

/**
 * The decompressed start of a gzip file. With a sync flush a stream cut short by the read is not an error,
 * so any error here (bad header, bad block, wrong checksum) means the file is corrupt, not empty.
 */
function gunzipHead(raw: Buffer, path: string): Buffer {
  try {
    return gunzipSync(raw, { finishFlush: zc.Z_SYNC_FLUSH });
  } catch (err) {
    throw new InputError('a readable gzip stream: the file is corrupt gzip', path, undefined, (err as Error).message);
  }
}

function firstLines(head: Buffer, count: number): string[] {
  const text = head.toString('utf8').replace(/^\uFEFF/, '');
  return text.split(/\r?\n/).filter((l) => l.trim().length > 0).slice(0, count);
}

function strongContentFormat(head: Buffer): DumpFormat | undefined {
  const lines = firstLines(head, 5);
  if (lines.length === 0) return undefined;
  if (lines[0]!.trimStart().startsWith('{')) return 'jsonl';
  if (lines.every((l) => /^\s*\S+\s+qid:\S+/.test(l))) return 'sparse';
  return undefined;
}

function weakContentFormat(head: Buffer, path: string): DumpFormat {
  const lines = firstLines(head, 5);
  const first = lines[0] ?? '';
  if (first.includes('\t')) return 'tsv';
  if (first.includes(',')) return 'csv';
  if (lines.every((l) => /^\S+\s+\S+\s+\S+\s+\d+\s+\S+(\s+\S+)?\s*$/.test(l))) return 'run';
  throw new InputError('a recognisable dump: CSV, TSV, JSON Lines, a run file, sparse feature lines or Parquet (set the format to choose)', path, 1, first);
}
