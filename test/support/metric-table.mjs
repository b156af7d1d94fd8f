// Writes the README's metric table from the metric registry (extension/engine/metrics/registry.ts).
// Usage: node test/support/metric-table.mjs [--write]   (without --write: print the table)
// test/engine/readme-metrics.test.ts fails while the README's table differs from the registry's.
import * as esbuild from 'esbuild';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';

const dir = mkdtempSync(join(tmpdir(), 'gainline-metric-table-'));
try {
  const out = join(dir, 'metricText.mjs');
  await esbuild.build({ entryPoints: ['extension/presentation/metricText.ts'], outfile: out, bundle: true, format: 'esm', platform: 'neutral', logLevel: 'warning' });
  const { metricTableMarkdown, METRIC_TABLE_START, METRIC_TABLE_END } = await import(pathToFileURL(out).href);
  const table = metricTableMarkdown();
  if (!process.argv.includes('--write')) {
    process.stdout.write(`${table}\n`);
  } else {
    const readme = readFileSync('README.md', 'utf8');
    const start = readme.indexOf(METRIC_TABLE_START);
    const end = readme.indexOf(METRIC_TABLE_END);
    if (start < 0 || end < start) throw new Error('README.md: expected the metric table markers');
    writeFileSync('README.md', readme.slice(0, start) + table + readme.slice(end + METRIC_TABLE_END.length));
  }
} finally {
  rmSync(dir, { recursive: true, force: true });
}
