// Lint rules, and the layer boundaries they enforce (run by `npm run lint`, part of `npm test`).
//
// The layers: the engine (extension/engine) is pure and shared by everything else; the protocol
// (extension/protocol) is the one typed contract between host, worker and webview; the presentation
// module (extension/presentation) formats numbers and labels without Node or DOM; the channel
// (extension/channel) is the request/response helper under the protocol and the engine's threads, and
// imports nothing. The webview may reach the extension only through those three. test/lint/boundaries.test.ts feeds each rule a file
// that breaks it, so a rule that stops firing fails the suite.
import { createNodeResolver, importX } from 'eslint-plugin-import-x';
import tseslint from 'typescript-eslint';
import localRules from './tools/eslint/noImportCycle.mjs';

/** Folders of the extension that the engine must never import. */
const NOT_FOR_ENGINE = ['./extension/host', './extension/worker', './extension/cli', './extension/protocol', './webview'];

/**
 * Boundary zones for import-x/no-restricted-paths: `target` files may not import from `from`.
 * Exported so the self-check test builds its violating files from the same list.
 */
export const boundaryZones = [
  {
    target: './extension/engine',
    from: NOT_FOR_ENGINE,
    message: 'The engine is pure: it imports no host, worker, CLI, protocol or webview code.',
  },
  {
    target: './webview',
    from: './extension',
    except: ['./protocol', './presentation', './channel'],
    message: 'The webview reaches the extension only through the protocol, presentation and channel modules.',
  },
  {
    target: './extension/channel',
    from: ['./extension/engine', './extension/protocol', './extension/presentation', './extension/host', './extension/worker',
      './extension/cli', './webview'],
    message: 'The request/response channel is shared by every layer and depends on none of them.',
  },
  {
    target: './extension/presentation',
    from: ['./extension/host', './extension/worker', './extension/cli', './webview'],
    message: 'The presentation module is shared by every target and depends on none of them.',
  },
];

/** Packages the engine and the presentation module may not load (no editor API in pure code). */
const editorOnly = {
  paths: [{ name: 'vscode', message: 'Only extension/host talks to the editor API.' }],
};

/** Node built-ins, which do not exist in the webview (nor in the modules it shares: presentation, channel). */
const nodeBuiltins = {
  patterns: [{ regex: '^node:', message: 'The webview and the presentation module run without Node.' }],
  paths: [
    ...['fs', 'path', 'os', 'worker_threads', 'child_process', 'crypto', 'zlib', 'stream', 'url', 'util']
      .map((name) => ({ name, message: 'The webview and the presentation module run without Node.' })),
    { name: 'vscode', message: 'Only extension/host talks to the editor API.' },
  ],
};

export default tseslint.config(
  {
    ignores: ['dist/**', 'node_modules/**', '.e2e/**', 'test-artifacts/**', 'extension/engine/readers/kernel/**', 'extension/engine/report/kernel/**', 'extension/engine/evaluate/kernel/**',
      'test/lint/fixtures/**', '**/*.d.mts'],
  },
  ...tseslint.configs.recommended,
  {
    // House rule: a file over ~400 lines holds more than one responsibility; split it by them.
    rules: { 'max-lines': ['error', { max: 400 }] },
  },
  {
    // The in-editor test suite is CommonJS because the desktop editor's test runner loads it with require.
    files: ['**/*.cjs'],
    rules: { '@typescript-eslint/no-require-imports': 'off' },
  },
  {
    files: ['**/*.ts'],
    plugins: { 'import-x': importX, local: localRules },
    settings: {
      'import-x/resolver-next': [createNodeResolver({ extensions: ['.ts', '.d.ts', '.js', '.mjs', '.json'] })],
    },
    rules: {
      // Type-only imports count: a cycle of types still couples two modules that should not know each
      // other. import-x/no-cycle always skips `import type`, so the project's own rule does the search.
      'local/no-import-cycle': 'error',
      'import-x/no-restricted-paths': ['error', { zones: boundaryZones }],
      'import-x/no-self-import': 'error',
      '@typescript-eslint/consistent-type-imports': ['error', { fixStyle: 'inline-type-imports' }],
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
    },
  },
  {
    // Test doubles hold untyped JSON as the real transports deliver it.
    files: ['test/**/*.ts'],
    rules: { '@typescript-eslint/no-explicit-any': 'off' },
  },
  {
    files: ['extension/engine/**/*.ts'],
    rules: { 'no-restricted-imports': ['error', editorOnly] },
  },
  {
    files: ['webview/**/*.ts', 'extension/presentation/**/*.ts', 'extension/channel/**/*.ts'],
    rules: { 'no-restricted-imports': ['error', nodeBuiltins] },
  },
);
