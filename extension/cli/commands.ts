/**
 * The command table and the one place that turns failures into exit codes:
 * 0 success, 1 unexpected failure, 2 bad input or usage (one line, no stack trace).
 */
import packageJson from '../../package.json';
import { CancelledError, InputError } from '../engine/errors';
import { runCompare } from './compareCommand';
import { runEval, UsageError } from './evalCommand';
import { runSql } from './sqlCommand';
import type { CliIO } from './io';
import { runTrend } from './trendCommand';

interface Command {
  readonly summary: string;
  readonly run: (argv: string[], io: CliIO) => Promise<number>;
}

/** Adding a command is one line here. */
const COMMANDS: Readonly<Record<string, Command>> = {
  eval: { summary: 'score one prediction dump and list its worst queries', run: runEval },
  compare: { summary: 'test two runs (or a baseline and candidates) of the same queries, query by query', run: runCompare },
  trend: { summary: 'follow a series of checkpoint dumps over training, per metric and per query', run: runTrend },
  sql: { summary: 'print the SQL that computes the per-query table in DuckDB or ClickHouse', run: runSql },
};

export const EXIT_OK = 0;
export const EXIT_FAILURE = 1;
export const EXIT_BAD_INPUT = 2;

function usage(): string {
  const width = Math.max(...Object.keys(COMMANDS).map((n) => n.length));
  const lines = Object.entries(COMMANDS).map(([name, c]) => `  ${name.padEnd(width)}  ${c.summary}`);
  return `gainline ${packageJson.version}: per-query ranking metrics for prediction dumps

Usage: gainline COMMAND [options]

Commands:
${lines.join('\n')}

Run "gainline COMMAND --help" (or "gainline help COMMAND") for a command's options.
`;
}

export async function runCli(argv: readonly string[], io: CliIO): Promise<number> {
  const [first, ...rest] = argv;
  if (first === undefined) {
    io.err(`Usage: gainline ${Object.keys(COMMANDS).join('|')} [options] (gainline --help for more)\n`);
    return EXIT_BAD_INPUT;
  }
  if (first === '--help' || first === '-h' || (first === 'help' && rest.length === 0)) {
    io.out(usage());
    return EXIT_OK;
  }
  if (first === '--version' || first === '-v') {
    io.out(`${packageJson.version}\n`);
    return EXIT_OK;
  }
  const name = first === 'help' ? rest[0]! : first;
  const command = COMMANDS[name];
  if (!command) {
    io.err(`gainline: unknown command "${name}"; commands are ${Object.keys(COMMANDS).join(', ')} (see gainline --help)\n`);
    return EXIT_BAD_INPUT;
  }
  try {
    return await command.run(first === 'help' ? ['--help'] : rest, io);
  } catch (e) {
    return reportFailure(e, name, io);
  }
}

function reportFailure(e: unknown, command: string, io: CliIO): number {
  if (e instanceof InputError) {
    io.err(`${e.message}\n`);
    return EXIT_BAD_INPUT;
  }
  if (e instanceof UsageError || isParseArgsError(e)) {
    io.err(`gainline ${command}: ${oneLine((e as Error).message)} (see gainline ${command} --help)\n`);
    return EXIT_BAD_INPUT;
  }
  const fileProblem = fileErrorLine(e);
  if (fileProblem) {
    io.err(`${fileProblem}\n`);
    return EXIT_BAD_INPUT;
  }
  if (e instanceof CancelledError) {
    io.err('gainline: cancelled\n');
    return EXIT_FAILURE;
  }
  const message = e instanceof Error ? e.message : String(e);
  io.err(`gainline ${command}: unexpected failure: ${message}\n`);
  if (process.env.GAINLINE_DEBUG && e instanceof Error && e.stack) io.err(`${e.stack}\n`);
  return EXIT_FAILURE;
}

function isParseArgsError(e: unknown): boolean {
  const code = (e as { code?: unknown } | null)?.code;
  return typeof code === 'string' && code.startsWith('ERR_PARSE_ARGS');
}

/** Missing or unreadable files are the user's input, not our failure. */
function fileErrorLine(e: unknown): string | undefined {
  const err = e as { code?: unknown; path?: unknown } | null;
  if (!err || typeof err.path !== 'string') return undefined;
  const reasons: Record<string, string> = {
    ENOENT: 'expected an existing file (not found)',
    EACCES: 'expected a readable file (permission denied)',
    EISDIR: 'expected a file, found a folder',
    ENOTDIR: 'expected a file path (a part of it is not a folder)',
  };
  const reason = typeof err.code === 'string' ? reasons[err.code] : undefined;
  return reason ? `${err.path}: ${reason}` : undefined;
}

function oneLine(text: string): string {
  return text.replace(/\s*\n\s*/g, ' ').trim();
}
