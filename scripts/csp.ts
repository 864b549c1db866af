// The page's Content-Security-Policy: network only to the app's own origin plus imagery origins the analyst allowed
// (SEAMTALLY_IMAGERY_ORIGINS), no eval (WebAssembly compilation only), no remote scripts. Used by vite.config.ts.

/** Environment variable listing extra origins COG URLs may be read from, comma- or space-separated. */
export const IMAGERY_ORIGINS_ENV = 'SEAMTALLY_IMAGERY_ORIGINS';

/**
 * Parse the allowed imagery origins: each entry must be a plain http(s) origin (no path, no wildcard), e.g.
 * `https://imagery.example.org` or `http://10.0.0.5:8080`. Throws naming the bad entry, so a typo stops the server
 * instead of silently allowing nothing (or too much).
 */
export function parseImageryOrigins(value: string | undefined): string[] {
  const out: string[] = [];
  for (const raw of (value ?? '').split(/[\s,]+/).filter(Boolean)) {
    let u: URL;
    try { u = new URL(raw); } catch { throw new Error(`${IMAGERY_ORIGINS_ENV}: "${raw}" is not an origin like https://imagery.example.org`); }
    if ((u.protocol !== 'https:' && u.protocol !== 'http:') || raw.includes('*') || (u.pathname !== '/' && u.pathname !== '') || u.search || u.hash || u.username) {
      throw new Error(`${IMAGERY_ORIGINS_ENV}: "${raw}" must be a bare http(s) origin (scheme, host and port only, no wildcard or path)`);
    }
    if (!out.includes(u.origin)) out.push(u.origin);
  }
  return out;
}

/**
 * The policy text. `style-src 'unsafe-inline'` is kept because Vite's dev server injects CSS as <style> elements and
 * the printable report is a self-contained HTML with inline styles; styles cannot run code, and img-src / font-src
 * keep CSS from loading anything from elsewhere. `ws:`/`wss:` to the same host are covered by 'self' (CSP 3), which
 * the dev server's reload socket needs.
 */
export function contentSecurityPolicy(imageryOrigins: readonly string[] = []): string {
  // data: stays on the machine: geotiff.js's ZSTD and LERC decoders fetch their WebAssembly from a data: URL.
  const connect = ["'self'", 'data:', ...imageryOrigins].join(' ');
  return [
    "default-src 'self'",
    "script-src 'self' 'wasm-unsafe-eval'",
    "worker-src 'self' blob:",
    `connect-src ${connect}`,
    "img-src 'self' blob: data:",
    "style-src 'self' 'unsafe-inline'",
    "font-src 'self' data:",
    "object-src 'none'",
    "base-uri 'self'",
    "form-action 'none'",
    "frame-ancestors 'none'",
  ].join('; ');
}

/** The same policy for a <meta http-equiv> tag (frame-ancestors is not allowed there and is dropped). */
export function metaContentSecurityPolicy(imageryOrigins: readonly string[] = []): string {
  return contentSecurityPolicy(imageryOrigins).split('; ').filter((d) => !d.startsWith('frame-ancestors')).join('; ');
}
