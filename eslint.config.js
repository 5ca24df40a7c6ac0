// One lint setup for the whole tree (zero warnings allowed, see package.json "lint").
import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import reactHooks from 'eslint-plugin-react-hooks';
import globals from 'globals';

export default tseslint.config(
  {
    ignores: [
      '**/node_modules/**',
      '**/dist/**',
      '**/dev-dist/**',
      '.fuselight/**',
      'artifacts/**',
      'test-results/**',
    ],
  },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    files: ['**/*.{ts,tsx,mts}'],
    languageOptions: {
      parserOptions: { projectService: true, tsconfigRootDir: import.meta.dirname },
      globals: { ...globals.node, ...globals.browser },
    },
    rules: {
      '@typescript-eslint/no-floating-promises': 'error',
      '@typescript-eslint/switch-exhaustiveness-check': [
        'error',
        { considerDefaultExhaustiveForUnions: true },
      ],
      '@typescript-eslint/consistent-type-imports': [
        'error',
        { fixStyle: 'inline-type-imports', disallowTypeAnnotations: false },
      ],
      '@typescript-eslint/no-unused-vars': [
        'error',
        { argsIgnorePattern: '^_', varsIgnorePattern: '^_' },
      ],
      'no-restricted-imports': [
        'error',
        {
          patterns: [
            {
              group: [
                '../../shared/*',
                '../../pwa/*',
                '../../sync-server/*',
                '../../conflict-tests/*',
                '../../../*',
              ],
              message: 'Import another workspace by its package name, not a relative path.',
            },
          ],
        },
      ],
    },
  },
  {
    files: ['sync-server/**/*.ts'],
    rules: { '@typescript-eslint/consistent-type-imports': 'off' },
  },
  {
    files: ['shared/src/**/*.ts'],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          paths: ['dexie', '@nestjs/common', '@nestjs/core', 'fs', 'node:fs', 'http', 'node:http'],
          patterns: [
            {
              group: ['@nestjs/*', '@mikro-orm/*', 'dexie*'],
              message: 'shared/ is pure: no I/O, no framework.',
            },
          ],
        },
      ],
      'no-restricted-syntax': [
        'error',
        {
          selector: "CallExpression[callee.object.name='Date'][callee.property.name='now']",
          message: 'shared/ takes time as a parameter; no Date.now().',
        },
        { selector: "CallExpression[callee.name='fetch']", message: 'shared/ does no I/O.' },
      ],
    },
  },
  {
    files: ['pwa/src/**/*.{ts,tsx}'],
    plugins: { 'react-hooks': reactHooks },
    rules: { ...reactHooks.configs.recommended.rules },
  },
  {
    files: ['pwa/src/**/*.tsx', 'pwa/src/screens/**', 'pwa/src/components/**'],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          paths: [
            { name: 'dexie', message: 'Components use repositories in pwa/src/data, never Dexie.' },
          ],
        },
      ],
    },
  },
  {
    files: ['**/*.{js,mjs}'],
    languageOptions: { globals: { ...globals.node } },
  },
);
