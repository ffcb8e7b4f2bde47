import { defineConfig } from 'vitest/config';

// Unit tests (pure code in shared/) need nothing; integration tests (server/, jobs/) get a private
// PostgreSQL from tests/harness/global-setup.ts and a database of their own per worker.
export default defineConfig({
  test: {
    include: ['{shared,server,jobs,src,tests}/**/*.test.{ts,tsx}'],
    exclude: ['node_modules', 'dist', '.data', 'tests/browser/**'],
    globalSetup: ['tests/harness/global-setup.ts'],
    setupFiles: ['tests/harness/fail-on-console-error.ts'],
    testTimeout: 20_000,
    hookTimeout: 60_000,
    pool: 'forks',
    maxWorkers: 2,
  },
});
