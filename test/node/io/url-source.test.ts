// openGeoTiffUrl against loopback HTTP servers: range requests read like a file; no-range, 404 and a closed port fail typed.
import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import { mkdtempSync, readFileSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openGeoTiffPath, openGeoTiffUrl } from '../../../web/io/geotiff-source.ts';
import { writeGeoTiff } from '../../fixtures/gdal-scenes.ts';
import { SeamtallyError } from '../../../web/core/errors.ts';

const dir = mkdtempSync(join(tmpdir(), 'seamtally-url-'));
const W = 150, H = 110, B = 3;
const data = new Uint8Array(W * H * B);
for (let i = 0; i < data.length; i++) data[i] = (i * 31 + 7) & 255;
const path = writeGeoTiff(join(dir, 'scene.tif'), { widthPx: W, heightPx: H, bandCount: B, dtype: 'uint8', data }, {
  epsg: 32633, ulX: 500000, ulY: 5300000, gsdM: 0.3, blockPx: 32, compress: 'DEFLATE',
});
const bytes = readFileSync(path);

const servers: Server[] = [];
function serve(handler: (req: IncomingMessage, res: ServerResponse) => void): Promise<string> {
  const server = createServer(handler);
  servers.push(server);
  return new Promise((resolve) => server.listen(0, '127.0.0.1', () => resolve(`http://127.0.0.1:${(server.address() as AddressInfo).port}/scene.tif`)));
}

/** Single byte ranges as RFC 9110 §14 describes them: 206 + Content-Range, or 416 when unsatisfiable. */
function rangeHandler(req: IncomingMessage, res: ServerResponse): void {
  const m = /^bytes=(\d+)-(\d*)$/.exec(req.headers.range ?? '');
  if (!m) { res.writeHead(200, { 'Content-Length': bytes.length }); res.end(bytes); return; }
  const start = Number(m[1]);
  const end = Math.min(bytes.length - 1, m[2] ? Number(m[2]) : bytes.length - 1);
  if (start >= bytes.length) { res.writeHead(416, { 'Content-Range': `bytes */${bytes.length}` }); res.end(); return; }
  res.writeHead(206, { 'Content-Range': `bytes ${start}-${end}/${bytes.length}`, 'Content-Length': end - start + 1, 'Accept-Ranges': 'bytes' });
  res.end(bytes.subarray(start, end + 1));
}

let rangeUrl = '', ignoreUrl = '', missingUrl = '', closedUrl = '';
let ignoredBytesSent = 0;

beforeAll(async () => {
  rangeUrl = await serve(rangeHandler);
  // Ignores Range and claims a 10 GB file: sends the first 64 KiB and then stalls, as a huge download would look.
  // The probe must answer from the status line alone, never wait for (or buffer) the whole body.
  ignoreUrl = await serve((_req, res) => {
    res.writeHead(200, { 'Content-Length': 10_000_000_000 });
    const head = Buffer.alloc(65536);
    bytes.copy(head, 0, 0, Math.min(bytes.length, head.length));
    ignoredBytesSent += head.length;
    res.write(head);
  });
  missingUrl = await serve((_req, res) => { res.writeHead(404, { 'Content-Type': 'text/plain' }); res.end('not found'); });
  // A port that was just listening and is now closed: connection refused.
  const gone = createServer();
  await new Promise<void>((r) => gone.listen(0, '127.0.0.1', () => r()));
  const port = (gone.address() as AddressInfo).port;
  await new Promise<void>((r) => gone.close(() => r()));
  closedUrl = `http://127.0.0.1:${port}/scene.tif`;
});

afterAll(async () => {
  for (const s of servers) {
    s.closeAllConnections();
    await new Promise<void>((r) => s.close(() => r()));
  }
});

async function failure(p: Promise<unknown>): Promise<SeamtallyError> {
  const err = await p.then(() => null, (e: unknown) => e);
  expect(err).toBeInstanceOf(SeamtallyError);
  return err as SeamtallyError;
}

describe('openGeoTiffUrl', () => {
  it('a server that honours Range: windows equal the file-path source', async () => {
    const byUrl = await openGeoTiffUrl(rangeUrl);
    const byPath = await openGeoTiffPath(path, { byteLength: statSync(path).size });
    expect(byUrl.info.widthPx).toBe(W);
    expect(byUrl.info.georef).toEqual(byPath.info.georef);
    const win = { minXPx: 17, minYPx: 9, maxXPx: 131, maxYPx: 97 };
    const a = await byUrl.readWindow(win);
    const b = await byPath.readWindow(win);
    for (let band = 0; band < B; band++) expect(Array.from(a.bands[band])).toEqual(Array.from(b.bands[band]));
    // and the samples are the ones written (band-sequential raw input to gdal_translate)
    expect(a.bands[2][0]).toBe(data[2 * W * H + 9 * W + 17]);
    await byUrl.close();
    await byPath.close();
  });

  it("a server that ignores Range: 'range-unsupported' in one sentence, quickly, without reading the body", async () => {
    const t0 = Date.now();
    const err = await failure(openGeoTiffUrl(ignoreUrl));
    expect(Date.now() - t0).toBeLessThan(5000);
    expect(err.kind).toBe('range-unsupported');
    expect(err.message).toContain('http://127.0.0.1:');
    expect(err.message).toMatch(/range requests.*download it and open it from disk\.$/);
    expect(ignoredBytesSent).toBeLessThanOrEqual(65536);
  }, 10_000);

  it("404: 'network' naming the status", async () => {
    const err = await failure(openGeoTiffUrl(missingUrl));
    expect(err.kind).toBe('network');
    expect(err.message).toContain('404');
  }, 10_000);

  it("a closed port (unreachable, as a CORS refusal looks to a page): 'network'", async () => {
    const err = await failure(openGeoTiffUrl(closedUrl));
    expect(err.kind).toBe('network');
    expect(err.message).toMatch(/unreachable or does not allow this page to read it \(CORS\)/);
  }, 10_000);
});
