// Finding and reading detectors: the shipped model under /models/ (fixture model as fallback), or a user's pair.
import type { ModelEntry } from './state.ts';
import { parseSidecar } from '../core/model-contract.ts';
import { SeamtallyError } from '../core/errors.ts';

/** Largest .onnx the app accepts (untrusted input; the shipped model is ≤ 4 MB). */
const MAX_ONNX_BYTES = 200 * 1024 * 1024;

async function fetchOk(url: string): Promise<Response | null> {
  try {
    const res = await fetch(url);
    return res.ok ? res : null;
  } catch { return null; }
}

/** A model's display name: the sidecar's `name`, else the sidecar file's name without `.model.json`. */
const modelName = (sidecar: { name?: string }, sidecarUrl: string): string =>
  sidecar.name ?? sidecarUrl.split('/').pop()!.replace(/\.model\.json$/, '');

/** Read a model given its sidecar URL (`…/name.model.json`; the .onnx sits beside it). */
export async function fetchModel(sidecarUrl: string, origin: ModelEntry['origin']): Promise<ModelEntry> {
  const scRes = await fetchOk(sidecarUrl);
  if (!scRes) throw new SeamtallyError('model-invalid', `The model sidecar ${sidecarUrl} could not be read. Check that the file exists.`);
  const sidecar = parseSidecar(await scRes.text());
  const onnxUrl = sidecarUrl.replace(/\.model\.json$/, '.onnx');
  const onnxRes = await fetchOk(onnxUrl);
  if (!onnxRes) throw new SeamtallyError('model-invalid', `The model file ${onnxUrl} could not be read: put the .onnx beside its .model.json.`);
  const bytes = await onnxRes.arrayBuffer();
  const base = sidecarUrl.slice(0, sidecarUrl.lastIndexOf('/') + 1);
  const cardName = sidecar.card ? sidecar.card.split('/').pop()! : 'README.md';
  const cardRes = origin === 'shipped' ? await fetchOk(base + cardName) : null;
  const card = cardRes && /markdown|text\/plain/.test(cardRes.headers.get('Content-Type') ?? '') ? await cardRes.text() : null;
  return { name: modelName(sidecar, sidecarUrl), origin, bytes, sidecar, card, url: sidecarUrl };
}

/** A shipped detector as listed at /models/index.json (the first one is the default). */
export interface ShippedModel { url: string; name: string; version?: string; summary?: string }

/** The sidecar URLs listed at /models/index.json, in its order. */
async function shippedSidecarUrls(): Promise<string[]> {
  const listRes = await fetchOk('/models/index.json');
  if (!listRes) return [];
  let list: unknown;
  try { list = await listRes.json(); } catch { return []; }
  return Array.isArray(list) ? list.filter((f): f is string => typeof f === 'string' && f.endsWith('.model.json')).map((f) => `/models/${f}`) : [];
}

/** The shipped detectors whose sidecars read and validate (the page offers a choice when there are several). */
export async function listShippedModels(): Promise<ShippedModel[]> {
  const out: ShippedModel[] = [];
  for (const url of await shippedSidecarUrls()) {
    const res = await fetchOk(url);
    if (!res) continue;
    try {
      const sc = parseSidecar(await res.text());
      out.push({ url, name: modelName(sc, url), version: sc.version, summary: sc.summary });
    } catch { /* an invalid sidecar is reported when it is chosen, not listed */ }
  }
  return out;
}

/** The detector to start with: `preferred` when it loads, else the first listed at /models/index.json, else the test fixture model. */
export async function fetchDefaultModel(preferred?: string): Promise<ModelEntry> {
  const candidates: Array<[string, ModelEntry['origin']]> = [];
  if (preferred) candidates.push([preferred, preferred.startsWith('/models/') ? 'shipped' : 'fixture']);
  for (const url of await shippedSidecarUrls()) candidates.push([url, 'shipped']);
  candidates.push(['/fixtures/fixture-model.model.json', 'fixture']);
  let last: unknown = null;
  for (const [url, origin] of candidates) {
    try { return await fetchModel(url, origin); } catch (err) { last = err; }
  }
  throw last ?? new SeamtallyError('model-invalid', 'No detector was found under /models/: load an .onnx and its .model.json with "Use another detector".');
}

/** A user's model from two picked files: the .onnx and its .model.json sidecar. */
export async function readModelFiles(files: File[]): Promise<ModelEntry> {
  const onnx = files.find((f) => f.name.toLowerCase().endsWith('.onnx'));
  const side = files.find((f) => f.name.toLowerCase().endsWith('.json'));
  if (!onnx || !side) {
    throw new SeamtallyError('model-invalid', 'Pick two files together: the model (.onnx) and its sidecar (.model.json).');
  }
  if (onnx.size > MAX_ONNX_BYTES) {
    throw new SeamtallyError('model-invalid', `The model file is ${(onnx.size / 2 ** 20).toFixed(0)} MB; at most ${MAX_ONNX_BYTES / 2 ** 20} MB are accepted. Pick a smaller model.`);
  }
  const sidecar = parseSidecar(await side.text());
  return { name: sidecar.name ?? onnx.name.replace(/\.onnx$/i, ''), origin: 'user', bytes: await onnx.arrayBuffer(), sidecar, card: null };
}
