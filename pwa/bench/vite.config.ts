// Build of the first-sync browser benchmark page (scripts/bench-first-sync-browser.mjs): the real
// sync engine and Dexie data layer from src/, bundled on their own, without the app or its
// service worker. The script passes the output directory.
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vite';

export default defineConfig({
  root: fileURLToPath(new URL('.', import.meta.url)),
  publicDir: false,
  logLevel: 'warn',
  build: {
    target: 'es2022',
    emptyOutDir: true,
    rollupOptions: { input: fileURLToPath(new URL('first-sync.html', import.meta.url)) },
  },
});
