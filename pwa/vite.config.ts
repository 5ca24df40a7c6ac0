import { fileURLToPath } from 'node:url';
import react from '@vitejs/plugin-react';
import { defineConfig, type Plugin } from 'vite';
import { VitePWA } from 'vite-plugin-pwa';

/**
 * Zod's `z` namespace re-exports every locale's messages (`z.locales`, `z.core.locales`). The
 * app reaches `z` from many chunks, so the bundler keeps the whole namespace, and the zod chunk
 * was 386 kB minified, most of it some sixty languages no screen uses (the field builders write
 * every message in English themselves, and zod's own default is its English locale, imported
 * directly). This points zod's locale index at a module with English alone.
 */
function zodEnglishOnly(): Plugin {
  const englishOnly = fileURLToPath(new URL('./src/zod-locales-english.ts', import.meta.url));
  return {
    name: 'fuselight-zod-english-only',
    enforce: 'pre',
    resolveId(source, importer) {
      if (
        importer &&
        /[\\/]node_modules[\\/]zod[\\/]/.test(importer) &&
        /(^|\/)locales\/index\.js$/.test(source)
      ) {
        return englishOnly;
      }
      return null;
    },
  };
}

// The app shell (HTML, JS, CSS, fonts, icons) is precached by the service worker so the tablet
// opens with the network off. API calls are never cached: Dexie is the device's source of truth.
export default defineConfig({
  publicDir: '../icons/generated-public',
  plugins: [
    zodEnglishOnly(),
    react(),
    VitePWA({
      registerType: 'prompt',
      injectRegister: false,
      includeAssets: ['icons/*.png'],
      manifest: {
        name: 'Fuselight — orthoptic charting',
        short_name: 'Fuselight',
        description: 'Chart binocular vision assessments at the instrument, offline first.',
        start_url: '/',
        scope: '/',
        display: 'standalone',
        orientation: 'any',
        background_color: '#f5f8f9',
        theme_color: '#1f5f73',
        icons: [
          { src: '/icons/icon-192.png', sizes: '192x192', type: 'image/png', purpose: 'any' },
          { src: '/icons/icon-512.png', sizes: '512x512', type: 'image/png', purpose: 'any' },
          {
            src: '/icons/maskable-192.png',
            sizes: '192x192',
            type: 'image/png',
            purpose: 'maskable',
          },
          {
            src: '/icons/maskable-512.png',
            sizes: '512x512',
            type: 'image/png',
            purpose: 'maskable',
          },
        ],
      },
      workbox: {
        // ttf: the letter fonts, fetched only when a letter is drawn but precached for offline.
        globPatterns: ['**/*.{js,css,html,woff2,ttf,png,svg,webmanifest}'],
        navigateFallback: '/index.html',
        navigateFallbackDenylist: [/^\/api\//],
        maximumFileSizeToCacheInBytes: 4 * 1024 * 1024,
        cleanupOutdatedCaches: true,
      },
    }),
  ],
  build: {
    target: 'es2022',
    // index.html preloads the first screen's chunks; a chunk loaded later brings its own imports
    // as the browser reads it (from the service worker's cache once installed), without the
    // preload helper adding a link per dependency at every dynamic import on the main thread.
    modulePreload: {
      resolveDependencies: (_file, deps, context) => (context.hostType === 'html' ? deps : []),
    },
    rolldownOptions: {
      // Each Ionic component module defines its custom element at the top level, and the
      // packages declare no `sideEffects`, so without this every component of Ionic would ship
      // in the first chunk. The React wrappers define the element when it is first rendered.
      treeshake: {
        moduleSideEffects: (id: string) =>
          !/@ionic[\\/]core[\\/]components[\\/]ion-[a-z-]+\.js$/.test(id),
      },
      output: {
        // The letter PDF engine loads only when a letter is drawn; its two parts are chunks of
        // their own (pdf-lib with its deflate, fontkit, fontkit's parts), as is React, so that no chunk is over the limit below.
        codeSplitting: {
          groups: [
            // What every screen runs on, in a chunk of its own that stays cached across updates
            // of the app's code: React with the router. (Ionic's components are left to the
            // routes that render them.)
            {
              name: 'react',
              test: /node_modules[\\/](react|react-dom|scheduler|react-router|react-router-dom|@remix-run[\\/]router)[\\/]/,
            },
            // The tablet's IndexedDB and the schemas' validation, read from the first screen on.
            { name: 'dexie', test: /node_modules[\\/]dexie[\\/]/ },
            { name: 'zod', test: /node_modules[\\/]zod[\\/]/ },
            { name: 'letter-fontkit', test: /node_modules[\\/]fontkit[\\/]/ },
            // fontkit's own packages: WOFF2's brotli, Unicode tables, binary structures.
            {
              name: 'letter-fontkit-parts',
              test: /node_modules[\\/](brotli|unicode-properties|unicode-trie|restructure|dfa|tiny-inflate|clone|fast-deep-equal|base64-js|@swc[\\/]helpers)[\\/]/,
            },
            {
              name: 'letter-pdf',
              test: /node_modules[\\/](pdf-lib|pako|@pdf-lib[\\/](upng|standard-fonts)|tslib)[\\/]/,
            },
          ],
        },
      },
    },
    // Fonts stay files of their own (precached, fetched only for the glyphs a page shows):
    // inlined in the CSS, every font subset would weigh on the first screen's stylesheet.
    assetsInlineLimit: (file: string) => (/\.(woff2?|ttf)$/.test(file) ? false : undefined),
    sourcemap: true,
    // No chunk over 500 kB minified (bench:bundle prints the largest).
    chunkSizeWarningLimit: 500,
  },
  server: { host: '127.0.0.1', port: 5173, proxy: { '/api': 'http://127.0.0.1:3000' } },
});
