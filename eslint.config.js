// One lint setup for the whole tree (zero warnings allowed, see package.json "lint").
import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import reactHooks from 'eslint-plugin-react-hooks';
import globals from 'globals';

// `no-restricted-imports` set in a later block replaces the whole rule for its files, so every
// block that sets it builds its options with `restrictedImports`, which always carries the ban on
// reaching into another workspace by a relative path (pwa/src/lint-rules.spec.ts proves each ban).
// The ban matches a path that climbs into a workspace's folder, so a deep folder may still import
// three levels up inside its own workspace.
const WORKSPACES = ['shared', 'pwa', 'sync-server', 'conflict-tests'];
const CROSS_WORKSPACE_PATTERNS = [
  {
    regex: `^(\\.\\./)+(${WORKSPACES.join('|')})(/|$)`,
    message: 'Import another workspace by its package name, not a relative path.',
  },
];

/** The options of `no-restricted-imports`: the cross-workspace ban plus a block's own bans. */
function restrictedImports({ paths = [], patterns = [] } = {}) {
  return [
    'error',
    {
      ...(paths.length > 0 ? { paths } : {}),
      patterns: [...CROSS_WORKSPACE_PATTERNS, ...patterns],
    },
  ];
}

export default tseslint.config(
  {
    ignores: [
      '**/node_modules/**',
      // Type declarations of plain-Node scripts that the server's tests import (no tsconfig).
      'scripts/*.d.mts',
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
      'no-restricted-imports': restrictedImports(),
    },
  },
  {
    files: ['sync-server/**/*.ts'],
    rules: { '@typescript-eslint/consistent-type-imports': 'off' },
  },
  {
    files: ['shared/src/**/*.ts'],
    rules: {
      'no-restricted-imports': restrictedImports({
        paths: ['dexie', '@nestjs/common', '@nestjs/core', 'fs', 'node:fs', 'http', 'node:http'],
        patterns: [
          {
            group: ['@nestjs/*', '@mikro-orm/*', 'dexie*'],
            message: 'shared/ is pure: no I/O, no framework.',
          },
        ],
      }),
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
      'no-restricted-imports': restrictedImports({
        paths: [
          { name: 'dexie', message: 'Components use repositories in pwa/src/data, never Dexie.' },
        ],
      }),
    },
  },
  {
    files: ['**/*.{js,mjs}'],
    languageOptions: { globals: { ...globals.node } },
  },
);
