// Scene pictures for the map: read one overview whole, apply a display stretch, mark nodata transparent.
import type { SceneSource } from '../web/core/scene-source.ts';
import { computeStretch, selectBands } from '../web/core/radiometry.ts';
import type { ScenePreview } from './contract.ts';

/** The finest level whose long side is at most `maxLongSidePx` (the coarsest level when none is that small). */
export function previewLevel(source: SceneSource, maxLongSidePx: number): number {
  const info = source.info;
  const sizes = [{ widthPx: info.widthPx, heightPx: info.heightPx }, ...info.overviews];
  for (let k = 0; k < sizes.length; k++) if (Math.max(sizes[k].widthPx, sizes[k].heightPx) <= maxLongSidePx) return k;
  return sizes.length - 1;
}

/** RGBA of the scene at `previewLevel`. Refuses to read more than 64 MPx for a preview. */
export async function renderPreview(source: SceneSource, maxLongSidePx: number): Promise<ScenePreview> {
  const level = previewLevel(source, maxLongSidePx);
  const size = level === 0 ? source.info : source.info.overviews[level - 1];
  if (size.widthPx * size.heightPx > 64e6) {
    throw new Error(`preview would read ${size.widthPx}×${size.heightPx} px: the scene has no small overview`);
  }
  const win = await source.readWindow({ minXPx: 0, minYPx: 0, maxXPx: size.widthPx, maxYPx: size.heightPx }, { overviewLevel: level });
  const bands = selectBands(source.info);
  const n = win.widthPx * win.heightPx;
  const rgba = new Uint8ClampedArray(n * 4);
  const valid = new Uint8Array(n);
  const first = win.bands[bands.indices[0]];
  const nd = win.nodata;
  for (let i = 0; i < n; i++) {
    const v = first[i];
    valid[i] = Number.isNaN(v) || (nd !== null && v === nd) ? 0 : 1;
  }
  let stretch;
  try { stretch = computeStretch(win, bands, { significantBits: source.info.significantBits }); } catch {
    return { widthPx: win.widthPx, heightPx: win.heightPx, rgba, level }; // all nodata: transparent
  }
  for (let c = 0; c < 3; c++) {
    const src = win.bands[bands.indices[c]];
    const lo = stretch.low[c];
    const k = 255 / (stretch.high[c] - lo);
    for (let i = 0; i < n; i++) rgba[i * 4 + c] = (src[i] - lo) * k;
  }
  for (let i = 0; i < n; i++) rgba[i * 4 + 3] = valid[i] ? 255 : 0;
  return { widthPx: win.widthPx, heightPx: win.heightPx, rgba, level };
}
