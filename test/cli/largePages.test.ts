import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { LARGE_PAGES_MARKER, largePagesEnv } from '../../extension/cli/largePages';
import { CLI, fixtureDir } from './support/runCli';

const SMALL = [
  'query,product_id,grade,score',
  'cordless drill 18v,SKU-100001,3,0.9',
  'cordless drill 18v,SKU-100002,0,0.8',
  'wood screws 4x40,SKU-200001,1,0.4',
  'wood screws 4x40,SKU-200002,0,0.3',
].join('\n') + '\n';

describe('largePagesEnv: when the command line runs itself again with large pages', () => {
  it('re-runs only when GAINLINE_LARGE_PAGES=1, adding the tunable and the marker', () => {
    const env = largePagesEnv({ PATH: '/bin', GAINLINE_LARGE_PAGES: '1' }, 'linux');
    expect(env).toEqual({ PATH: '/bin', GAINLINE_LARGE_PAGES: '1', GLIBC_TUNABLES: 'glibc.malloc.hugetlb=1', [LARGE_PAGES_MARKER]: 'glibc.malloc.hugetlb=1' });
    expect(largePagesEnv({ PATH: '/bin' }, 'linux')).toBeUndefined();
    expect(largePagesEnv({ GAINLINE_LARGE_PAGES: '0' }, 'linux')).toBeUndefined();
  });

  it('keeps tunables already set, appended with a colon (glibc tunables syntax)', () => {
    const env = largePagesEnv({ GAINLINE_LARGE_PAGES: '1', GLIBC_TUNABLES: 'glibc.malloc.arena_max=2' }, 'linux');
    expect(env?.GLIBC_TUNABLES).toBe('glibc.malloc.arena_max=2:glibc.malloc.hugetlb=1');
  });

  it('runs here off Linux, once re-run, or when hugetlb is already chosen', () => {
    const on = { GAINLINE_LARGE_PAGES: '1' };
    expect(largePagesEnv(on, 'darwin')).toBeUndefined();
    expect(largePagesEnv({ ...on, [LARGE_PAGES_MARKER]: 'x' }, 'linux')).toBeUndefined();
    expect(largePagesEnv({ ...on, GLIBC_TUNABLES: 'glibc.malloc.hugetlb=0' }, 'linux')).toBeUndefined();
  });
});

describe('gainline re-run with large pages (GAINLINE_LARGE_PAGES=1), through dist/cli.js', () => {
  const dir = fixtureDir({ 'small.csv': SMALL, 'bad.csv': 'query,product_id,grade,score\ncordless drill,SKU-1,x,0.5\n' });
  const run = (args: string[], setting: string, input?: string) => {
    const env: NodeJS.ProcessEnv = { ...process.env, GAINLINE_LARGE_PAGES: setting };
    delete env[LARGE_PAGES_MARKER];
    delete env.GLIBC_TUNABLES;
    const r = spawnSync(process.execPath, [CLI, ...args], { cwd: dir, env, encoding: 'utf8', ...(input !== undefined ? { input } : {}) });
    return { code: r.status, stdout: r.stdout, stderr: r.stderr };
  };

  it('prints the same report, and says it ran with large pages', () => {
    const plain = run(['eval', 'small.csv', '--format', 'json', '--timings'], '0');
    const large = run(['eval', 'small.csv', '--format', 'json', '--timings'], '1');
    expect(large.code).toBe(0);
    expect(large.stdout).toBe(plain.stdout);
    expect(plain.stderr).not.toMatch(/large pages/);
    expect(large.stderr).toMatch(/; large pages\)\n$/);
  });

  it('passes standard input through', () => {
    const piped = run(['eval', '-', '--format', 'json'], '1', SMALL);
    expect(piped.code).toBe(0);
    expect(piped.stdout).toBe(run(['eval', 'small.csv', '--format', 'json'], '0').stdout.replace('"small.csv"', '"-"'));
  });

  it('keeps the exit code and the one-line error of bad input (exit 2)', () => {
    const r = run(['eval', 'bad.csv'], '1');
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(run(['eval', 'bad.csv'], '0').stderr);
    expect(r.stderr).toMatch(/bad\.csv:2: /);
  });
});
