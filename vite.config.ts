import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vite';

// The web app, built from app/ into dist/app and served by bin/serve.mjs (which adds the isolation and CSP
// headers; `vite dev` gets the same isolation headers here so SharedArrayBuffer works there too).
const isolation = {
  'Cross-Origin-Opener-Policy': 'same-origin',
  'Cross-Origin-Embedder-Policy': 'require-corp',
};

export default defineConfig({
  root: 'app',
  base: './',
  publicDir: false,
  build: { outDir: '../dist/app', emptyOutDir: true, target: 'es2022', chunkSizeWarningLimit: 2500 },
  worker: { format: 'es' },
  resolve: {
    // csv-parse's default entry expects Node's Buffer; its browser build carries its own.
    alias: {
      'csv-parse/sync': fileURLToPath(new URL('./node_modules/csv-parse/dist/esm/sync.js', import.meta.url)),
    },
  },
  server: { headers: isolation },
  preview: { headers: isolation },
});
