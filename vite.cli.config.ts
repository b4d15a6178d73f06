import { defineConfig } from 'vite';

// Builds the Node CLI and its worker_threads entry to plain JS (dist/cli) so they start fast under `node`.
export default defineConfig({
  build: {
    ssr: true,
    outDir: 'dist/cli',
    emptyOutDir: true,
    target: 'node20',
    minify: false,
    sourcemap: true,
    rollupOptions: {
      input: { cli: 'worker/cli/main.ts', node: 'worker/runtime/node.ts' },
      // Chunks beside the entries: the pool finds the worker entry as ./node.js next to whichever chunk holds it.
      output: { format: 'es', entryFileNames: '[name].js', chunkFileNames: '[name]-[hash].js' },
    },
  },
  // The pure-JS libraries are bundled into the chunks (one file per chunk to read and link, not one per module:
  // `airshade floor` started in 0.29 s against 0.42 s with them external). HiGHS stays external: it finds its
  // WebAssembly beside its own module.
  ssr: {
    noExternal: [
      'zod',
      'proj4',
      'geotiff',
      'geotiff-geokeys-to-proj4',
      'geographiclib-geodesic',
      /^@turf\//,
      /^d3-/,
      'csv-parse',
      'jsonc-parser',
      'fflate',
      'fast-png',
      // geotiff's and proj4's own dependencies, and comlink: 23 more files that each run and the worker had opened one
      // by one (wkt-parser through Node's CommonJS loader).
      '@petamoriken/float16',
      'xml-utils',
      'mgrs',
      'wkt-parser',
      'comlink',
    ],
  },
});
