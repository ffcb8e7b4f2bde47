import { defineConfig } from 'vitest/config';
import react from '@vitejs/plugin-react';
import tailwindcss from '@tailwindcss/vite';

// One file configures the client build and the test runner.
// - `vite build` bundles src/ into dist/client, which the Express server serves on the same port as the API.
// - vitest runs two projects: `unit` (pure code, next to it) and `integration` (server and jobs against a
//   private PostgreSQL that tests/harness/global-setup.ts prepares; one database per worker).
//   Browser tests live in tests/browser and are run by `npm test` after these, against a started server.
export default defineConfig({
  plugins: [react(), tailwindcss()],
  build: { outDir: 'dist/client', emptyOutDir: true, sourcemap: true },
  server: {
    port: 5173,
    proxy: { '/api': { target: `http://127.0.0.1:${process.env.PORT ?? 3000}`, changeOrigin: false } },
  },
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
