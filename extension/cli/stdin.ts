/**
 * A dump named `-` is read from standard input. The readers work on files (format detection looks at
 * the first bytes, Parquet needs random access), so the input is first copied to a private temporary
 * file; gzip and every format are then found from the content as for any file without a telling name.
 */
import { createWriteStream } from 'node:fs';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pipeline } from 'node:stream/promises';
import { Readable } from 'node:stream';
import { InputError } from '../engine/errors';
import type { CliIO } from './io';

/** How standard input is named in messages and reports. */
export const STDIN_NAME = '-';

export interface SpooledInput {
  readonly path: string;
  /** Removes the temporary copy. */
  readonly remove: () => Promise<void>;
}

export async function spoolStdin(io: CliIO): Promise<SpooledInput> {
  if (io.stdin === undefined) throw new InputError('a dump on standard input, but none can be read here', STDIN_NAME);
  const dir = await mkdtemp(join(tmpdir(), 'gainline-stdin-'));
  const path = join(dir, 'input');
  const remove = () => rm(dir, { recursive: true, force: true });
  try {
    await pipeline(Readable.from(io.stdin()), createWriteStream(path));
  } catch (e) {
    await remove();
    throw e;
  }
  return { path, remove };
}

/** An InputError about the temporary copy, re-addressed to standard input. */
export function renameInputError(e: unknown, spooled: SpooledInput): unknown {
  if (e instanceof InputError && e.file === spooled.path) return new InputError(e.expected, STDIN_NAME, e.line, e.found);
  return e;
}
