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
  ssr: { noExternal: [] },
});
