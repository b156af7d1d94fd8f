/**
 * Cutting a delimited file into blocks: the header line read on its own (its errors read as they do in
 * memory), and block starts at the first line start at or after each multiple of the block size.
 */
import { promises as fsp } from 'node:fs';
import type { ReaderNotes } from '../model/dump';
import { parseHeaderLine } from '../readers/headerLine';
import type { ColumnRoles } from '../readers/roles';

export interface HeaderLine {
  readonly names: string[];
  /** Byte just after the header's newline. */
  readonly end: number;
  /** The notes reading the header gave (a rank column standing in for the score, ...). */
  readonly notes: ReaderNotes;
  /** The columns kept as segments (every column without a role). */
  readonly segmentNames: readonly string[];
}

/** undefined when the header holds a quote or has no newline (the in-memory reader handles those). */
export async function readHeaderLine(path: string, delimiter: number, columns: ColumnRoles | undefined): Promise<HeaderLine | undefined> {
  const fh = await fsp.open(path, 'r');
  try {
    const header = await parseHeaderLine(fh, path, delimiter, columns);
    if (!header) return undefined;
    return { names: header.names, end: header.end, notes: header.columns.notes, segmentNames: header.columns.segmentNames };
  } finally {
    await fh.close();
  }
}

/** Block starts from `from` to `size` (the last entry is `size`), each at a line start. */
export async function blockBounds(path: string, from: number, size: number, blockBytes: number): Promise<number[]> {
  const points = [from];
  const fh = await fsp.open(path, 'r');
  try {
    const probe = Buffer.alloc(64 * 1024);
    for (let target = from + blockBytes; target < size; target = Math.max(target + blockBytes, points.at(-1)! + 1)) {
      let at = Math.max(points.at(-1)!, target - 1);
      let found = -1;
      while (found < 0 && at < size) {
        const { bytesRead } = await fh.read(probe, 0, probe.length, at);
        if (bytesRead === 0) break;
        const lf = probe.subarray(0, bytesRead).indexOf(10);
        if (lf >= 0) found = at + lf + 1;
        else at += bytesRead;
      }
      if (found < 0 || found >= size) break;
      if (found > points.at(-1)!) points.push(found);
    }
  } finally {
    await fh.close();
  }
  points.push(size);
  return points;
}
