// geotiff.js SceneSource over a File/Blob, a URL (range requests) or a Node file path, reading file-tile-aligned
// blocks through a bounded LRU so overlapping windows decode each file tile once. No DOM: runs in workers and Node.
import { GeoTIFF, fromFile, fromUrl, type GeoTIFFImage } from 'geotiff';
import { SeamtallyError } from '../core/errors.ts';
import { sceneGeoref, type SceneGeoref } from '../core/georef.ts';
import type { UserCrsDefs } from '../core/crs.ts';
import type { PixelBox } from '../core/types.ts';
import { TileCache } from '../core/tile-cache.ts';
import { fastBlockReader, type FastBlockReader } from './geotiff-blocks.ts';
import { checkMagic, checkRasterSize, classify } from './geotiff-errors.ts';
import './lzw-decoder.ts'; // registers the bounded LZW decoder with geotiff.js

export { checkMagic };
import {
  allocSamples, levelSize, type LevelSize, type RasterWindow, type ReadWindowOptions, type SampleArray, type SampleDtype,
  type SceneInfo, type SceneSource,
} from '../core/scene-source.ts';

export interface GeoTiffSourceOptions {
  /** Display name (file name). Default: 'scene'. */
  name?: string;
  /** Size of the whole file in bytes, when known (Blob.size, fs.stat): enables the truncation check. */
  byteLength?: number;
  /**
   * Byte budget of this source's decoded-tile cache, or 'auto' (default): sized from the windows read to what
   * raster-order tiling reuses, at most `cacheMaxBytes` (see `autoCacheBytes`). Ignored when `cache` is given.
   */
  cacheBytes?: number | 'auto';
  /** Upper bound of an 'auto' budget. Default AUTO_CACHE_MAX_BYTES (64 MiB). */
  cacheMaxBytes?: number;
  /** A cache shared between sources (keys are prefixed per source). */
  cache?: TileCache<DecodedBlock>;
  /** Extra CRS definitions (EPSG code → proj4). */
  userDefs?: UserCrsDefs;
  signal?: AbortSignal;
}

/** One decoded file tile (or group of strips): band-separated samples. */
export interface DecodedBlock {
  widthPx: number;
  heightPx: number;
  bands: SampleArray[];
  byteLength: number;
}

/** Bounds of a cacheBytes 'auto' budget: at least this… */
export const AUTO_CACHE_MIN_BYTES = 8 * 1024 * 1024;
/**
 * …and, unless `cacheMaxBytes` says otherwise, at most this. Retained decoded tiles raise the peak RSS by about twice
 * their bytes (the JS engine lets more garbage collect before a GC when more external memory survives), so a row
 * band of a wide scene (~108 MiB at 16 000² with 1 472 px windows) would make memory grow with scene size.
 */
export const AUTO_CACHE_MAX_BYTES = 64 * 1024 * 1024;

/** One window's file tiles, in the level's block grid. */
export interface WindowBlocks {
  /** File-tile columns across the whole level. */
  levelCols: number;
  /** File-tile columns and rows the window touches. */
  cols: number;
  rows: number;
  /** Bytes of one decoded file tile (all bands). */
  blockBytes: number;
}

/**
 * The 'auto' decoded-tile budget, from the largest window read so far. Tiles are read in raster order: neighbouring
 * windows of a row share the file tiles of their overlap columns, and the next row reuses the file tiles of the
 * overlap rows, which an LRU keeps only if it holds a whole row of windows' file tiles (levelCols × rows, plus one
 * window). So: that row band when it fits in `maxBytes` (each file tile decoded once); otherwise the file tiles of
 * two windows (the last one and the one being read), which keeps the reuse along a row at a size independent of the
 * scene — a budget between the two would cost memory without saving a decode. With the shipped model at 0.3 m the row
 * band is ~36 MiB on 4 000² scenes and ~60 MiB on 8 000²; on 16 000² (~108 MiB) it falls back to two windows (~24
 * MiB) and decodes each file tile ~1.44× (bench/README.md has the cost).
 */
