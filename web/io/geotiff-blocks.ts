// Fast decoding of one file tile (or group of strips) of a geotiff.js image into band-separated typed arrays.
// geotiff's readRasters copies every sample through a DataView call; for the common layouts (uncompressed, LZW,
// DEFLATE; 8/16/32-bit integer or float samples; little-endian or 8-bit) we decode the block's bytes with geotiff's
// own decoder (DEFLATE: the bounded native inflate in inflate.ts) and de-interleave with typed arrays. Everything
// else goes through readRasters/readRGB.
import { getDecoder, type BaseDecoder, type GeoTIFFImage } from 'geotiff';
import { allocSamples, SAMPLE_ARRAY, type SampleArray, type SampleDtype } from '../core/scene-source.ts';
import { inflateBounded } from './inflate.ts';
import { predictorSupported, undoPredictor } from './tiff-predictor.ts';
import { unpackChunky, unpackPlanar } from './unpack-block.ts';

type Decoder = Awaited<ReturnType<typeof getDecoder>>;
const FAST_COMPRESSIONS = new Set([1, 5, 8, 32946]);
/** TIFF Compression 8 (Adobe Deflate) and 32946 (the old Deflate code): both zlib streams. */
const DEFLATE_COMPRESSIONS = new Set([8, 32946]);
/** What getTileOrStrip needs of a decoder: one compressed block in, its decoded bytes out. */
type BlockDecoder = { decode(block: ArrayBuffer): Promise<ArrayBufferLike> };

/** A reusable fast-path decoder for one image, or null when the image needs geotiff's general path. */
export interface FastBlockReader {
  read(x0: number, y0: number, x1: number, y1: number, signal?: AbortSignal): Promise<SampleArray[]>;
}

