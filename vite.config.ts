import { defineConfig } from 'vite';

// The web app (issue 5) is built from app/. Until it exists this config only fixes the layout.
export default defineConfig({
  root: 'app',
  build: { outDir: '../dist/app', emptyOutDir: true, target: 'es2022' },
  worker: { format: 'es' },
});
