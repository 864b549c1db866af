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
  const gt = source.info.georef.geoTransform;
  if (gt[2] === 0 && gt[4] === 0) return { widthPx: win.widthPx, heightPx: win.heightPx, rgba, level };
  return { ...northUp(rgba, win.widthPx, win.heightPx, gt, source.info.widthPx / win.widthPx), level };
}

/**
 * Resample a rotated scene's picture onto a north-up grid over its map bounding box (nearest neighbour), so it can
 * be drawn as an axis-aligned image with the extent pixelBoxToMapBox gives.
 */
function northUp(rgba: Uint8ClampedArray, w: number, h: number, gt: readonly number[], scenePxPerPreviewPx: number) {
  const corners = [[0, 0], [w, 0], [w, h], [0, h]].map(([c, r]) => {
    const x = c * scenePxPerPreviewPx, y = r * scenePxPerPreviewPx;
    return [gt[0] + x * gt[1] + y * gt[2], gt[3] + x * gt[4] + y * gt[5]];
  });
  const minX = Math.min(...corners.map((p) => p[0])), maxX = Math.max(...corners.map((p) => p[0]));
  const minY = Math.min(...corners.map((p) => p[1])), maxY = Math.max(...corners.map((p) => p[1]));
  const side = Math.max(w, h);
  const outW = Math.max(1, Math.round((side * (maxX - minX)) / Math.max(maxX - minX, maxY - minY)));
  const outH = Math.max(1, Math.round((side * (maxY - minY)) / Math.max(maxX - minX, maxY - minY)));
  const det = gt[1] * gt[5] - gt[2] * gt[4];
  const out = new Uint8ClampedArray(outW * outH * 4);
  for (let j = 0; j < outH; j++) {
    const y = maxY - ((j + 0.5) * (maxY - minY)) / outH;
    for (let i = 0; i < outW; i++) {
      const x = minX + ((i + 0.5) * (maxX - minX)) / outW;
      const dx = x - gt[0], dy = y - gt[3];
      const col = Math.floor(((gt[5] * dx - gt[2] * dy) / det) / scenePxPerPreviewPx);
      const row = Math.floor(((-gt[4] * dx + gt[1] * dy) / det) / scenePxPerPreviewPx);
      if (col < 0 || row < 0 || col >= w || row >= h) continue;
      const s = (row * w + col) * 4, d = (j * outW + i) * 4;
      out[d] = rgba[s]; out[d + 1] = rgba[s + 1]; out[d + 2] = rgba[s + 2]; out[d + 3] = rgba[s + 3];
    }
  }
  return { widthPx: outW, heightPx: outH, rgba: out };
}