export function autoCacheBytes(w: WindowBlocks, maxBytes = AUTO_CACHE_MAX_BYTES): number {
  const rowBandBytes = (w.levelCols + w.cols) * w.rows * w.blockBytes;
  const twoWindowsBytes = 2 * w.cols * w.rows * w.blockBytes;
  const bytes = rowBandBytes <= maxBytes ? rowBandBytes : Math.min(maxBytes, twoWindowsBytes);
  return Math.max(Math.min(AUTO_CACHE_MIN_BYTES, maxBytes), bytes);
}

/** Rows per block when the file is stripped (strips are grouped until a block has at least this many rows). */
const STRIP_BLOCK_MIN_ROWS = 64;
/** Images (IFDs) looked at per file: the full-resolution image, overviews and masks of a COG fit many times over. */
const MAX_IMAGES = 64;
let sourceCounter = 0;

/** Open a File or Blob (browser page or worker). */
export async function openGeoTiffBlob(blob: Blob, opts: GeoTiffSourceOptions = {}): Promise<SceneSource> {
  const name = opts.name ?? ('name' in blob && typeof blob.name === 'string' ? blob.name : 'scene');
  await checkMagic(new Uint8Array(await blob.slice(0, 8).arrayBuffer()), name);
  return openTiff(() => GeoTIFF.fromSource(blobSource(blob), undefined, opts.signal), { ...opts, name, byteLength: opts.byteLength ?? blob.size });
}

/**
 * A geotiff.js byte source over a Blob via `blob.slice().arrayBuffer()`, which exists in pages, workers and Node
 * (geotiff's own fromBlob needs FileReader, which Node lacks).
 */
function blobSource(blob: Blob): Parameters<typeof GeoTIFF.fromSource>[0] {
  // Offsets come from the file's own header: clamp them to the blob (Node's Blob.slice aborts the whole process on
  // offsets past 2^32; a damaged header then reads short and fails as 'truncated').
  const at = (v: number) => (Number.isFinite(v) ? Math.min(blob.size, Math.max(0, Math.floor(v))) : 0);
  const slice = (s: { offset: number; length: number }) => blob.slice(at(s.offset), at(s.offset + s.length)).arrayBuffer();
  const src = {
    async fetch(slices: { offset: number; length: number }[], signal?: AbortSignal): Promise<ArrayBuffer[]> {
      if (signal?.aborted) throw new SeamtallyError('cancelled', 'The run was cancelled.');
      return Promise.all(slices.map(slice));
    },
    async fetchSlice(s: { offset: number; length: number }) {
      return { data: await slice(s), offset: s.offset, length: s.length };
    },
    get fileSize() { return blob.size; },
    async close() {},
  };
  return src as unknown as Parameters<typeof GeoTIFF.fromSource>[0];
}

/** Open a URL with HTTP range requests (1 MiB blocks, 32 cached blocks). */
export async function openGeoTiffUrl(url: string, opts: GeoTiffSourceOptions = {}): Promise<SceneSource> {
  const name = opts.name ?? (url.split('/').pop() || url);
  // blockSize/cacheSize reach geotiff's BlockedSource at runtime; its .d.ts types RemoteSourceOptions without them.
  const remote = { blockSize: 1 << 20, cacheSize: 32 } as Parameters<typeof fromUrl>[1];
  await probeRangeSupport(url, opts.signal);
  return openTiff(() => fromUrl(url, remote, opts.signal), { ...opts, name });
}

/**
 * Ask once for the first KiB (RFC 9110 §14: a server that honours ranges answers 206; one that ignores them, 200 with
 * the whole file) so an unusable URL fails in one sentence instead of being downloaded whole or hanging.
 */
