import { defineConfig } from 'vite';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('.', import.meta.url));

// The client is a static bundle served by the Shaftnet server from dist/client.
// No inline scripts (the server's CSP forbids them): Vite emits external modules.
export default defineConfig({
  root,
  base: '/',
  publicDir: 'public',
  build: {
    outDir: fileURLToPath(new URL('../dist/client', import.meta.url)),
    emptyOutDir: true,
    target: 'es2022',
    sourcemap: true,
    modulePreload: { polyfill: false },
  },
  server: {
    // Development only: forward the API to a server on SHAFTNET_API (default port 8787).
    proxy: { '/api': process.env.SHAFTNET_API ?? 'http://127.0.0.1:8787' },
  },
});
