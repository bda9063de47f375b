import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vite';

// The dashboard: root web/, output web/dist/ (served by `jostle serve`; git-ignored).
const root = fileURLToPath(new URL('.', import.meta.url));

export default defineConfig({
  root,
  base: './',
  logLevel: 'warn',
  build: { outDir: 'dist', emptyOutDir: true, chunkSizeWarningLimit: 400 },
});
