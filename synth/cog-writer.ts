// Streaming tiled GeoTIFF writer with internal overviews in COG layout (IFDs first, smallest overview's data first).
import { zlibSync } from 'fflate';
import { SeamtallyError } from '../web/core/errors.ts';
import { TiffType, encodeHeader, encodeIfd, headerSizeB, ifdSizeB, type TiffFlavour, type TiffTag } from './tiff-ifd.ts';
import { downsampleInto } from './downsample.ts';

/** Where the finished file goes: sequential writes plus positional patching (Node fs, or memory). */
export interface ByteSink {
  write(bytes: Uint8Array): void;
  pwrite(offsetB: number, bytes: Uint8Array): void;
}

/** Temporary sequential storage for one pyramid level's compressed tiles, copied into the sink at the end. */
export interface Spool {
  write(bytes: Uint8Array): void;
  copyTo(sink: ByteSink): void;
  dispose(): void;
}

export type TileSamples = Uint8Array | Uint16Array;

/** Renders the full-resolution window [x0, x0+w) × [y0, y0+h) as band-interleaved samples (w*h*bandCount). */
export type WindowRenderer = (x0Px: number, y0Px: number, wPx: number, hPx: number) => TileSamples;

export interface CogSpec {
  widthPx: number;
  heightPx: number;
  bandCount: number;
  bitsPerSample: 8 | 16;
  /** 'rgb' needs ≥ 3 bands (extra ones become ExtraSamples); 'minisblack' for pan and multispectral. */
  photometric: 'rgb' | 'minisblack';
  /** Internal tile size in pixels, a multiple of 16 (TIFF 6.0 §15). Default 512. */
  tilePx?: number;
  /** Tags for the full-resolution IFD only (GeoKeys, nodata, DateTime, metadata). */
  extraTags?: readonly TiffTag[];
  /** 'auto' (default) picks BigTIFF when the uncompressed size could pass 4 GiB. */
  flavour?: 'classic' | 'bigtiff' | 'auto';
  /** DEFLATE level 1–9. Default 3 (speed over size). */
  deflateLevel?: number;
}

export interface CogWriteStats {
  levels: { widthPx: number; heightPx: number; tilesAcross: number; tilesDown: number }[];
  fileSizeB: number;
  bigTiff: boolean;
}

const CLASSIC_LIMIT_B = 0xffff_ffff;

interface Level { widthPx: number; heightPx: number; tilesAcross: number; tilesDown: number }

/** Pyramid level sizes: each overview halves (rounding up) until the level fits in one tile. */
export function pyramidLevels(widthPx: number, heightPx: number, tilePx: number): Level[] {
  const levels: Level[] = [];
  let w = widthPx;
  let h = heightPx;
  for (;;) {
    levels.push({ widthPx: w, heightPx: h, tilesAcross: Math.ceil(w / tilePx), tilesDown: Math.ceil(h / tilePx) });
    if (w <= tilePx && h <= tilePx) return levels;
    w = Math.ceil(w / 2);
    h = Math.ceil(h / 2);
  }
}

function levelTags(spec: CogSpec, lv: Level, isOverview: boolean, offsets: number[], counts: number[], big: boolean): TiffTag[] {
  const tilePx = spec.tilePx ?? 512;
  const nb = spec.bandCount;
  const extra = spec.photometric === 'rgb' ? nb - 3 : nb - 1;
  const tags: TiffTag[] = [
    { tag: 254, type: TiffType.LONG, values: [isOverview ? 1 : 0] }, // NewSubfileType: 1 = reduced resolution
    { tag: 256, type: TiffType.LONG, values: [lv.widthPx] },
    { tag: 257, type: TiffType.LONG, values: [lv.heightPx] },
    { tag: 258, type: TiffType.SHORT, values: new Array(nb).fill(spec.bitsPerSample) },
    { tag: 259, type: TiffType.SHORT, values: [8] }, // Compression: Adobe DEFLATE
    { tag: 262, type: TiffType.SHORT, values: [spec.photometric === 'rgb' ? 2 : 1] },
    { tag: 277, type: TiffType.SHORT, values: [nb] },
    { tag: 284, type: TiffType.SHORT, values: [1] }, // PlanarConfiguration: chunky
    { tag: 317, type: TiffType.SHORT, values: [2] }, // Predictor: horizontal differencing
    { tag: 322, type: TiffType.SHORT, values: [tilePx] },
    { tag: 323, type: TiffType.SHORT, values: [tilePx] },
    { tag: 324, type: big ? TiffType.LONG8 : TiffType.LONG, values: offsets },
    { tag: 325, type: big ? TiffType.LONG8 : TiffType.LONG, values: counts },
    { tag: 339, type: TiffType.SHORT, values: new Array(nb).fill(1) }, // SampleFormat: unsigned integer
  ];
  if (extra > 0) tags.push({ tag: 338, type: TiffType.SHORT, values: new Array(extra).fill(0) }); // ExtraSamples: unspecified
  if (!isOverview && spec.extraTags) tags.push(...spec.extraTags);
  return tags;
}

