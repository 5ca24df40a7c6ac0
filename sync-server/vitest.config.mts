import { defineConfig } from 'vitest/config';

const shared = {
  environment: 'node' as const,
  globalSetup: ['src/testing/global-setup.ts'],
  setupFiles: ['reflect-metadata'],
  testTimeout: 30_000,
  hookTimeout: 60_000,
  pool: 'forks' as const,
};

// Pull cursors follow the cluster-wide transaction horizon (see records/record-version.ts), so
// a stress test that holds transactions open on purpose would hold back other files' pulls.
// Stress files therefore run as a second group, after every other file has finished.
export default defineConfig({
  test: {
    projects: [
      {
        test: {
          ...shared,
          name: 'server',
          include: ['src/**/*.spec.ts'],
          exclude: ['src/**/*.stress.spec.ts'],
          maxWorkers: 2,
          sequence: { groupOrder: 0 },
        },
      },
      {
        test: {
          ...shared,
          name: 'stress',
          include: ['src/**/*.stress.spec.ts'],
          maxWorkers: 1,
          sequence: { groupOrder: 1 },
        },
      },
    ],
  },
});
