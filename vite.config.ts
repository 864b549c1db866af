// Vite config for the page: cross-origin isolation headers (threaded WASM) on dev and preview, ES module workers,
// and a small static route that serves the generated demo (`.cache/demo/` → `/demo/`) and the shipped models
// (`models/` → `/models/`) with HTTP range requests, so COGs are read window by window as from any COG server.
import { defineConfig, type Plugin, type Connect } from 'vite';
import { createReadStream, existsSync, readdirSync, statSync } from 'node:fs';
import { resolve, normalize, extname, sep } from 'node:path';
import { fileURLToPath } from 'node:url';
import { contentSecurityPolicy, metaContentSecurityPolicy, parseImageryOrigins, IMAGERY_ORIGINS_ENV } from './scripts/csp.ts';

const repoDir = fileURLToPath(new URL('.', import.meta.url));

/** Origins besides the app's own that COG URLs may be read from (read once at start; see scripts/csp.ts). */
const imageryOrigins = parseImageryOrigins(process.env[IMAGERY_ORIGINS_ENV]);

/**
 * COOP/COEP make the page cross-origin isolated so onnxruntime-web can use threads. The CSP keeps data local; it is
 * sent as a header on every response (workers take their policy from their own script's response) and repeated as
 * a <meta> tag in index.html, so a build served by another static server is still held to it in the page.
 */
export const isolationHeaders = {
  'Cross-Origin-Opener-Policy': 'same-origin',
  'Cross-Origin-Embedder-Policy': 'require-corp',
  'Cross-Origin-Resource-Policy': 'same-origin',
  'Content-Security-Policy': contentSecurityPolicy(imageryOrigins),
  'X-Content-Type-Options': 'nosniff',
  'Referrer-Policy': 'no-referrer',
};

/** Put the headers on every response of the dev and preview servers (before Vite's own middlewares) and the meta CSP into the page. */
function securityHeaders(): Plugin {
  const setAll: Connect.NextHandleFunction = (_req, res, next) => {
    for (const [k, v] of Object.entries(isolationHeaders)) res.setHeader(k, v);
    next();
  };
  return {
    name: 'seamtally-security-headers',
    configureServer(server) { server.middlewares.use(setAll); },
    configurePreviewServer(server) { server.middlewares.use(setAll); },
    transformIndexHtml: () => [{ tag: 'meta', attrs: { 'http-equiv': 'Content-Security-Policy', content: metaContentSecurityPolicy(imageryOrigins) }, injectTo: 'head-prepend' }],
  };
}

const contentTypes: Record<string, string> = {
  '.json': 'application/json', '.geojson': 'application/geo+json', '.tif': 'image/tiff', '.tiff': 'image/tiff',
  '.onnx': 'application/octet-stream', '.md': 'text/markdown; charset=utf-8', '.csv': 'text/csv',
};

/** Serve files under `dirAbs` with single-range support (206 / 416), the isolation headers and no directory listing. */
function staticRanges(dirAbs: string, listSidecars = false): Connect.NextHandleFunction {
  return (req, res, next) => {
    const urlPath = decodeURIComponent((req.url ?? '/').split('?')[0]);
    const fileAbs = normalize(resolve(dirAbs, '.' + urlPath));
    if (!fileAbs.startsWith(dirAbs + sep)) { res.statusCode = 403; res.end(); return; }
    if (listSidecars && urlPath === '/index.json' && !existsSync(fileAbs)) {
      // The models folder lists its sidecars so the page can find the shipped detector by itself (a committed
      // models/index.json is served as it is instead: its order is the page's, the first is the default).
      const names = existsSync(dirAbs) ? readdirSync(dirAbs).filter((f) => f.endsWith('.model.json')).sort() : [];
      for (const [k, v] of Object.entries(isolationHeaders)) res.setHeader(k, v);
      res.setHeader('Content-Type', 'application/json');
      res.end(JSON.stringify(names));
      return;
    }
    let sizeB: number;
    try {
      const st = statSync(fileAbs);
      if (!st.isFile()) { next(); return; }
      sizeB = st.size;
    } catch { res.statusCode = 404; res.end('not found'); return; }
    for (const [k, v] of Object.entries(isolationHeaders)) res.setHeader(k, v);
    res.setHeader('Accept-Ranges', 'bytes');
    res.setHeader('Content-Type', contentTypes[extname(fileAbs).toLowerCase()] ?? 'application/octet-stream');
    res.setHeader('Cache-Control', 'no-cache');
    const range = /^bytes=(\d*)-(\d*)$/.exec(String(req.headers.range ?? ''));
    let startB = 0;
    let endB = sizeB - 1;
    if (range) {
      if (range[1] === '') { startB = Math.max(0, sizeB - Number(range[2])); } else {
        startB = Number(range[1]);
        if (range[2] !== '') endB = Math.min(endB, Number(range[2]));
      }
      if (startB > endB || startB >= sizeB) {
        res.statusCode = 416; res.setHeader('Content-Range', `bytes */${sizeB}`); res.end(); return;
      }
      res.statusCode = 206;
      res.setHeader('Content-Range', `bytes ${startB}-${endB}/${sizeB}`);
    }
    res.setHeader('Content-Length', String(endB - startB + 1));
    if (req.method === 'HEAD') { res.end(); return; }
    createReadStream(fileAbs, { start: startB, end: endB }).pipe(res);
  };
}

/** Mount `/demo/`, `/models/`, the fixture model and the scenes browser tests generate on the dev and preview servers. */
function dataRoutes(): Plugin {
  const routes: Array<[string, string]> = [
    ['/demo', resolve(repoDir, process.env.SEAMTALLY_DEMO_DIR ?? '.cache/demo')],
    ['/models', resolve(repoDir, 'models')],
    ['/fixtures', resolve(repoDir, 'test/fixtures')],
    ['/testdata', resolve(repoDir, '.cache/test-browser')],
  ];
  const mount = (use: (path: string, h: Connect.NextHandleFunction) => void) => {
    for (const [prefix, dir] of routes) use(prefix, staticRanges(dir, prefix === '/models'));
  };
  return {
    name: 'seamtally-data-routes',
    configureServer(server) { mount((p, h) => server.middlewares.use(p, h)); },
    configurePreviewServer(server) { mount((p, h) => server.middlewares.use(p, h)); },
  };
}

export default defineConfig({
  root: 'web',
  publicDir: 'public',
  plugins: [securityHeaders(), dataRoutes()],
  server: { headers: isolationHeaders, port: 5173, strictPort: false, fs: { allow: ['..'] } },
  preview: { headers: isolationHeaders, port: 4173 },
  worker: { format: 'es' },
  // Scan the worker entries too, so geotiff/comlink are pre-bundled at start instead of being discovered when the
  // first worker loads (which makes Vite reload the page, e.g. in the middle of a test).
  optimizeDeps: { exclude: ['onnxruntime-web'], entries: ['index.html', '../workers/*.worker.ts'] },
  build: { outDir: '../dist', emptyOutDir: true, target: 'es2022' },
});