async function probeRangeSupport(url: string, signal?: AbortSignal): Promise<void> {
  let res: Response;
  try {
    res = await fetch(url, { headers: { Range: 'bytes=0-1023' }, signal });
  } catch (err) {
    if (err instanceof Error && err.name === 'AbortError') throw err;
    // Browsers reject with a bare TypeError for a CORS refusal and an unreachable host alike (Fetch standard §4.1).
    throw new SeamtallyError('network', `The scene at ${url} could not be fetched: the server is unreachable or does not allow this page to read it (CORS). Ask its owner to allow cross-origin range requests (Access-Control-Allow-Origin, and Access-Control-Expose-Headers: Content-Range), or download it and open it from disk.`, { url, cause: err instanceof Error ? err.message : String(err) });
  }
  if (res.status === 206) {
    await res.body?.cancel().catch(() => {});
    return;
  }
  await res.body?.cancel().catch(() => {});
  if (res.status === 200) {
    throw new SeamtallyError('range-unsupported', `The server at ${originOf(url)} sent the whole file instead of the part asked for (it ignores HTTP range requests), so seamtally cannot read this scene window by window: serve it from a server that supports range requests (most static servers and object stores do), or download it and open it from disk.`, { url, status: res.status });
  }
  throw new SeamtallyError('network', `The scene at ${url} could not be fetched: the server answered HTTP ${res.status}${res.statusText ? ` (${res.statusText})` : ''}. Check the address, or download the file and open it from disk.`, { url, status: res.status });
}

function originOf(url: string): string {
  try {
    return new URL(url).origin;
  } catch {
    return url;
  }
}

/** Open a file path (Node only: geotiff's fromFile). Pass `byteLength` (fs.statSync(path).size) and `head` for checks. */
export async function openGeoTiffPath(path: string, opts: GeoTiffSourceOptions & { head?: Uint8Array } = {}): Promise<SceneSource> {
  const name = opts.name ?? (path.split(/[\\/]/).pop() || path);
  if (opts.head) await checkMagic(opts.head, name);
  return openTiff(() => fromFile(path, opts.signal), { ...opts, name });
}

const DTYPES: Record<string, SampleDtype> = {
  '1:8': 'uint8', '1:16': 'uint16', '1:32': 'uint32', '2:8': 'int8', '2:16': 'int16', '2:32': 'int32', '3:32': 'float32', '3:64': 'float64',
};

function dtypeOf(image: GeoTIFFImage): { dtype: SampleDtype; bits: number; significantBits: number } {
  const fmt = image.getSampleFormat(0) ?? 1;
  const bits = image.getBitsPerSample(0);
  const stored = fmt === 3 ? bits : bits <= 8 ? 8 : bits <= 16 ? 16 : 32;
  const dtype = DTYPES[`${fmt}:${stored}`];
  if (!dtype) throw new SeamtallyError('unsupported-raster', `This file stores ${bits}-bit samples of format ${fmt}, which seamtally cannot read: convert it with gdal_translate -ot UInt16.`);
  return { dtype, bits: stored, significantBits: bits };
}

/**
 * GDAL internal mask images (NewSubfileType bit 2: the full-resolution mask has 4, overview masks 5), by size
 * "w×h". GDAL treats a mask value of 0 as not valid (nodata), as an alpha of 0.
 */
async function maskImages(tiff: GeoTIFF): Promise<Map<string, GeoTIFFImage>> {
  const out = new Map<string, GeoTIFFImage>();
  for (let i = 1; i < MAX_IMAGES; i++) {
    let img: GeoTIFFImage;
    try { img = await tiff.getImage(i); } catch (err) {
      if (err instanceof Error && /^No image at index/.test(err.message)) break;
      throw err;
    }
    const subfile = Number(img.getFileDirectory().getValue('NewSubfileType') ?? 0);
    if ((subfile & 4) !== 0 && img.getSamplesPerPixel() === 1) out.set(`${img.getWidth()}×${img.getHeight()}`, img);
  }
  return out;
}

function photometricOf(img: GeoTIFFImage): number | null {
  const fd = img.getFileDirectory();
  return fd.hasTag('PhotometricInterpretation') ? Number(fd.getValue('PhotometricInterpretation')) : null;
}

