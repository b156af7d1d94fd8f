/**
 * A first read and score of a small generated dump, run once when the views' engine thread starts
 * (the extension starts it at activation), its result thrown away. The first dump a user opens then
 * runs through code V8 has already compiled, and the record kernel is compiled too: on the demo, the
 * first read and score of a fresh thread took about ten times as long as the next ones.
 */
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { evaluateDump } from '../engine/index';
import { DEFAULT_CONVENTIONS } from '../engine/metrics/conventions';
import { parseMetricList } from '../engine/metrics/parse';
import { groupByQuery } from '../engine/model/groups';
import { DEFAULT_METRIC_KEYS } from '../presentation/defaults';
import { overviewDiagnostics } from './diagnosticsView';
import { readSource } from './readSource';
import { overviewModel } from './viewModels';

const QUERIES = 120;
const ITEMS = 12;

/** The generated dump: hardware-store queries, graded 0–4, scores that follow the grades with ties. */
export function warmUpCsv(): string {
  const lines = ['query,product_id,grade,score,locale'];
  const products = ['cordless drill', 'wood screws', 'hex key set', 'pipe wrench', 'garden hose', 'wall plugs'];
  for (let q = 0; q < QUERIES; q++) {
    const query = `${products[q % products.length]} ${q}`;
    for (let i = 0; i < ITEMS; i++) {
      const grade = (q * 7 + i * 3) % 5;
      const score = ((grade * 10 + ((q + i * 13) % 17)) / 50).toFixed(2);
      lines.push(`${query},SKU-${100000 + q * ITEMS + i},${grade},${score},${q % 2 === 0 ? 'en-GB' : 'de-DE'}`);
    }
  }
  return lines.join('\n') + '\n';
}

/**
 * Reads and scores the generated dump as a view's load would, with the overview and its diagnostics;
 * the file lives in a private folder under `parent`, removed afterwards.
 */
export async function warmUp(parent = tmpdir()): Promise<void> {
  const dir = await mkdtemp(join(parent, 'gainline-warm-up-'));
  try {
    const path = join(dir, 'warm-up.csv');
    await writeFile(path, warmUpCsv());
    const dump = await readSource({ path });
    const groups = groupByQuery(dump);
    const evaluation = await evaluateDump(dump, parseMetricList(DEFAULT_METRIC_KEYS.join(',')), DEFAULT_CONVENTIONS, { groups });
    overviewModel(dump, evaluation, 0);
    overviewDiagnostics(dump, evaluation, groups);
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}
