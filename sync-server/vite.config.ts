// Bundles the NestJS server into one CommonJS file per entry. Dependencies in node_modules stay
// external; the @fuselight/shared workspace is compiled in from its TypeScript source, and
// Vite's TypeScript transform emits the decorator metadata that NestJS and MikroORM read.
import { defineConfig } from 'vite';

export default defineConfig({
  build: {
    ssr: true,
    target: 'node20',
    outDir: 'dist',
    emptyOutDir: true,
    sourcemap: true,
    minify: false,
    rollupOptions: {
      input: { main: 'src/main.ts', cli: 'src/cli.ts' },
      output: { format: 'cjs', entryFileNames: '[name].cjs' },
    },
  },
  ssr: { noExternal: ['@fuselight/shared'] },
});