/** Index of an alpha sample (TIFF ExtraSamples 1 = associated, 2 = unassociated alpha), or -1. */
function alphaSampleIndex(img: GeoTIFFImage): number {
  const extra = img.getFileDirectory().getValue('ExtraSamples') as ArrayLike<number> | number | undefined;
  if (extra === undefined) return -1;
  const e = typeof extra === 'number' ? [extra] : Array.from(extra);
  const first = img.getSamplesPerPixel() - e.length;
  const k = e.findIndex((v) => v === 1 || v === 2);
  return k < 0 ? -1 : first + k;
}

/** Images that are reduced-resolution versions of the first (NewSubfileType bit 0), masks (bit 2) left out. */
async function overviewImages(tiff: GeoTIFF, main: GeoTIFFImage): Promise<GeoTIFFImage[]> {
  const out: GeoTIFFImage[] = [];
  // Walk at most MAX_IMAGES IFDs (not getImageCount, which never ends when a damaged file's IFD chain loops).
  for (let i = 1; i < MAX_IMAGES; i++) {
    let img: GeoTIFFImage;
    try {
      img = await tiff.getImage(i);
    } catch (err) {
      if (err instanceof Error && /^No image at index/.test(err.message)) break;
      throw err;
    }
    const subfile = Number(img.getFileDirectory().getValue('NewSubfileType') ?? 0);
    if ((subfile & 4) !== 0 || (subfile & 1) === 0) continue;
    if (img.getWidth() >= main.getWidth() || img.getSamplesPerPixel() !== main.getSamplesPerPixel()) continue;
    out.push(img);
  }
  return out.sort((a, b) => b.getWidth() - a.getWidth());
}

/** The sizes a header claims, with the decode block as GeoTiffSource.blockSize groups strips. */
function sizeClaim(img: GeoTIFFImage) {
  const th = img.getTileHeight();
  const tiled = img.getFileDirectory().hasTag('TileOffsets');
  return {
    widthPx: img.getWidth(), heightPx: img.getHeight(), bandCount: img.getSamplesPerPixel(),
    tileWidthPx: img.getTileWidth(), tileHeightPx: th,
    bytesPerSample: Math.max(1, Math.ceil(Number(img.getBitsPerSample(0)) / 8)),
    blockWidthPx: tiled ? img.getTileWidth() : img.getWidth(),
    blockHeightPx: tiled ? th : Math.ceil(STRIP_BLOCK_MIN_ROWS / th) * th,
  };
}

async function maxDataEnd(image: GeoTIFFImage): Promise<number> {
  const fd = image.getFileDirectory();
  const tiled = fd.hasTag('TileOffsets');
  const offs = (await fd.loadValue(tiled ? 'TileOffsets' : 'StripOffsets')) as ArrayLike<number | bigint> | number | undefined;
  const cnts = (await fd.loadValue(tiled ? 'TileByteCounts' : 'StripByteCounts')) as ArrayLike<number | bigint> | number | undefined;
  if (offs === undefined || cnts === undefined) return 0;
  const o = typeof offs === 'number' ? [offs] : offs;
  const c = typeof cnts === 'number' ? [cnts] : cnts;
  let end = 0;
  for (let i = 0; i < o.length; i++) end = Math.max(end, Number(o[i]) + Number(c[i] ?? 0));
  return end;
}

function tiffDate(value: unknown): string | null {
  if (typeof value !== 'string') return null;
  const m = /^(\d{4})[:-](\d{2})[:-](\d{2})/.exec(value.trim());
  return m ? `${m[1]}-${m[2]}-${m[3]}` : null;
}

