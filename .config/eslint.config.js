// Lint rules for the whole repository. The import boundaries are the ones DEVELOPERS.md describes:
// shared/ is pure (zod and the standard library only), the client never reaches into the server,
// and the server never imports client code.
import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import reactHooks from 'eslint-plugin-react-hooks';
import globals from 'globals';
import { boundaries } from './eslint-boundaries.js';

export default tseslint.config(
  { ignores: ['node_modules', 'dist', '.data', 'drizzle', 'coverage', 'test-results'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: { globals: { ...globals.node, ...globals.browser } },
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
      '@typescript-eslint/consistent-type-imports': 'error',
      'no-console': 'off',
    },
  },
  {
    files: ['shared/**/*.ts'],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          patterns: [
            { group: ['**/server/**', '**/src/**', '**/jobs/**', '**/tests/**'], message: 'shared/ imports nothing from the other folders.' },
            { regex: '^#(server|src|jobs|tests)/', message: 'shared/ imports nothing from the other folders.' },
            { group: ['node:*', 'fs', 'path', 'crypto', 'pg', 'drizzle-orm', 'drizzle-orm/*', 'express', 'react', 'react-dom'], message: 'shared/ is pure: zod and the standard library only.' },
          ],
        },
      ],
    },
  },
  {
    files: ['src/**/*.{ts,tsx}'],
    plugins: { 'react-hooks': reactHooks },
    rules: {
      ...reactHooks.configs.recommended.rules,
      'no-restricted-imports': [
        'error',
        {
          patterns: [
            { group: ['**/server/**', '**/jobs/**', 'node:*'], message: 'The client talks to the server over HTTP only.' },
            { regex: '^#(server|jobs)/', message: 'The client talks to the server over HTTP only.' },
          ],
        },
      ],
    },
  },
  {
    files: ['server/**/*.ts', 'jobs/**/*.ts'],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          patterns: [
            { group: ['**/src/**'], message: 'The server never imports client code.' },
            { regex: '^#src/', message: 'The server never imports client code.' },
          ],
        },
      ],
    },
  },
  // Zones (see eslint-boundaries.js): a client feature never imports another feature (route modules in
  // src/app/routes compose them); code outside a server module never imports that module's *.table.ts,
  // only its repository or service. Type-only imports of a table's record types are allowed (no SQL is
  // built from a type). Exempt: *.table.ts files (foreign keys name the referenced table), the schema
  // re-export, and tests, which arrange and inspect any table to check a rule from the outside.
  {
    files: ['src/**/*.{ts,tsx}', 'server/**/*.ts', 'jobs/**/*.ts'],
    ignores: ['**/*.table.ts', 'server/db/schema.ts', '**/*.test.ts'],
    plugins: { phasewright: boundaries },
    rules: {
      'phasewright/boundaries': [
        'error',
        {
          // The one module allowed to read several modules' tables in one statement: the statistics
          // filters and aggregates, the calibration views, the traveler's data and the first-pass yield
          // (see DEVELOPERS.md, "Read models"). Every other module reads through repositories and services.
          readModels: ['read-models'],
        },
      ],
    },
  },
  // Settings come from the environment in server/env.ts only (parsed, checked, documented in the README).
  // Exempt, with their reasons: server/ops/*.mjs run under plain Node before dependencies are installed
  // and before TypeScript can load server/env.ts, and they build the environment the processes get;
  // tests set up the environment of the processes they start; tool configurations (vite, drizzle-kit)
  // are read by their tools, not by the product.
  {
    files: ['server/**/*.{ts,mjs}', 'jobs/**/*.ts', 'shared/**/*.ts', 'src/**/*.{ts,tsx}'],
    ignores: ['server/env.ts', 'server/ops/*.mjs', '**/*.test.ts'],
    rules: {
      'no-restricted-properties': [
        'error',
        { object: 'process', property: 'env', message: 'Read settings through server/env.ts (and add them to the README).' },
      ],
    },
  },
);
