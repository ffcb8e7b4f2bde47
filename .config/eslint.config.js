// Lint rules for the whole repository. The import boundaries are the ones DEVELOPERS.md describes:
// shared/ is pure (zod and the standard library only), the client never reaches into the server,
// and the server never imports client code.
import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import reactHooks from 'eslint-plugin-react-hooks';
import globals from 'globals';

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
        { patterns: [{ group: ['**/server/**', '**/jobs/**', 'node:*'], message: 'The client talks to the server over HTTP only.' }] },
      ],
    },
  },
  {
    files: ['server/**/*.ts', 'jobs/**/*.ts'],
    rules: {
      'no-restricted-imports': ['error', { patterns: [{ group: ['**/src/**'], message: 'The server never imports client code.' }] }],
    },
  },
);