async function openTiff(open: () => Promise<GeoTIFF>, opts: GeoTiffSourceOptions & { name: string }): Promise<SceneSource> {
  const name = opts.name;
  let tiff: GeoTIFF;
  let main: GeoTIFFImage;
  let overviews: GeoTIFFImage[];
  let info: SceneInfo;
  let masks = new Map<string, GeoTIFFImage>();
  let maskKind: SceneInfo['maskKind'] = null;
  try {
    tiff = await open();
    main = await tiff.getImage(0);
    checkRasterSize(sizeClaim(main), name);
    overviews = await overviewImages(tiff, main);
    for (const o of overviews) checkRasterSize(sizeClaim(o), name);
    if (opts.byteLength !== undefined) {
      for (const img of [main, ...overviews]) {
        if ((await maxDataEnd(img)) > opts.byteLength) {
          throw new SeamtallyError('truncated', `"${name}" is cut short: its pixel data runs past the end of the file (${opts.byteLength} bytes). Copy or download the file again.`, { name });
        }
      }
    }
    const fd = main.getFileDirectory();
    const georef: SceneGeoref = sceneGeoref(
      {
        widthPx: main.getWidth(),
        heightPx: main.getHeight(),
        tags: {
          modelPixelScale: (await fd.loadValue('ModelPixelScale')) as ArrayLike<number> | undefined,
          modelTiepoint: (await fd.loadValue('ModelTiepoint')) as ArrayLike<number> | undefined,
          modelTransformation: (await fd.loadValue('ModelTransformation')) as ArrayLike<number> | undefined,
        },
        geoKeys: main.getGeoKeys() as Record<string, number | string | number[]> | null,
      },
      { userDefs: opts.userDefs },
    );
    const { dtype, bits, significantBits } = dtypeOf(main);
    // an alpha band or a GDAL internal mask marks pixels as not valid: they are read as nodata (the file's nodata
    // value, or 0 when it declares none), and the alpha band is not one of the scene's bands
    const alphaIdx = photometricOf(main) === 6 || photometricOf(main) === 3 ? -1 : alphaSampleIndex(main);
    masks = alphaIdx >= 0 ? new Map() : await maskImages(tiff);
    maskKind = alphaIdx >= 0 ? 'alpha' : masks.size > 0 ? 'internal-mask' : null;
    const bandCount = main.getSamplesPerPixel() - (alphaIdx >= 0 ? 1 : 0);
    const meta = (await main.getGDALMetadata()) ?? {};
    const bandNames: string[] = [];
    for (let b = 0; b < bandCount; b++) {
      const m = (await main.getGDALMetadata(b + (alphaIdx >= 0 && b >= alphaIdx ? 1 : 0))) ?? {};
      bandNames.push(typeof m.DESCRIPTION === 'string' ? m.DESCRIPTION : '');
    }
    const nbits = Number(meta.NBITS);
    const photometric = fd.hasTag('PhotometricInterpretation') ? Number(fd.getValue('PhotometricInterpretation')) : null;
    info = {
      name,
      widthPx: main.getWidth(),
      heightPx: main.getHeight(),
      bandCount: photometric === 6 || photometric === 3 ? 3 : bandCount,
      dtype: photometric === 6 || photometric === 3 ? 'uint8' : dtype,
      bitsPerSample: bits,
      significantBits: Number.isInteger(nbits) && nbits > 0 && nbits <= bits ? nbits : significantBits,
      nodata: main.getGDALNoData() ?? (maskKind ? 0 : null),
      maskKind,
      tileWidthPx: main.getTileWidth(),
      tileHeightPx: main.getTileHeight(),
      overviews: overviews.map((o) => ({ widthPx: o.getWidth(), heightPx: o.getHeight() })),
      bandNames,
      photometric,
      acquisitionDate: tiffDate(fd.hasTag('DateTime') ? await fd.loadValue('DateTime') : undefined) ?? tiffDate(meta.ACQUISITIONDATETIME),
      georef,
    };
  } catch (err) {
    throw classify(err, name, 'open');
  }
  return new GeoTiffSource(tiff, [main, ...overviews], info, opts, masks);
}

class GeoTiffSource implements SceneSource {
  readonly info: SceneInfo;
  private readonly cache: TileCache<DecodedBlock>;
  /** Upper bound of the budget when it follows the windows read (cacheBytes 'auto'), else null. */
  private readonly autoMaxBytes: number | null;
  /** Bytes per decoded sample. */
  private readonly sampleBytes: number;
  private readonly keyPrefix: string;
  private readonly asRgb: boolean;
  private readonly fast = new Map<number, Promise<FastBlockReader | null>>();

  /** Sample index of the alpha band in the file (-1: none). */
  private readonly alphaIdx: number;

