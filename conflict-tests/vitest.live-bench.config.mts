// The live-changes benchmark (not part of `npm test`): `npm run bench:live`, or
//   cd conflict-tests && FUSELIGHT_TEST_PG_URL=… npx vitest run --config vitest.live-bench.config.mts
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

const here = (path: string) => fileURLToPath(new URL(path, import.meta.url));

export default defineConfig({
  resolve: { alias: { '@pwa': here('../pwa/src'), '@server': here('../sync-server/src') } },
  test: {
    include: ['bench/**/*.live-bench.ts'],
    environment: 'node',
    globalSetup: [here('../sync-server/src/testing/global-setup.ts')],
    setupFiles: ['reflect-metadata', 'fake-indexeddb/auto'],
    testTimeout: 1_800_000,
    hookTimeout: 120_000,
    fileParallelism: false,
  },
});
