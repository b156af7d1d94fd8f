/**
 * Runs every row of the hostile-input corpus (cases.ts) through the real command line, dist/cli.js.
 * Error cases: exit 2, nothing on standard output, exactly one line on standard error naming the file
 * and line (or the option). Result cases: exit 0 and the JSON report equal to the slow reference
 * (test/reference/slowMetrics.ts) or to hand-derived values.
 */
import { mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCli } from '../cli/support/runCli';
import { CASES, METRICS, type HostileCase } from './cases';
import { slowExpectation } from './generate';

function writeCase(c: HostileCase): string {
  const dir = mkdtempSync(join(tmpdir(), 'gainline-hostile-'));
  for (const [name, content] of Object.entries(c.files)) {
    // A name with a folder in it (the parts of a Parquet folder) gets its folder.
    mkdirSync(dirname(join(dir, name)), { recursive: true });
    writeFileSync(join(dir, name), content);
  }
  return dir;
}

/** Equal to 1e-12, relative for large values; NaN only where the reference has NaN. */
function close(actual: number | null, expected: number, what: string): void {
  if (Number.isNaN(expected)) {
    expect(actual, what).toBeNull();
    return;
  }
  expect(actual, what).not.toBeNull();
  expect(Math.abs(actual! - expected), `${what}: ${actual} vs ${expected}`).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(expected)));
}

describe('hostile inputs through dist/cli.js', () => {
  it('has unique case names (one row per case)', () => {
    expect(new Set(CASES.map((c) => c.name)).size).toBe(CASES.length);
  });

  it('no arguments: one usage line on standard error, exit 2; the full help only with --help', () => {
    const bare = runCli([]);
    expect(bare.code).toBe(2);
    expect(bare.stdout).toBe('');
    expect(bare.stderr.trimEnd().split('\n')).toHaveLength(1);
    expect(bare.stderr).toMatch(/^Usage: gainline /);
    const help = runCli(['--help']);
    expect(help.code).toBe(0);
    expect(help.stdout.split('\n').length).toBeGreaterThan(5);
  });

  it.each(CASES.map((c) => [c.name, c] as const))('%s', (_name, c) => {
    const dir = writeCase(c);
    const e = c.expect;
    if ('error' in e) {
      const r = runCli(c.args, dir);
      expect(r.code, r.stderr).toBe(2);
      expect(r.stdout).toBe('');
      const lines = r.stderr.trimEnd().split('\n');
      expect(lines, r.stderr).toHaveLength(1);
      const where = e.error.startsWith('--') ? e.error : join(dir, e.error);
      // "file:line: expected …", "file: expected …" or "--option: expected …": exactly the place named by the case.
      expect(lines[0]!.startsWith(`${where}: expected `), `${lines[0]} should start with ${where}: expected`).toBe(true);
      if (e.says) expect(lines[0]).toMatch(e.says);
      return;
    }
    const r = runCli([...c.args, '--format', 'json', '--metrics', METRICS], dir);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.stdout);
    if ('rows' in e) {
      const want = slowExpectation(e.rows, e.conventions);
      expect(doc.queryCount).toBe(want.queryCount);
      for (const [key, mean] of Object.entries(want.means)) close(doc.summary[key], mean, `mean ${key}`);
      for (const q of doc.queries as Record<string, number | null | string>[]) {
        const slow = want.perQuery.get(q.query as string);
        expect(slow, `query ${String(q.query).slice(0, 40)} should be one the user wrote`).toBeDefined();
        for (const key of METRICS.split(',')) close(q[key] as number | null, slow![key]!, `${String(q.query).slice(0, 40)} ${key}`);
      }
    } else {
      for (const [key, mean] of Object.entries(e.means)) close(doc.summary[key], mean, `mean ${key}`);
      // No query that is not skipped carries an empty value unless a note says why.
      const undefinedHere = (doc.queries as Record<string, unknown>[]).some((q) => !q.skipped && METRICS.split(',').some((k) => k !== 'tau' && q[k] === null));
      if (undefinedHere) expect(doc.warnings.join('\n')).toMatch(/is undefined for/);
      if (e.notes) {
        const table = runCli([...c.args, '--metrics', METRICS], dir);
        expect(table.code).toBe(0);
        expect(table.stdout).toMatch(e.notes);
      }
    }
  });
});
