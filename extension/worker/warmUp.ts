/**
 * A first read and score of a small generated dump, run once when the views' engine thread starts
 * (the extension starts it at activation), its result thrown away. The first dump a user opens then
 * runs through code V8 has already compiled, and the record kernel is compiled too: on the demo, the
 * first read and score of a fresh thread took about ten times as long as the next ones.
 */
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { availableParallelism, tmpdir } from 'node:os';
import { join } from 'node:path';
import { engineSettings } from '../engine/config';
import { evaluateDump, readDump } from '../engine/index';
import { DEFAULT_CONVENTIONS } from '../engine/metrics/conventions';
import { parseMetricList } from '../engine/metrics/parse';
import { groupByQuery } from '../engine/model/groups';
import { DEFAULT_METRIC_KEYS } from '../presentation/defaults';
import { overviewDiagnostics } from './diagnosticsView';
import { readSource } from './readSource';
import { overviewModel } from './viewModels';

const QUERIES = 120;
const ITEMS = 12;
const PRODUCTS = ['cordless drill', 'wood screws', 'hex key set', 'pipe wrench', 'garden hose', 'wall plugs'];

export interface WarmUpFiles {
  readonly dump: string;
  /** The same grades as the dump's, so the judgments join repairs nothing. */
  readonly judgments: string;
  readonly queries: string;
  readonly items: string;
}

/**
 * The generated files: a dump of hardware-store queries graded 0–4 with scores that follow the grades
 * (with ties), its judgments, and its queries and items tables, as the demo has them.
 */
export function warmUpFiles(): WarmUpFiles {
  const dump = ['query,product_id,grade,score,locale'];
  const judgments: string[] = [];
  const queries = ['id\tquery\tdevice'];
  const items = ['product_id\ttitle\tbrand'];
  for (let q = 0; q < QUERIES; q++) {
    const id = `q${q + 1}`;
    queries.push(`${id}\t${PRODUCTS[q % PRODUCTS.length]} ${q}\t${q % 3 === 0 ? 'mobile' : 'desktop'}`);
    for (let i = 0; i < ITEMS; i++) {
      const grade = (q * 7 + i * 3) % 5;
      const score = ((grade * 10 + ((q + i * 13) % 17)) / 50).toFixed(2);
      const item = `SKU-${100000 + q * ITEMS + i}`;
      dump.push(`${id},${item},${grade},${score},${q % 2 === 0 ? 'en-GB' : 'de-DE'}`);
      judgments.push(`${id} 0 ${item} ${grade}`);
      items.push(`${item}\t${PRODUCTS[q % PRODUCTS.length]} ${i}\tKettlewood`);
    }
  }
  const text = (lines: string[]) => lines.join('\n') + '\n';
  return { dump: text(dump), judgments: text(judgments), queries: text(queries), items: text(items) };
}

/**
 * When the engine keeps its threads (engineSettings().keepThreads), reads and scores the dump again on
 * every kept thread, so they are started, and their code compiled, before the first real read asks.
 */
async function warmKeptThreads(dump: string, signal: AbortSignal | undefined): Promise<void> {
  if (!engineSettings().keepThreads) return;
  const threads = Math.min(availableParallelism(), 4);
  if (threads < 2) return;
  const read = await readDump(dump, { threads, ...(signal ? { signal } : {}) });
  if (signal?.aborted) return;
  await evaluateDump(read, parseMetricList(DEFAULT_METRIC_KEYS.join(',')), DEFAULT_CONVENTIONS, { threads, ...(signal ? { signal } : {}) });
}

/**
 * Reads and scores the generated dump with its side files as a view's load would, with the overview
 * and its diagnostics; the files live in a private folder under `parent`, removed afterwards. `signal`
 * stops it early (a CancelledError), when a real read arrives.
 */
export async function warmUp(parent = tmpdir(), signal?: AbortSignal): Promise<void> {
  const dir = await mkdtemp(join(parent, 'gainline-warm-up-'));
  try {
    const files = warmUpFiles();
    const path = (name: string) => join(dir, name);
    await Promise.all([writeFile(path('warm-up.csv'), files.dump), writeFile(path('warm-up.qrels'), files.judgments),
      writeFile(path('queries.tsv'), files.queries), writeFile(path('items.tsv'), files.items)]);
    const dump = await readSource({
      path: path('warm-up.csv'), judgments: path('warm-up.qrels'), judgmentsFound: true, missingQueries: 'skip',
      queries: path('queries.tsv'), items: path('items.tsv'), tablesFound: true,
    }, signal ? { signal } : {});
    const groups = groupByQuery(dump);
    const evaluation = await evaluateDump(dump, parseMetricList(DEFAULT_METRIC_KEYS.join(',')), DEFAULT_CONVENTIONS, { groups, ...(signal ? { signal } : {}) });
    if (signal?.aborted) return;
    overviewModel(dump, evaluation, 0);
    overviewDiagnostics(dump, evaluation, groups);
    await warmKeptThreads(path('warm-up.csv'), signal);
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}
