// ESLint rule: no import cycle between the project's own modules, type-only imports included.
// import-x/no-cycle skips `import type` (and has no option to count it); a cycle of types still
// ties two modules together, so this rule follows every kind of reference TypeScript sees:
// imports, `import type`, `export ... from`, `import('...')` types and dynamic imports.
import { existsSync, readFileSync, statSync } from 'node:fs';
import { dirname, relative, resolve } from 'node:path';
import ts from 'typescript';

const EXTENSIONS = ['.ts', '.d.ts', '.mts', '.js', '.mjs'];

/** Relative specifiers of one file, by file path; refreshed when the file changes. */
const cache = new Map();

function resolveRelative(fromFile, specifier) {
  if (!specifier.startsWith('.')) return undefined; // a package cannot import the project back
  const base = resolve(dirname(fromFile), specifier);
  const stem = base.replace(/\.(m?js)$/, '');
  const candidates = [base, ...EXTENSIONS.map((e) => stem + e), ...EXTENSIONS.map((e) => `${base}/index${e}`)];
  return candidates.find((c) => existsSync(c) && statSync(c).isFile());
}

function importsOf(file, text) {
  const mtime = text === undefined ? statSync(file).mtimeMs : -1;
  const hit = cache.get(file);
  if (hit && text === undefined && hit.mtime === mtime) return hit.targets;
  const source = text ?? readFileSync(file, 'utf8');
  const targets = ts.preProcessFile(source, true, true).importedFiles
    .map((f) => resolveRelative(file, f.fileName))
    .filter((t) => t !== undefined);
  if (text === undefined) cache.set(file, { mtime, targets });
  return targets;
}

/** Shortest import path from `start` back to `goal`, or undefined. */
function pathBack(start, goal) {
  const previous = new Map([[start, undefined]]);
  const queue = [start];
  while (queue.length > 0) {
    const file = queue.shift();
    for (const next of importsOf(file)) {
      if (previous.has(next)) continue;
      previous.set(next, file);
      if (next === goal) {
        const route = [];
        for (let at = next; at !== undefined; at = previous.get(at)) route.unshift(at);
        return route;
      }
      queue.push(next);
    }
  }
  return undefined;
}

export const noImportCycle = {
  meta: {
    type: 'problem',
    docs: { description: 'Forbid import cycles between project modules, type-only imports included.' },
    schema: [],
    messages: { cycle: 'Import cycle: {{route}}' },
  },
  create(context) {
    const file = context.filename;
    const root = context.cwd;
    function check(node) {
      if (!node.source || typeof node.source.value !== 'string') return;
      const target = resolveRelative(file, node.source.value);
      if (target === undefined) return;
      const route = target === file ? [file] : pathBack(target, file);
      if (route === undefined) return;
      const shown = [file, ...route].map((f) => relative(root, f)).join(' → ');
      context.report({ node: node.source, messageId: 'cycle', data: { route: shown } });
    }
    return {
      ImportDeclaration: check,
      ExportNamedDeclaration: check,
      ExportAllDeclaration: check,
      ImportExpression: check,
    };
  },
};

export default { rules: { 'no-import-cycle': noImportCycle } };
