// Runs the built command line (dist/cli.js) as a child process, the way users run it.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';

export const REPO = resolve(__dirname, '../../..');
export const CLI = join(REPO, 'dist/cli.js');

export interface CliRun {
  readonly code: number | null;
  readonly stdout: string;
  readonly stderr: string;
}

export function runCli(args: readonly string[], cwd: string = REPO): CliRun {
  if (!existsSync(CLI)) throw new Error(`${CLI} is missing: run "npm run build" before the command-line tests`);
  const r = spawnSync(process.execPath, [CLI, ...args], { cwd, encoding: 'utf8', maxBuffer: 64 << 20 });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

/** A fresh folder with the given files written into it. */
export function fixtureDir(files: Readonly<Record<string, string>>): string {
  const dir = mkdtempSync(join(tmpdir(), 'gainline-cli-'));
  for (const [name, text] of Object.entries(files)) writeFileSync(join(dir, name), text);
  return dir;
}
