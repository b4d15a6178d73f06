import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import globals from 'globals';

export default tseslint.config(
  {
    ignores: [
      'node_modules/',
      'dist/',
      'data/demo/',
      'test-output/',
      'bench/out/',
      '.scratch/',
      'coverage/',
      'out/',
      'test/scratch/',
    ],
  },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: { globals: { ...globals.es2022 } },
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
      'no-constant-condition': ['error', { checkLoops: false }],
    },
  },
  {
    // The compute core is pure: no DOM, no Node file system, no network.
    files: [
      'worker/core/**/*.ts',
      'worker/io/**/*.ts',
      'worker/demo/**/*.ts',
      'worker/runtime/api.ts',
      'shared/**/*.ts',
    ],
    rules: {
      'no-restricted-imports': [
        'error',
        { patterns: ['node:*', 'fs', 'path', 'worker_threads', 'child_process', 'os'] },
      ],
      'no-restricted-globals': ['error', 'window', 'document', 'fetch', 'process', 'require'],
    },
  },
  {
    files: ['**/*.mjs', 'bench/**', 'scripts/**', 'worker/cli/main.ts', 'worker/runtime/node*.ts', 'test/**'],
    languageOptions: { globals: { ...globals.node } },
  },
  { files: ['app/**/*.ts'], languageOptions: { globals: { ...globals.browser } } },
);
