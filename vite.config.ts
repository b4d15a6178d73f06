import { createReadStream, existsSync, statSync } from 'node:fs';
import { resolve, sep } from 'node:path';
import { fileURLToPath } from 'node:url';
import { defineConfig, type Plugin } from 'vite';
import { CSP, mimeType } from './bin/serve.mjs';

// The web app, built from app/ into dist/app and served by bin/serve.mjs (which adds the isolation and CSP
// headers; `vite dev` gets the same isolation headers here so SharedArrayBuffer works there too).
const isolation = {
  'Cross-Origin-Opener-Policy': 'same-origin',
  'Cross-Origin-Embedder-Policy': 'require-corp',
};

/**
 * The built page carries the same Content-Security-Policy as the server's header (bin/serve.mjs), so it holds
 * under any static server. Not in `vite dev`, whose injected <style> tags `style-src 'self'` would refuse.
 */
const cspMeta: Plugin = {
  name: 'airshade-csp-meta',
  apply: 'build',
  // frame-ancestors is header-only (a <meta> policy must not carry it).
  transformIndexHtml: (html) =>
    html.replace(
      '<meta charset="utf-8" />',
      `<meta charset="utf-8" />\n    <meta http-equiv="Content-Security-Policy" content="${CSP.replace(/;\s*frame-ancestors[^;]*/, '')}" />`,
    ),
};

/** `vite dev` serves data/ under /data/ as bin/serve.mjs does, so the demo loads there too. */
const dataDir = fileURLToPath(new URL('./data', import.meta.url));
const demoData: Plugin = {
  name: 'airshade-demo-data',
  apply: 'serve',
  configureServer(server) {
    server.middlewares.use('/data', (req, res, next) => {
      const file = resolve(dataDir, '.' + decodeURIComponent((req.url ?? '/').split('?')[0]));
      if (!file.startsWith(dataDir + sep) || !existsSync(file) || statSync(file).isDirectory()) return next();
      res.setHeader('Content-Type', mimeType(file));
      res.setHeader('Cross-Origin-Resource-Policy', 'same-origin');
      createReadStream(file).pipe(res);
    });
  },
};

export default defineConfig({
  plugins: [cspMeta, demoData],
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
