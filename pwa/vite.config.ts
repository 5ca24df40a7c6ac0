import react from '@vitejs/plugin-react';
import { defineConfig } from 'vite';
import { VitePWA } from 'vite-plugin-pwa';

// The app shell (HTML, JS, CSS, fonts, icons) is precached by the service worker so the tablet
// opens with the network off. API calls are never cached: Dexie is the device's source of truth.
export default defineConfig({
  publicDir: '../icons/generated-public',
  plugins: [
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
        globPatterns: ['**/*.{js,css,html,woff2,png,svg,webmanifest}'],
        navigateFallback: '/index.html',
        navigateFallbackDenylist: [/^\/api\//],
        maximumFileSizeToCacheInBytes: 4 * 1024 * 1024,
        cleanupOutdatedCaches: true,
      },
    }),
  ],
  build: {
    target: 'es2022',
    rollupOptions: {
      // Each Ionic component module defines its custom element at the top level, and the
      // packages declare no `sideEffects`, so without this every component of Ionic would ship
      // in the first chunk. The React wrappers define the element when it is first rendered.
      treeshake: {
        moduleSideEffects: (id: string) =>
          !/@ionic[\\/]core[\\/]components[\\/]ion-[a-z-]+\.js$/.test(id),
      },
    },
    sourcemap: true,
    chunkSizeWarningLimit: 900,
  },
  server: { host: '127.0.0.1', port: 5173, proxy: { '/api': 'http://127.0.0.1:3000' } },
});