  constructor(private readonly tiff: GeoTIFF, private readonly levels: GeoTIFFImage[], info: SceneInfo, opts: GeoTiffSourceOptions,
    private readonly masks: Map<string, GeoTIFFImage> = new Map()) {
    this.info = info;
    const cacheBytes = opts.cacheBytes ?? 'auto';
    this.sampleBytes = allocSamples(info.dtype, 0).BYTES_PER_ELEMENT;
    this.autoMaxBytes = !opts.cache && cacheBytes === 'auto' ? opts.cacheMaxBytes ?? AUTO_CACHE_MAX_BYTES : null;
    this.cache = opts.cache ?? new TileCache<DecodedBlock>({
      maxBytes: cacheBytes === 'auto' ? Math.min(AUTO_CACHE_MIN_BYTES, this.autoMaxBytes!) : cacheBytes,
    });
    this.keyPrefix = `s${sourceCounter++}`;
    this.asRgb = info.photometric === 6 || info.photometric === 3;
    this.alphaIdx = info.maskKind === 'alpha' ? alphaSampleIndex(levels[0]) : -1;
  }

  /** Block grid of a level: file tiles, or groups of whole strips. */
  private blockSize(level: number): { bw: number; bh: number } {
    const img = this.levels[level];
    const tw = img.getTileWidth();
    const th = img.getTileHeight();
    if (img.getFileDirectory().hasTag('TileOffsets')) return { bw: tw, bh: th };
    return { bw: img.getWidth(), bh: Math.ceil(STRIP_BLOCK_MIN_ROWS / th) * th };
  }

  private async loadBlock(level: number, bx: number, by: number, size: LevelSize, signal?: AbortSignal): Promise<DecodedBlock> {
    const img = this.levels[level];
    const { bw, bh } = this.blockSize(level);
    const x0 = bx * bw;
    const y0 = by * bh;
    const x1 = Math.min(size.widthPx, x0 + bw);
    const y1 = Math.min(size.heightPx, y0 + bh);
    let raw: ArrayLike<number>[];
    try {
      let fast = this.fast.get(level);
      if (!fast) {
        fast = this.asRgb ? Promise.resolve(null) : fastBlockReader(img, this.info.dtype, img.getSamplesPerPixel()).catch(() => null);
        this.fast.set(level, fast);
      }
      const reader = await fast;
      const window = [x0, y0, x1, y1];
      raw = reader ? await reader.read(x0, y0, x1, y1, signal) : (this.asRgb
        ? await img.readRGB({ window, interleave: false, signal })
        : await img.readRasters({ window, interleave: false, signal })) as unknown as ArrayLike<number>[];
    } catch (err) {
      throw classify(err, this.info.name, 'read');
    }
    const bands = (this.alphaIdx >= 0 ? raw.filter((_, k) => k !== this.alphaIdx) : raw).slice(0, this.info.bandCount) as SampleArray[];
    // not-valid pixels (alpha 0, or 0 in the internal mask of this level's size) become nodata in every band
    let invalid: ArrayLike<number> | null = this.alphaIdx >= 0 ? raw[this.alphaIdx] : null;
    const mask = this.masks.get(`${img.getWidth()}×${img.getHeight()}`);
    if (mask) {
      try { invalid = ((await mask.readRasters({ window: [x0, y0, x1, y1], interleave: false, signal })) as unknown as ArrayLike<number>[])[0]; } catch (err) {
        throw classify(err, this.info.name, 'read');
      }
    }
    if (invalid) {
      const nd = this.info.nodata ?? 0;
      for (let i = 0; i < invalid.length; i++) if (invalid[i] === 0) for (const b of bands) b[i] = nd;
    }
    let byteLength = 0;
    for (const b of bands) byteLength += b.byteLength;
    return { widthPx: x1 - x0, heightPx: y1 - y0, bands, byteLength };
  }

