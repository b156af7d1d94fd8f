import type { RankedDump } from '../model/dump';
import type { ReadOptions } from './index';

export async function shouldParseInParallel(_path: string, threads: number | undefined): Promise<number> {
  return threads ?? 1;
}

export async function readParallelDelimited(
  _path: string, _format: 'csv' | 'tsv', _delimiter: number, _threads: number, _options: ReadOptions,
): Promise<RankedDump | undefined> {
  return undefined;
}