function checkSpec(spec: CogSpec, tilePx: number): void {
  if (!(tilePx >= 16 && tilePx % 16 === 0)) throw new Error(`tilePx must be a positive multiple of 16, got ${tilePx}`);
  if (spec.photometric === 'rgb' && spec.bandCount < 3) throw new Error(`photometric rgb needs 3 or more bands, got ${spec.bandCount}`);
  if (!(spec.widthPx >= 1 && spec.heightPx >= 1)) throw new Error(`bad raster size ${spec.widthPx}×${spec.heightPx}`);
  if (new Uint8Array(new Uint16Array([1]).buffer)[0] !== 1) throw new Error('the COG writer assumes a little-endian host');
}

/** Horizontal differencing (TIFF Predictor 2) per row and sample, in place. */
function applyPredictor(a: TileSamples, tilePx: number, nb: number): void {
  const rowLen = tilePx * nb;
  for (let r = 0; r < tilePx; r++) {
    const base = r * rowLen;
    for (let i = rowLen - 1; i >= nb; i--) a[base + i] = a[base + i] - a[base + i - nb];
  }
}

/**
 * Write a tiled, DEFLATE-compressed TIFF with internal overviews. Full-resolution tiles are rendered one at a time
 * in quadtree order; each overview tile is built from its four children as soon as they exist, so memory holds
 * about one tile per pyramid level, whatever the raster size. Compressed tiles go to one spool per level and are
 * copied into the sink after the IFDs, smallest overview first (the COG layout).
 */
