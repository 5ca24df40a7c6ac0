// Runs the push benchmark (npm run bench:sync) through vitest, on the test database machinery.
import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    root: new URL('../../..', import.meta.url).pathname,
    include: ['src/sync/bench/*.bench-run.ts'],
    environment: 'node',
    globalSetup: ['src/testing/global-setup.ts'],
    setupFiles: ['reflect-metadata'],
    testTimeout: 600_000,
    hookTimeout: 120_000,
    pool: 'forks',
  },
});
