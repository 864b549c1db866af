// Finding the shipped detectors: /models/index.json's order is the page's (first = default), a remembered or
// explicit choice wins when it loads, a broken one falls back to the default, and unreadable sidecars are not offered.
import { afterEach, describe, expect, it, vi } from 'vitest';
import { readFileSync } from 'node:fs';
import { fetchDefaultModel, listShippedModels } from '../../../web/app/model-load.ts';

const fixture = JSON.parse(readFileSync('test/fixtures/fixture-model.model.json', 'utf8')) as Record<string, unknown>;
const sidecarOf = (name: string, summary?: string) => JSON.stringify({ ...fixture, name, version: '1', summary });

/** A fake server: path → body (string or bytes); anything else 404. */
function serve(files: Record<string, string | Uint8Array<ArrayBuffer>>): void {
  vi.stubGlobal('fetch', async (url: string) => {
    const body = files[url];
    if (body === undefined) return new Response('not found', { status: 404 });
    return new Response(body, { status: 200, headers: { 'Content-Type': url.endsWith('.md') ? 'text/markdown' : 'application/octet-stream' } });
  });
}

afterEach(() => { vi.unstubAllGlobals(); });

describe('shipped detectors', () => {
  const onnx = new Uint8Array([1, 2, 3]);
  const files = {
    '/models/index.json': JSON.stringify(['full.model.json', 'small.model.json', 'broken.model.json', 'notes.txt']),
    '/models/full.model.json': sidecarOf('full'), '/models/full.onnx': onnx,
    '/models/small.model.json': sidecarOf('small', 'int8: faster in the browser'), '/models/small.onnx': onnx,
    '/models/broken.model.json': '{"format": "seamtally-model/1"}',
  };

  it('lists the valid sidecars in the index order, with their summaries', async () => {
    serve(files);
    expect(await listShippedModels()).toEqual([
      { url: '/models/full.model.json', name: 'full', version: '1', summary: undefined },
      { url: '/models/small.model.json', name: 'small', version: '1', summary: 'int8: faster in the browser' },
    ]);
  });

  it('starts with the first listed, or with a preferred one that loads; a broken preference falls back', async () => {
    serve(files);
    const first = await fetchDefaultModel();
    expect([first.name, first.origin, first.url]).toEqual(['full', 'shipped', '/models/full.model.json']);
    expect((await fetchDefaultModel('/models/small.model.json')).name).toBe('small');
    expect((await fetchDefaultModel('/models/gone.model.json')).name).toBe('full');
    expect((await fetchDefaultModel('/models/broken.model.json')).name).toBe('full');
  });

  it('without an index, falls back to the test fixture model', async () => {
    serve({ '/fixtures/fixture-model.model.json': sidecarOf('fixture'), '/fixtures/fixture-model.onnx': onnx });
    expect(await listShippedModels()).toEqual([]);
    const m = await fetchDefaultModel();
    expect([m.name, m.origin]).toEqual(['fixture', 'fixture']);
  });
});
