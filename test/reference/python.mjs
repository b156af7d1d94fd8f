// The one way tests and the benchmark call the Python references. Debian's python3-sklearn,
// python3-scipy, python3-numpy and python3-pandas install into /usr/bin/python3, which is not
// always the python3 first on PATH, so the interpreter is named here and nowhere else.
// A missing interpreter or module fails the calling test with one clear message; it never skips.
import { spawnSync } from 'node:child_process';

export const PYTHON = '/usr/bin/python3';

const INSTALL_HINT = "install Debian's python3-sklearn python3-scipy python3-numpy python3-pandas";

/** True when the interpreter can import every module in `modules` (comma-separated, Python syntax). */
export function pythonHas(modules) {
  return spawnSync(PYTHON, ['-c', `import ${modules}`], { stdio: 'ignore' }).status === 0;
}

/** Throws when a module the reference needs is missing. */
export function requirePython(modules) {
  const r = spawnSync(PYTHON, ['-c', `import ${modules}`], { encoding: 'utf8' });
  if (r.error) throw new Error(`cannot run ${PYTHON}: ${r.error.message} (${INSTALL_HINT})`);
  if (r.status !== 0) throw new Error(`${PYTHON} cannot import ${modules}: ${INSTALL_HINT}\n${r.stderr}`);
}

/**
 * Runs `${PYTHON} ...args` with `input` on stdin and returns its stdout. `what` names the reference in
 * the error message (e.g. "the pandas reference").
 */
export function runPython(args, { input, what = 'the Python reference' } = {}) {
  const r = spawnSync(PYTHON, args, { input, encoding: 'utf8', maxBuffer: 256 << 20, timeout: 300_000 });
  if (r.error) throw new Error(`cannot run ${PYTHON} for ${what}: ${r.error.message} (${INSTALL_HINT})`);
  if (r.status !== 0) {
    throw new Error(`${what} failed (${PYTHON} exit ${r.status}; ${INSTALL_HINT}):\n${r.stderr.trim() || 'no message'}`);
  }
  return r.stdout;
}

/** Runs an inline script with `input` as JSON on stdin and parses the JSON it prints. */
export function pythonJson(script, input, what) {
  return JSON.parse(runPython(['-c', script], { input: JSON.stringify(input), what }));
}
