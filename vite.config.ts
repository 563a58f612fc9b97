// Builds the React renderer into dist/renderer with relative asset paths, so the same build loads
// from Electron (file://) and from serve mode (http://127.0.0.1).
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vite';
import react from '@vitejs/plugin-react';

const here = (p: string) => fileURLToPath(new URL(p, import.meta.url));

export default defineConfig({
  root: here('./renderer'),
  base: './',
  plugins: [react()],
  build: {
    outDir: here('./dist/renderer'),
    emptyOutDir: true,
    // No inline scripts or data-URL modules: the CSP allows only 'self'.
    modulePreload: { polyfill: false },
    assetsInlineLimit: 0,
    chunkSizeWarningLimit: 4000,
    sourcemap: false,
  },
});
