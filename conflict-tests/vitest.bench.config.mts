// The first-sync benchmark (not part of `npm test`): npx vitest run --config vitest.bench.config.mts
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

const here = (path: string) => fileURLToPath(new URL(path, import.meta.url));

export default defineConfig({
  resolve: { alias: { '@pwa': here('../pwa/src'), '@server': here('../sync-server/src') } },
  test: {
    include: ['bench/**/*.bench-run.ts'],
    environment: 'node',
    setupFiles: ['fake-indexeddb/auto'],
    testTimeout: 600_000,
    fileParallelism: false,
  },
});
