import { defineConfig } from 'vitest/config';
import react from '@vitejs/plugin-react';
import tailwindcss from '@tailwindcss/vite';

// One file configures the client build and the test runner.
// - `vite build` bundles src/ into dist/client, which the Express server serves on the same port as the API.
// - vitest, by default: every *.test.ts next to the code (pure unit tests, and server/jobs integration tests
//   against the private test PostgreSQL that tests/harness/global-setup.ts prepares; a database per file).
// - vitest with PHASEWRIGHT_SUITE=browser: the Playwright tests in tests/browser, against a server that
//   `npm test` starts (PHASEWRIGHT_BASE_URL).
const browserSuite = process.env.PHASEWRIGHT_SUITE === 'browser';

export default defineConfig({
  plugins: [react(), tailwindcss()],
  build: { outDir: 'dist/client', emptyOutDir: true },
  server: {
    port: 5173,
    proxy: { '/api': { target: `http://127.0.0.1:${process.env.PORT ?? 3000}`, changeOrigin: false } },
  },
  test: browserSuite
    ? {
        include: ['tests/browser/**/*.test.ts'],
        testTimeout: 60_000,
        hookTimeout: 60_000,
        fileParallelism: false,
        maxWorkers: 1,
      }
    : {
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
