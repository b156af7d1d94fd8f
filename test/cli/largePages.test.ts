import { spawnSync } from 'node:child_process';
import { afterAll, describe, expect, it } from 'vitest';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { DEAR_FAULTS_MS_PER_MB, freshMemoryCost, inputSize, LARGE_INPUT_BYTES, LARGE_PAGES_MARKER, largePagesEnv } from '../../extension/cli/largePages';
import { CLI, fixtureDir } from './support/runCli';

const SMALL = [
  'query,product_id,grade,score',
  'cordless drill 18v,SKU-100001,3,0.9',
  'cordless drill 18v,SKU-100002,0,0.8',
  'wood screws 4x40,SKU-200001,1,0.4',
  'wood screws 4x40,SKU-200002,0,0.3',
].join('\n') + '\n';

const sizes = (big: number) => (path: string) => (path.endsWith('big.tsv') ? big : 10);
/** A probe stub: dear faults (as measured on the machine where large pages paid) or cheap ones. */
const dear = () => 3;
const cheap = () => 0.5;

describe('largePagesEnv: when the command line runs itself again with large pages', () => {
  const argv = ['eval', 'big.tsv', '--format', 'json'];
  const big = sizes(LARGE_INPUT_BYTES);

  it('re-runs for an input of at least LARGE_INPUT_BYTES where faults are dear, adding the tunable and the marker', () => {
    const env = largePagesEnv(argv, { PATH: '/bin' }, '/data', 'linux', big, dear);
    expect(env).toEqual({ PATH: '/bin', GLIBC_TUNABLES: 'glibc.malloc.hugetlb=1', [LARGE_PAGES_MARKER]: 'glibc.malloc.hugetlb=1' });
    expect(largePagesEnv(argv, {}, '/data', 'linux', big, () => DEAR_FAULTS_MS_PER_MB)).toBeDefined();
  });

  it('runs here where faults are cheap, and probes only for a large input', () => {
    expect(largePagesEnv(argv, {}, '/data', 'linux', big, cheap)).toBeUndefined();
    expect(largePagesEnv(argv, {}, '/data', 'linux', big, () => DEAR_FAULTS_MS_PER_MB - 0.01)).toBeUndefined();
    let probes = 0;
    const counted = () => {
      probes++;
      return 3;
    };
    expect(largePagesEnv(argv, {}, '/data', 'linux', sizes(LARGE_INPUT_BYTES - 1), counted)).toBeUndefined();
    expect(probes).toBe(0);
  });

  it('keeps tunables already set, appended with a colon (glibc tunables syntax)', () => {
    const env = largePagesEnv(argv, { GLIBC_TUNABLES: 'glibc.malloc.arena_max=2' }, '/data', 'linux', big, dear);
    expect(env?.GLIBC_TUNABLES).toBe('glibc.malloc.arena_max=2:glibc.malloc.hugetlb=1');
  });

  it('runs here off Linux, once re-run, when switched off, or when hugetlb is already chosen', () => {
    expect(largePagesEnv(argv, {}, '/data', 'darwin', big, dear)).toBeUndefined();
    expect(largePagesEnv(argv, { [LARGE_PAGES_MARKER]: 'x' }, '/data', 'linux', big, dear)).toBeUndefined();
    expect(largePagesEnv(argv, { GAINLINE_LARGE_PAGES: '0' }, '/data', 'linux', big, dear)).toBeUndefined();
    expect(largePagesEnv(argv, { GLIBC_TUNABLES: 'glibc.malloc.hugetlb=0' }, '/data', 'linux', big, dear)).toBeUndefined();
  });

  it('re-runs whatever the size and the probe when asked to, and looks at positional arguments only', () => {
    expect(largePagesEnv(['eval', 'small.csv'], { GAINLINE_LARGE_PAGES: '1' }, '/data', 'linux', sizes(0), cheap)).toBeDefined();
    expect(largePagesEnv(['eval', '--big.tsv'], {}, '/data', 'linux', big, dear)).toBeUndefined();
  });

  it('measures fresh memory in milliseconds per MB (a positive, finite figure)', () => {
    const cost = freshMemoryCost(1 << 20);
    expect(cost).toBeGreaterThan(0);
    expect(Number.isFinite(cost)).toBe(true);
  });
});

describe('inputSize: the bytes a read fills memory from', () => {
  const dir = mkdtempSync(join(tmpdir(), 'gainline-input-size-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  const text = SMALL.repeat(4000);

  it('is a plain file\'s size, and 0 for what names no file', () => {
    writeFileSync(join(dir, 'plain.csv'), text);
    expect(inputSize(join(dir, 'plain.csv'))).toBe(Buffer.byteLength(text));
    writeFileSync(join(dir, 'tiny.csv'), 'q\n');
    expect(inputSize(join(dir, 'tiny.csv'))).toBe(2);
    expect(inputSize(join(dir, 'missing.csv'))).toBe(0);
    expect(inputSize('--format')).toBe(0);
  });

  it('is a gzip file\'s text size from its trailer (RFC 1952 ISIZE), or the compressed size when that is larger', () => {
    const packed = gzipSync(text);
    writeFileSync(join(dir, 'run.csv.gz'), packed);
    expect(packed.length).toBeLessThan(Buffer.byteLength(text) / 10);
    expect(inputSize(join(dir, 'run.csv.gz'))).toBe(Buffer.byteLength(text));
    // Noise does not compress: the stored text is smaller than the file.
    const noise = gzipSync(Buffer.from(Array.from({ length: 3000 }, (_, i) => (i * 7919) % 251)), { level: 0 });
    writeFileSync(join(dir, 'noise.gz'), noise);
    expect(inputSize(join(dir, 'noise.gz'))).toBe(noise.length);
  });

  it('is a folder\'s Parquet parts together, the files the Parquet reader reads', () => {
    const folder = join(dir, 'parts');
    mkdirSync(folder);
    writeFileSync(join(folder, 'part-0.parquet'), Buffer.alloc(1000));
    writeFileSync(join(folder, 'PART-1.PARQUET'), Buffer.alloc(500));
    writeFileSync(join(folder, 'notes.txt'), Buffer.alloc(9999));
    expect(inputSize(folder)).toBe(1500);
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
