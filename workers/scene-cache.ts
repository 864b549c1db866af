// Per-worker open scenes and prepared pipelines: each File/URL is opened once per worker and prepared once per run setup.
import type { SceneSource } from '../web/core/scene-source.ts';
import { AUTO_CACHE_MAX_BYTES, openGeoTiffBlob, openGeoTiffUrl } from '../web/io/geotiff-source.ts';
import { prepareScene, type ScenePipeline } from '../web/core/pipeline.ts';
import type { ModelSidecar } from '../web/core/model-contract.ts';
import type { SceneInput, ScenePrepareOptions } from './contract.ts';

/**
 * Most bytes of decoded file tiles one worker keeps per scene: the budget follows the windows read ('auto', see
 * autoCacheBytes in web/io/geotiff-source.ts) up to this; each of the N workers holds its own.
 */
const CACHE_MAX_BYTES_PER_SCENE = AUTO_CACHE_MAX_BYTES;

/** Open a scene from its input (no caching). */
export function openInput(input: SceneInput, cacheBytes: number | 'auto' = 'auto'): Promise<SceneSource> {
  const opts = { cacheBytes, cacheMaxBytes: CACHE_MAX_BYTES_PER_SCENE };
  return input.kind === 'file'
    ? openGeoTiffBlob(input.file, { name: input.file.name, ...opts })
    : openGeoTiffUrl(new URL(input.url, self.location.href).href, opts);
}

/** Open sources and prepared scenes of one worker, keyed by scene fingerprint. */
export class SceneCache {
  private sources = new Map<string, Promise<SceneSource>>();
  private prepared = new Map<string, Promise<ScenePipeline>>();

  source(key: string, input: SceneInput): Promise<SceneSource> {
    let p = this.sources.get(key);
    if (!p) {
      p = openInput(input);
      p.catch(() => this.sources.delete(key));
      this.sources.set(key, p);
    }
    return p;
  }

  /** The scene prepared for `sidecar` with `opts` (stretch and plan computed once, as the CLI does). */
  pipeline(key: string, input: SceneInput, sidecar: ModelSidecar, modelId: number, opts: ScenePrepareOptions): Promise<ScenePipeline> {
    const pkey = `${key}|${modelId}|${opts.sceneIdx}|${opts.frameEpsg}|${opts.minScore}|${opts.tilePx ?? ''}|${opts.overlapPx ?? 'auto'}`;
    let p = this.prepared.get(pkey);
    if (!p) {
      p = this.source(key, input).then((src) => prepareScene(src, opts.sceneIdx, sidecar, {
        frameEpsg: opts.frameEpsg, minScore: opts.minScore, tilePx: opts.tilePx, overlapPx: opts.overlapPx,
      }));
      p.catch(() => this.prepared.delete(pkey));
      this.prepared.set(pkey, p);
    }
    return p;
  }

  async forget(key: string): Promise<void> {
    const p = this.sources.get(key);
    this.sources.delete(key);
    for (const k of [...this.prepared.keys()]) if (k.startsWith(`${key}|`)) this.prepared.delete(k);
    if (p) await (await p.catch(() => null))?.close();
  }
}