export function writeCog(spec: CogSpec, render: WindowRenderer, sink: ByteSink, newSpool: () => Spool): CogWriteStats {
  const tilePx = spec.tilePx ?? 512;
  checkSpec(spec, tilePx);
  const nb = spec.bandCount;
  const levels = pyramidLevels(spec.widthPx, spec.heightPx, tilePx);
  const boundB = levels.reduce((s, l) => s + l.tilesAcross * l.tilesDown, 0) * tilePx * tilePx * nb * (spec.bitsPerSample / 8) * 1.01 + 1e6;
  const mode = spec.flavour ?? 'auto';
  if (mode === 'classic' && boundB > CLASSIC_LIMIT_B) {
    throw new SeamtallyError('too-large', `A ${spec.widthPx} × ${spec.heightPx} px, ${nb}-band raster can pass the 4 GiB limit of classic TIFF: choose a smaller size or the BigTIFF format.`);
  }
  const f: TiffFlavour = { big: mode === 'bigtiff' || (mode === 'auto' && boundB > CLASSIC_LIMIT_B) };

  const offsets = levels.map((l) => new Array<number>(l.tilesAcross * l.tilesDown).fill(0));
  const counts = levels.map((l) => new Array<number>(l.tilesAcross * l.tilesDown).fill(0));
  const spoolSize = levels.map(() => 0);
  const spools = levels.map(() => newSpool());
  try {
    const Ctor = spec.bitsPerSample === 8 ? Uint8Array : Uint16Array;
    const tileLen = tilePx * tilePx * nb;
    const bufs = levels.map(() => new Ctor(tileLen));
    const scratch = new Ctor(tileLen);
    const level = spec.deflateLevel ?? 3;

    const emit = (k: number, tx: number, ty: number, tile: TileSamples): void => {
      scratch.set(tile);
      applyPredictor(scratch, tilePx, nb);
      const bytes = zlibSync(new Uint8Array(scratch.buffer, scratch.byteOffset, scratch.byteLength), { level: level as 3 });
      const idx = ty * levels[k].tilesAcross + tx;
      offsets[k][idx] = spoolSize[k];
      counts[k][idx] = bytes.length;
      spools[k].write(bytes);
      spoolSize[k] += bytes.length;
    };

    const produce = (k: number, tx: number, ty: number): TileSamples => {
      const out = bufs[k];
      out.fill(0);
      if (k === 0) {
        const x0 = tx * tilePx;
        const y0 = ty * tilePx;
        const w = Math.min(tilePx, spec.widthPx - x0);
        const h = Math.min(tilePx, spec.heightPx - y0);
        const win = render(x0, y0, w, h);
        if (win.length !== w * h * nb) throw new Error(`renderer returned ${win.length} samples for a ${w}×${h}×${nb} window`);
        for (let r = 0; r < h; r++) out.set(win.subarray(r * w * nb, (r + 1) * w * nb), r * tilePx * nb);
      } else {
        const below = levels[k - 1];
        for (let dy = 0; dy < 2; dy++) {
          for (let dx = 0; dx < 2; dx++) {
            const cx = tx * 2 + dx;
            const cy = ty * 2 + dy;
            if (cx >= below.tilesAcross || cy >= below.tilesDown) continue;
            const child = produce(k - 1, cx, cy);
            downsampleInto(child, out, tilePx, nb, (dx * tilePx) / 2, (dy * tilePx) / 2);
          }
        }
      }
      emit(k, tx, ty, out);
      return out;
    };
    const top = levels.length - 1;
    produce(top, 0, 0);

    // Layout: header, IFDs (full resolution first, then overviews), then data, smallest overview first.
    const tagsFor = (k: number, offs: number[]) => levelTags(spec, levels[k], k > 0, offs, counts[k], f.big);
    const ifdAt: number[] = [];
    let pos = headerSizeB(f);
    for (let k = 0; k < levels.length; k++) {
      ifdAt.push(pos);
      pos += ifdSizeB(f, tagsFor(k, offsets[k]));
    }
    const dataAt: number[] = new Array(levels.length);
    for (let k = top; k >= 0; k--) { dataAt[k] = pos; pos += spoolSize[k]; }
    const fileSizeB = pos;
    if (!f.big && fileSizeB > CLASSIC_LIMIT_B) {
      throw new SeamtallyError('too-large', `The file would be ${fileSizeB} bytes, over the 4 GiB limit of classic TIFF: use the BigTIFF format.`);
    }
    sink.write(encodeHeader(f, ifdAt[0]));
    for (let k = 0; k < levels.length; k++) {
      const abs = offsets[k].map((o) => o + dataAt[k]);
      sink.write(encodeIfd(f, tagsFor(k, abs), ifdAt[k], k + 1 < levels.length ? ifdAt[k + 1] : 0));
    }
    for (let k = top; k >= 0; k--) spools[k].copyTo(sink);
    return { levels, fileSizeB, bigTiff: f.big };
  } finally {
    for (const s of spools) s.dispose();
  }
}

/** A spool that keeps chunks in memory (tests, browser). */
export function memorySpool(): Spool {
  let chunks: Uint8Array[] = [];
  return {
    write: (b) => { chunks.push(b); },
    copyTo: (sink) => { for (const c of chunks) sink.write(c); },
    dispose: () => { chunks = []; },
  };
}

/** A sink that assembles the file in memory (tests, browser). */
export function memorySink(): ByteSink & { bytes(): Uint8Array } {
  let buf = new Uint8Array(1 << 16);
  let len = 0;
  const ensure = (n: number) => {
    if (n <= buf.length) return;
    let cap = buf.length;
    while (cap < n) cap *= 2;
    const nb = new Uint8Array(cap);
    nb.set(buf.subarray(0, len));
    buf = nb;
  };
  return {
    write(b) { ensure(len + b.length); buf.set(b, len); len += b.length; },
    pwrite(o, b) { ensure(o + b.length); buf.set(b, o); len = Math.max(len, o + b.length); },
    bytes: () => buf.slice(0, len),
  };
}
