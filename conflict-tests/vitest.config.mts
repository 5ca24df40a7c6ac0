// Multi-tablet sync scenarios: the real PWA sync engine (aliased from ../pwa/src) on
// fake-indexeddb, against the real NestJS server on a real PostgreSQL. The server's globalSetup
// migrates one template database; each file clones its own.
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

const here = (path: string) => fileURLToPath(new URL(path, import.meta.url));

export default defineConfig({
  resolve: {
    alias: {
      '@pwa': here('../pwa/src'),
      '@server': here('../sync-server/src'),
    },
  },
  test: {
    include: ['src/**/*.spec.ts'],
    environment: 'node',
    globalSetup: [here('../sync-server/src/testing/global-setup.ts')],
    setupFiles: ['reflect-metadata', 'fake-indexeddb/auto', './src/fast-check-setup.ts'],
    testTimeout: 120_000,
    hookTimeout: 60_000,
    pool: 'forks',
    fileParallelism: true,
    maxWorkers: 2,
  },
});
