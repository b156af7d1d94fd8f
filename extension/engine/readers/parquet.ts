import { InputError } from '../errors';
import type { RankedDump } from '../model/dump';
import type { ReadOptions } from './index';

export async function readParquet(path: string, _directory: boolean, options: ReadOptions): Promise<RankedDump> {
  void options;
  throw new InputError('a format this build reads (not yet supported)', path);
}
