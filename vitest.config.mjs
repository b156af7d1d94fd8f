import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    exclude: ['test/e2e/**', 'node_modules/**'],
    testTimeout: 60_000,
    pool: 'forks',
    // Builds dist/ before any test when the sources changed since the last build made here.
    globalSetup: ['test/support/buildOnce.ts'],
  },
});