  async readWindow(windowPx: PixelBox, opts: ReadWindowOptions = {}): Promise<RasterWindow> {
    const level = opts.overviewLevel ?? 0;
    const signal = opts.signal;
    if (signal?.aborted) throw new SeamtallyError('cancelled', 'The run was cancelled.');
    const size = levelSize(this.info, level);
    const { minXPx, minYPx, maxXPx, maxYPx } = windowPx;
    if (![minXPx, minYPx, maxXPx, maxYPx].every(Number.isInteger) || maxXPx < minXPx || maxYPx < minYPx) {
      throw new Error(`readWindow needs an integer window with min <= max, got ${JSON.stringify(windowPx)}`);
    }
    const w = maxXPx - minXPx;
    const h = maxYPx - minYPx;
    const { bandCount, dtype, nodata } = this.info;
    const bands = Array.from({ length: bandCount }, () => allocSamples(dtype, w * h));
    const cx0 = Math.max(0, minXPx), cy0 = Math.max(0, minYPx);
    const cx1 = Math.min(size.widthPx, maxXPx), cy1 = Math.min(size.heightPx, maxYPx);
    const outsideFilled = cx0 > minXPx || cy0 > minYPx || cx1 < maxXPx || cy1 < maxYPx;
    if (outsideFilled) for (const b of bands) b.fill(nodata ?? 0);
    if (cx1 > cx0 && cy1 > cy0) {
      const { bw, bh } = this.blockSize(level);
      if (this.autoMaxBytes !== null) {
        const want = autoCacheBytes({
          levelCols: Math.ceil(size.widthPx / bw), cols: Math.ceil(cx1 / bw) - Math.floor(cx0 / bw), rows: Math.ceil(cy1 / bh) - Math.floor(cy0 / bh),
          blockBytes: bw * bh * bandCount * this.sampleBytes,
        }, this.autoMaxBytes);
        if (want > this.cache.maxBytes) this.cache.setMaxBytes(want);
      }
      const jobs: Promise<void>[] = [];
      for (let by = Math.floor(cy0 / bh); by * bh < cy1; by++) {
        for (let bx = Math.floor(cx0 / bw); bx * bw < cx1; bx++) {
          const key = `${this.keyPrefix}:${level}:${bx}:${by}`;
          jobs.push(this.cache.getOrLoad(key, () => this.loadBlock(level, bx, by, size, signal)).then((blk) => {
            copyBlock(blk, bx * bw, by * bh, bands, windowPx, cx0, cy0, cx1, cy1);
          }));
        }
      }
      await Promise.all(jobs);
    }
    if (signal?.aborted) throw new SeamtallyError('cancelled', 'The run was cancelled.');
    return { windowPx, level, widthPx: w, heightPx: h, bandCount, bitsPerSample: this.info.bitsPerSample, dtype, nodata, outsideFilled, bands };
  }

  cacheStats() {
    return this.cache.stats();
  }

  async close(): Promise<void> {
    this.cache.clear();
    await this.tiff.close();
  }
}

function copyBlock(blk: DecodedBlock, bx0: number, by0: number, out: SampleArray[], win: PixelBox, cx0: number, cy0: number, cx1: number, cy1: number): void {
  const x0 = Math.max(cx0, bx0), x1 = Math.min(cx1, bx0 + blk.widthPx);
  const y0 = Math.max(cy0, by0), y1 = Math.min(cy1, by0 + blk.heightPx);
  if (x1 <= x0 || y1 <= y0) return;
  const ww = win.maxXPx - win.minXPx;
  const n = x1 - x0;
  for (let b = 0; b < out.length; b++) {
    const src = blk.bands[b];
    const dst = out[b];
    for (let y = y0; y < y1; y++) {
      const s = (y - by0) * blk.widthPx + (x0 - bx0);
      (dst as Float64Array).set((src as Float64Array).subarray(s, s + n), (y - win.minYPx) * ww + (x0 - win.minXPx));
    }
  }
}

/** Cache statistics of a source opened here (hits/misses/evictions), for benchmarks. */
export function sourceCacheStats(src: SceneSource): ReturnType<TileCache<DecodedBlock>['stats']> | null {
  return src instanceof GeoTiffSource ? src.cacheStats() : null;
}
