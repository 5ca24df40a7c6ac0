import { defineConfig } from 'vitest/config';

// End-to-end tests in Debian's Chromium through playwright-core. `npm test` builds the PWA and
// the server, starts the server and sets FUSELIGHT_E2E_BASE_URL before running these.
export default defineConfig({
  test: {
    include: ['e2e/**/*.e2e.ts'],
    environment: 'node',
    testTimeout: 90_000,
    hookTimeout: 60_000,
    fileParallelism: false,
  },
});