export async function fastBlockReader(img: GeoTIFFImage, dtype: SampleDtype, bandCount: number): Promise<FastBlockReader | null> {
  const fd = img.getFileDirectory();
  const compression = Number(fd.getValue('Compression') ?? 1);
  const photometric = fd.hasTag('PhotometricInterpretation') ? Number(fd.getValue('PhotometricInterpretation')) : 1;
  const bits = img.getBitsPerSample(0);
  const spp = img.getSamplesPerPixel();
  for (let s = 1; s < spp; s++) if (img.getBitsPerSample(s) !== bits || img.getSampleFormat(s) !== img.getSampleFormat(0)) return null;
  if (!FAST_COMPRESSIONS.has(compression) || photometric === 6 || photometric === 3 || bits % 8 !== 0) return null;
  if (bits > 8 && !img.littleEndian) return null;
  const tiled = fd.hasTag('TileOffsets');
  const planar = Number(fd.getValue('PlanarConfiguration') ?? 1);
  const predictor = Number((await fd.loadValue('Predictor')) ?? 1);
  const tw = img.getTileWidth();
  const th = img.getTileHeight();
  const rowPx = tiled ? tw : img.getWidth();
  // the decoder of file block row `ty`: DEFLATE (bounded, with its rows' size) per block, every other one shared
  let blockDecoder: (ty: number, signal?: AbortSignal) => Decoder;
  // DEFLATE, interleaved unsigned 8/16-bit samples with Predictor 2: the predictor is undone while de-interleaving
  // (one pass over the block), not by the decoder
  const fusedPredictor = DEFLATE_COMPRESSIONS.has(compression) && predictor === 2 && planar !== 2
    && (bits === 8 || bits === 16) && img.getSampleFormat(0) === 1;
  const accMask = fusedPredictor ? (bits === 8 ? 0xff : 0xffff) : 0;
  if (DEFLATE_COMPRESSIONS.has(compression) && predictorSupported(predictor, bits / 8)) {
    const pixelSamples = planar === 2 ? 1 : spp;
    const decoderPredictor = fusedPredictor ? 1 : predictor;
    blockDecoder = (ty, signal) => deflateBlockDecoder(rowPx, th, img.getBlockHeight(ty), pixelSamples, bits / 8, decoderPredictor, signal) as unknown as Decoder;
  } else {
    const decoder = await getDecoder(compression, {
      tileWidth: rowPx,
      tileHeight: th,
      planarConfiguration: planar,
      bitsPerSample: fd.getValue('BitsPerSample') as number[],
      predictor,
    } as ConstructorParameters<typeof BaseDecoder>[0]);
    blockDecoder = () => decoder;
  }
  const view = (buf: ArrayBufferLike) => new SAMPLE_ARRAY[dtype](buf);
  return {
    async read(x0, y0, x1, y1, signal) {
      const w = x1 - x0, h = y1 - y0;
      const out = Array.from({ length: bandCount }, () => allocSamples(dtype, w * h));
      // file blocks (tiles, or strips) covering the requested block; for tiles exactly one
      const tx0 = Math.floor(x0 / tw), tx1 = Math.ceil(x1 / tw), ty0 = Math.floor(y0 / th), ty1 = Math.ceil(y1 / th);
      const jobs: Promise<void>[] = [];
      for (let ty = ty0; ty < ty1; ty++) {
        for (let tx = tx0; tx < tx1; tx++) {
          const samples = planar === 2 ? Array.from({ length: bandCount }, (_, b) => b) : [0];
          for (const sample of samples) {
            jobs.push(img.getTileOrStrip(tx, ty, sample, blockDecoder(ty, signal), signal).then(({ data }) => {
              const src = view(data);
              const bx0 = tx * tw, by0 = ty * th;
              const rowLen = tiled ? tw : img.getWidth();
              const cx0 = Math.max(x0, bx0), cx1 = Math.min(x1, bx0 + rowLen);
              const cy0 = Math.max(y0, by0), cy1 = Math.min(y1, by0 + img.getBlockHeight(ty));
              const region = {
                rowLenPx: rowLen, colPx0: cx0 - bx0, colPx1: cx1 - bx0, rowPx0: cy0 - by0, rowPx1: cy1 - by0,
                dstWidthPx: w, dstXPx: cx0 - x0, dstYPx: cy0 - y0,
              };
              if (planar === 2) {
                if (sample < out.length) unpackPlanar(src, out[sample], region);
              } else {
                unpackChunky(src, spp, out, region, accMask);
              }
            }));
          }
        }
      }
      await Promise.all(jobs);
      return out;
    },
  };
}

/**
 * A decoder for one DEFLATE block of `rows` rows (`rows` < `fullRows` only for the last strip): inflated within the
 * size of a full block (libtiff also accepts a last strip written full), then the predictor undone. A stream that
 * inflates to more is a decompression bomb, one that inflates to less is cut short (libtiff: "Not enough data"):
 * both throw 'damaged DEFLATE data', which geotiff-errors.ts turns into the typed 'truncated' error.
 */
function deflateBlockDecoder(rowPx: number, fullRows: number, rows: number, samplesPerPixel: number, bytesPerSample: number, predictor: number, signal?: AbortSignal): BlockDecoder {
  const rowBytes = rowPx * samplesPerPixel * bytesPerSample;
  const blockBytes = rowBytes * rows;
  return {
    async decode(compressed) {
      const out = await inflateBounded(new Uint8Array(compressed), rowBytes * fullRows, signal);
      if (out.length < blockBytes) throw new Error(`damaged DEFLATE data: it inflates to ${out.length} of the ${blockBytes} bytes of its block`);
      // the samples are viewed as 16/32/64-bit arrays: the block must start its own buffer (also after slicing)
      const block = out.byteOffset === 0 && out.buffer.byteLength === blockBytes ? out : out.slice(0, blockBytes);
      undoPredictor(block, predictor, rowPx, rows, samplesPerPixel, bytesPerSample);
      return block.buffer;
    },
  };
}
