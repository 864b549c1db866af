// Where the page may read imagery from: its own origin and the origins its Content-Security-Policy allows
// (connect-src, set from SEAMTALLY_IMAGERY_ORIGINS when the server starts). Checked before a URL is opened, so the
// analyst gets a sentence instead of the browser's silent block.
import { SeamtallyError } from '../core/errors.ts';

/** Origins listed in the page's meta CSP connect-src (plus its own origin). */
export function allowedImageryOrigins(doc: Document = document): string[] {
  const own = doc.location?.origin ?? '';
  const meta = doc.querySelector<HTMLMetaElement>('meta[http-equiv="Content-Security-Policy" i]');
  const connect = (meta?.content ?? '').split(';').map((d) => d.trim()).find((d) => d.startsWith('connect-src '));
  const listed = (connect ?? '').split(/\s+/).slice(1).filter((t) => /^https?:\/\//.test(t));
  return [own, ...listed];
}

/** Throw a 'network' error saying what to do when `url` is not on an allowed origin. Returns the absolute URL. */
export function checkImageryUrl(url: string, doc: Document = document): string {
  let u: URL;
  try { u = new URL(url, doc.location?.href); } catch {
    throw new SeamtallyError('bad-argument', `"${url}" is not a web address: give the full URL of the COG, e.g. https://imagery.example.org/scene.tif.`);
  }
  if (u.protocol !== 'https:' && u.protocol !== 'http:') {
    throw new SeamtallyError('bad-argument', `"${url}" is not an http(s) address: open local files with "choose files" instead.`);
  }
  if (!allowedImageryOrigins(doc).includes(u.origin)) {
    throw new SeamtallyError('network', `seamtally reads imagery only from origins you allowed, and ${u.origin} is not one of them: restart it with SEAMTALLY_IMAGERY_ORIGINS=${u.origin} npm start (see README, "What stays on your machine"), then open the URL again.`);
  }
  return u.href;
}
