// Vite config for the page: cross-origin isolation headers (threaded WASM) on dev and preview, ES module workers.
import { defineConfig } from 'vite';

/** COOP/COEP make the page cross-origin isolated so onnxruntime-web can use threads. CSP keeps data local. */
export const isolationHeaders = {
  'Cross-Origin-Opener-Policy': 'same-origin',
  'Cross-Origin-Embedder-Policy': 'require-corp',
  'Cross-Origin-Resource-Policy': 'same-origin',
};

export default defineConfig({
  root: 'web',
  publicDir: 'public',
  server: { headers: isolationHeaders, port: 5173, strictPort: false, fs: { allow: ['..'] } },
  preview: { headers: isolationHeaders, port: 4173 },
  worker: { format: 'es' },
  optimizeDeps: { exclude: ['onnxruntime-web'] },
  build: { outDir: '../dist', emptyOutDir: true, target: 'es2022' },
});
