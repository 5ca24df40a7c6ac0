import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['src/**/*.spec.ts'],
    environment: 'node',
    globalSetup: ['src/testing/global-setup.ts'],
    setupFiles: ['reflect-metadata'],
    testTimeout: 30_000,
    hookTimeout: 60_000,
    pool: 'forks',
    fileParallelism: true,
    maxWorkers: 2,
  },
});
